// Benchmark: error rates and coverage of the capability methods on supply-like data (seeded Monte Carlo),
// and the cost of a capability result with a fitted distribution.
// Run: node --import tsx bench/capability.bench.ts   (prints rates; no assertions; about a minute)
import { timeBest } from './timing.ts';
import { andersonDarling } from '../src/stats/andersonDarling.ts';
import { capability, minimumIndexInterval } from '../src/stats/capability.ts';
import { judgeNormality } from '../src/stats/groupedNormality.ts';
import { normalCdf } from '../src/stats/distributions.ts';
import { createRng, type Rng } from '../src/stats/random.ts';
import { gammaDeviate } from '../src/stats/randomVariates.ts';
import { supplyNonconforming } from '../src/stats/supplyNonconforming.ts';
import { suggestBand } from '../src/analysis/bandTrial.ts';
import type { HeatCurve } from '../src/analysis/seriesData.ts';

const pct = (x: number) => `${(100 * x).toFixed(1)} %`;
const wholeNormal = (rng: Rng, n: number, mu: number, sd: number) => Array.from({ length: n }, () => Math.round(mu + sd * rng.normal()));

// 1. Size of the normality judgement on whole-HRC readings of a normal process, and power on real skew.
console.log('normality at 5 %, whole-HRC readings (1000 samples each)');
for (const [n, sd] of [[50, 1.5], [100, 1.5], [300, 1.5], [100, 3]]) {
  const rng = createRng(100 + n + Math.round(10 * sd));
  let ad = 0;
  let judged = 0;
  for (let r = 0; r < 1000; r++) {
    const x = wholeNormal(rng, n, 36.3, sd);
    if (andersonDarling(x).pValue < 0.05) ad++;
    if (judgeNormality(x).rejected) judged++;
  }
  console.log(`  N(36.3, ${sd}) rounded, n = ${n}: Anderson-Darling rejects ${pct(ad / 1000)}, judgement (grouped test) rejects ${pct(judged / 1000)}`);
}
for (const n of [50, 100, 300]) {
  const rng = createRng(200 + n);
  let judged = 0;
  for (let r = 0; r < 1000; r++) {
    const x = Array.from({ length: n }, () => Math.round(28 + gammaDeviate(2, rng) * 2));
    if (judgeNormality(x).rejected) judged++;
  }
  console.log(`  28 + Gamma(2, scale 2) rounded (skew 1.41), n = ${n}: judgement rejects ${pct(judged / 1000)} (power)`);
}

// 2. Ppk estimates at n = 50, whole-HRC normal readings, true Ppk 1.30 (μ 36.3, σ 1.5, band ±3·1.3σ).
{
  const mu = 36.3;
  const sd = 1.5;
  const band = { lsl: mu - 3.9 * sd, usl: mu + 3.9 * sd };
  const rng = createRng(300);
  const reps = 1000;
  let normalSum = 0;
  let percentileSum = 0;
  let cover = 0;
  for (let r = 0; r < reps; r++) {
    const x = wholeNormal(rng, 50, mu, sd);
    const c = capability({ values: x }, band, { percentile: 'always', stabilityRules: [] });
    normalSum += c.ppk;
    percentileSum += c.percentile!.ppk;
    if (c.intervals.ppk.lower <= 1.3 && 1.3 <= c.intervals.ppk.upper) cover++;
  }
  console.log(`Ppk at n = 50, true 1.30, whole-HRC readings (${reps} samples): normal-model mean ${(normalSum / reps).toFixed(3)}, its 95 % interval covers ${pct(cover / reps)}; empirical-percentile Ppk mean ${(percentileSum / reps).toFixed(3)} (why it is shown only from 741 values)`);
}

// 3. Cp/Cpk interval coverage at n = 50 (individuals): effective df 0.62(n − 1) against n − 1.
{
  const rng = createRng(400);
  const reps = 2000;
  const hits = { eff: [0, 0], textbook: [0, 0] };
  for (let r = 0; r < reps; r++) {
    const x = Array.from({ length: 50 }, () => 0.5 + rng.normal());
    for (const key of ['eff', 'textbook'] as const) {
      const c = capability({ values: x }, { lsl: -4, usl: 3 }, { intervalDf: key === 'eff' ? 'effective' : 'n-1', stabilityRules: [] });
      if (c.intervals.cp!.lower <= 7 / 6 && 7 / 6 <= c.intervals.cp!.upper) hits[key][0]++;
      if (c.intervals.cpk.lower <= 2.5 / 3 && 2.5 / 3 <= c.intervals.cpk.upper) hits[key][1]++;
    }
  }
  console.log(`Cp / Cpk 95 % intervals, individuals n = 50 (${reps} samples): effective df cover ${pct(hits.eff[0] / reps)} / ${pct(hits.eff[1] / reps)}; n − 1 cover ${pct(hits.textbook[0] / reps)} / ${pct(hits.textbook[1] / reps)}`);
}

// 4. Lowest Ppk over 8 distances, each true Ppk 1.33, n = 50 (independent distances: the hardest case for the minimum).
{
  const rng = createRng(500);
  const reps = 1000;
  let minSum = 0;
  let naive = 0;
  let joint = 0;
  for (let r = 0; r < reps; r++) {
    const results = Array.from({ length: 8 }, () => capability({ values: Array.from({ length: 50 }, () => rng.normal()) }, { lsl: -4, usl: 4 }, { stabilityRules: [] }));
    let at = 0;
    results.forEach((c, j) => {
      if (c.ppk < results[at].ppk) at = j;
    });
    minSum += results[at].ppk;
    if (results[at].intervals.ppk.lower <= 4 / 3 && 4 / 3 <= results[at].intervals.ppk.upper) naive++;
    const m = minimumIndexInterval(results.map((c) => ({ estimate: c.ppk, n: c.n, df: c.intervals.df.overall })));
    if (m.lower <= 4 / 3 && 4 / 3 <= m.upper) joint++;
  }
  console.log(`lowest Ppk of 8 distances, each true 1.333, n = 50 (${reps} samples): mean of the minimum ${(minSum / reps).toFixed(3)}; the picked distance's own 95 % interval covers ${pct(naive / reps)}, the simultaneous (Šidák) interval ${pct(joint / reps)}`);
}

// 5. Supply share: two mills, one near each limit; coverage of the generalized interval.
{
  const rng = createRng(600);
  const reps = 1000;
  const band = { lsl: 31, usl: 43 };
  const truth = (60 * (normalCdf(-3.1) + normalCdf(-8.9)) + 40 * (normalCdf(-2 / 1.2) + normalCdf(-10 / 1.2))) / 100;
  let cover = 0;
  for (let r = 0; r < reps; r++) {
    const a = Array.from({ length: 60 }, () => 34.1 + rng.normal());
    const b = Array.from({ length: 40 }, () => 41 + 1.2 * rng.normal());
    const stat = (x: number[]) => {
      const m = x.reduce((s, v) => s + v, 0) / x.length;
      return { mean: m, sd: Math.sqrt(x.reduce((s, v) => s + (v - m) ** 2, 0) / (x.length - 1)) };
    };
    const s = supplyNonconforming([{ name: 'A', n: 60, ...stat(a) }, { name: 'B', n: 40, ...stat(b) }], band, { draws: 2000, seed: r + 1 });
    if (s.lower <= truth && truth <= s.upper) cover++;
  }
  console.log(`supply share outside, mills n = 60 / 40, true ${(1e6 * truth).toFixed(0)} PPM (${reps} samples): 95 % generalized interval covers ${pct(cover / reps)}`);
}

// 6. Suggested band: content of the band on the true distribution, and the out-of-sample check.
{
  const rng = createRng(700);
  const reps = 200;
  const mms = [1.5, 5, 9, 13, 20];
  const means = [44, 40, 34, 30, 27];
  const sds = [1.2, 1.6, 2, 2, 1.8];
  const drawCurve = (i: number): HeatCurve => {
    const c = rng.normal();
    return {
      heatId: i + 1,
      heatNumber: `H${i + 1}`,
      mill: 'M',
      castDate: `2023-01-01`,
      grainSize: null,
      chemistry: {},
      testId: i + 1,
      source: 'mill_certificate',
      lotNumber: null,
      readings: new Map(mms.map((mm, j) => [mm, Math.round(means[j] + sds[j] * (0.8 * c + 0.6 * rng.normal()))] as [number, number])),
    };
  };
  const shape = { grade: 'T', version: 1, effectiveFrom: '2020-01-01', status: 'active' as const, kind: 'standard' as const, points: mms.map((mm, j) => ({ mm, minHrc: means[j] - 6, maxHrc: means[j] + 6 })) };
  let held = 0;
  let oosSum = 0;
  let contentSum = 0;
  for (let r = 0; r < reps; r++) {
    const curves = Array.from({ length: 150 }, (_, i) => drawCurve(i));
    const s = suggestBand(curves, shape, 0.9, 0.95)!;
    const fresh = Array.from({ length: 2000 }, (_, i) => drawCurve(i));
    const inside = fresh.filter((c) => s.points.every((p) => {
      const v = c.readings.get(p.distanceMm)!;
      return v >= p.minHrc! && v <= p.maxHrc!;
    })).length / fresh.length;
    contentSum += inside;
    if (inside >= 0.9) held++;
    oosSum += s.outOfSample!.heldShare;
  }
  console.log(`suggested band for 90 % of curves at 95 % confidence, 150 heats x 5 distances, whole-HRC (${reps} histories): share of new curves inside averages ${pct(contentSum / reps)}, at least 90 % in ${pct(held / reps)} of histories; out-of-sample check averages ${pct(oosSum / reps)}`);
}

// 7. Real skew: 28 + Gamma(2, scale 2) readings to 0.1 HRC, n = 150, band 27–48. True Ppk (quantile form,
// ISO 22514-2) from the Gamma(2) quantiles 0.0528836, 1.6783470, 8.9002063 at 0.00135, 0.5, 0.99865
// (scipy.stats.gamma.ppf, scipy 1.10.1): X = 28 + 2·q.
{
  const rng = createRng(750);
  const reps = 150;
  const [q0, q5, q9] = [0.0528836, 1.678347, 8.9002063].map((q) => 28 + 2 * q);
  const truth = Math.min((48 - q5) / (q9 - q5), (q5 - 27) / (q5 - q0));
  let normalSum = 0;
  let fitSum = 0;
  let fitted = 0;
  let cover = 0;
  let johnson = 0;
  for (let r = 0; r < reps; r++) {
    const x = Array.from({ length: 150 }, () => Math.round(10 * (28 + 2 * gammaDeviate(2, rng))) / 10);
    const c = capability({ values: x }, { lsl: 27, usl: 48 }, { fitted: 'always', stabilityRules: [], bootstrap: { replicates: 200, seed: r + 1 } });
    normalSum += c.ppk;
    if (c.fitted) {
      fitted++;
      fitSum += c.fitted.ppk;
      if (c.fitted.method === 'johnson') johnson++;
      const iv = c.fitted.intervals.ppk;
      if (iv && iv.lower <= truth && truth <= iv.upper) cover++;
    }
  }
  console.log(`skewed 28 + Gamma(2, 2) to 0.1 HRC, n = 150, true Ppk ${truth.toFixed(3)} (${reps} samples): normal-model Ppk mean ${(normalSum / reps).toFixed(3)}; fitted in ${pct(fitted / reps)} (Johnson ${pct(johnson / Math.max(1, fitted))}), fitted Ppk mean ${(fitSum / Math.max(1, fitted)).toFixed(3)}, its bootstrap interval (200 resamples) covers ${pct(cover / Math.max(1, fitted))}`);
}

// 8. The same skewed readings, n = 1000: the empirical-percentile Ppk (ISO 22514-2, from 741 values) and its
// percentile-bootstrap interval, beside the fitted distribution.
{
  const rng = createRng(900);
  const reps = 100;
  const [q0, q5, q9] = [0.0528836, 1.678347, 8.9002063].map((q) => 28 + 2 * q);
  const truth = Math.min((48 - q5) / (q9 - q5), (q5 - 27) / (q5 - q0));
  let pSum = 0;
  let pCover = 0;
  let fSum = 0;
  let fCover = 0;
  for (let r = 0; r < reps; r++) {
    const x = Array.from({ length: 1000 }, () => Math.round(10 * (28 + 2 * gammaDeviate(2, rng))) / 10);
    const c = capability({ values: x }, { lsl: 27, usl: 48 }, { percentile: 'always', fitted: 'always', stabilityRules: [], bootstrap: { replicates: 200, seed: r + 1 } });
    pSum += c.percentile!.ppk;
    const pi = c.percentile!.interval!;
    if (pi.lower <= truth && truth <= pi.upper) pCover++;
    fSum += c.fitted!.ppk;
    const fi = c.fitted!.intervals.ppk!;
    if (fi.lower <= truth && truth <= fi.upper) fCover++;
  }
  console.log(`same skew, n = 1000, true Ppk ${truth.toFixed(3)} (${reps} samples): empirical-percentile Ppk mean ${(pSum / reps).toFixed(3)}, its bootstrap interval covers ${pct(pCover / reps)}; fitted Ppk mean ${(fSum / reps).toFixed(3)}, its interval covers ${pct(fCover / reps)}`);
}

// 9. Cost of one capability result on 150 skewed readings with the fitted distribution and its 400-replicate bootstrap.
{
  const rng = createRng(800);
  const x = Array.from({ length: 150 }, () => 2 + gammaDeviate(2, rng) * 2);
  timeBest('capability, 150 skewed values, fitted distribution + bootstrap (400)', 5, () => capability({ values: x }, { lsl: 1.5, usl: 25 }, { fitted: 'always' }));
  timeBest('capability, 150 values, no fit', 5, () => capability({ values: x }, { lsl: 1.5, usl: 25 }));
}
