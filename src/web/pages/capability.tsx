// Capability, arranged around two questions an engineer asks of a supply: will it stay inside our band
// (the answer first, in a sentence, with the share expected outside), and where is it closest to failing
// (each distance's margin to its nearer limit, in overall SDs, beside Ppk and its interval). The full
// index set (spread and centring, tails) follows for whoever checks the arithmetic; for one chosen
// distance, the heats against the band and a normal-scores check, with the flags in plain words.
import type { Hono } from 'hono';
import type { Child } from 'hono/jsx';
import type { Db } from '../../db/connection.ts';
import { capabilityStudy, type DistanceCapability } from '../../analysis/capabilityStudy.ts';
import { AnalysisError } from '../../analysis/errors.ts';
import { loadSeriesCurves, pointsAt } from '../../analysis/seriesData.ts';
import { PERCENTILE_MIN_N, type CapabilityResult } from '../../stats/capability.ts';
import { Caution } from '../components/caution.tsx';
import { Problem } from '../components/bits.tsx';
import { SeriesForm } from '../components/seriesForm.tsx';
import { readSeriesChoice, type SeriesChoice } from '../data/seriesPicker.ts';
import { page } from '../page.tsx';
import { fmt, mmLabel, ParamError } from '../params.ts';
import { histogramSpec, pagePpkSpec, probabilityPlotSpec } from '../specs/capability.ts';

/** The flags of a capability result, each in a sentence a buyer can act on. */
export function flagSentences(r: CapabilityResult, _values: readonly number[] = []): string[] {
  const out: string[] = [];
  if (r.flags.smallSample) out.push(`Only ${r.n} heats: the indices are rough, as the width of their intervals shows. Wait for more heats before drawing conclusions.`);
  const j = r.normalityJudgement;
  const test = j ? (j.method === 'grouped-chi-square' ? `chi-square test on the ${j.readingStep} HRC grid, p = ${fmt(j.pValue, 3)}` : `Anderson–Darling p = ${fmt(j.pValue, 3)}`) : '';
  if (r.flags.nonNormal) {
    out.push(`The values do not look normal (${test}): the normal-based indices and expected PPM may mislead.`);
    if (r.fitted) {
      const iv = r.fitted.intervals.ppk;
      out.push(
        `A fitted ${r.fitted.method === 'box-cox' ? `Box–Cox distribution (λ = ${fmt(r.fitted.lambda, 2)}; ${r.fitted.choice})` : `Johnson ${r.fitted.johnson?.family} curve (Slifker & Shapiro percentiles)`} gives Ppk ${fmt(r.fitted.ppk)}${iv ? ` (95% bootstrap interval ${fmt(iv.lower)} – ${fmt(iv.upper)})` : ''} and ${fmt(r.fitted.expectedPpm, 0)} PPM expected outside (ISO 22514-2 distribution method). A mixture of mills or a drift is not skew: check the per-mill figures and the trend first.`,
      );
    }
    if (!r.fitted && r.fitProblem) out.push(`No fitted distribution: ${r.fitProblem}. Judge the shape from the histogram and the probability plot.`);
    if (r.percentile && r.percentile.interval) {
      out.push(`The percentile-based Ppk, ${fmt(r.percentile.ppk)} (95% bootstrap interval ${fmt(r.percentile.interval.lower)} – ${fmt(r.percentile.interval.upper)}), does not assume a distribution; it rests on ${r.n} heats, enough to reach the 0.135 % tails, but its bootstrap interval runs narrow (a bootstrap of the extreme heats), so prefer the fitted figure.`);
    }
    if (r.percentile && r.flags.percentileFewData) {
      out.push(
        `The percentile-based Ppk needs about ${PERCENTILE_MIN_N} heats or more: with ${r.n}, its 0.135 % and 99.865 % points are about the lowest and highest heats, which sit inside the true spread, so ${fmt(r.percentile.ppk)} reads too high. Take it as an optimistic figure.`,
      );
    }
  } else if (j && j.method === 'grouped-chi-square') {
    out.push(`Readings are on a ${j.readingStep} HRC grid, so normality is judged on the grouped readings (${test}), where a test for continuous data would reject for the rounding alone.`);
  }
  if (r.flags.unstable) out.push(`${r.unstablePoints.length} heat(s) fall outside the individuals-chart limits: the process was not stable over this window, so a capability index describes a mixture, not one process. See Trends.`);
  if (out.length === 0) out.push('No flag: enough heats, no sign of non-normality, and no heat outside the control limits.');
  return out;
}

const FLAG_WORDS: Record<string, string> = { percentileFewData: `percentile Ppk from fewer than ${PERCENTILE_MIN_N} heats: reads high` };

function indexRow(d: DistanceCapability, mill: string | null) {
  const r = d.result;
  return {
    mill: mill ?? 'all',
    distance: d.label ?? mmLabel(d.distanceMm),
    mm: d.distanceMm,
    lsl: d.lsl,
    usl: d.usl,
    n: d.n,
    mean: r?.mean ?? null,
    sigmaWithin: r?.sigmaWithin ?? null,
    sigmaOverall: r?.sigmaOverall ?? null,
    cp: r?.cp ?? null,
    cpk: r?.cpk ?? null,
    cpkLower: r?.intervals.cpk.lower ?? null,
    cpkUpper: r?.intervals.cpk.upper ?? null,
    pp: r?.pp ?? null,
    ppk: r?.ppk ?? null,
    ppkLower: r?.intervals.ppk.lower ?? null,
    ppkUpper: r?.intervals.ppk.upper ?? null,
    percentilePpk: r?.percentile?.ppk ?? null,
    fittedPpk: r?.fitted?.ppk ?? null,
    expectedPpm: r?.expectedPpm.overall.total ?? null,
    observedPpm: r?.observedPpm.total ?? null,
    adP: r?.normalityJudgement?.pValue ?? null,
    flags: r ? Object.entries(r.flags).filter(([, v]) => v).map(([k]) => FLAG_WORDS[k] ?? k.replace(/([A-Z])/g, ' $1').toLowerCase()).join(', ') : (d.note ?? ''),
  };
}

type IndexRow = ReturnType<typeof indexRow>;

/** The nearer band limit of a distance and the margin to it in overall SDs (3·Ppk for a normal model). */
function margin(r: IndexRow): { side: 'min' | 'max' | null; limit: number | null; sds: number | null } {
  if (r.mean === null || !r.sigmaOverall) return { side: null, limit: null, sds: null };
  const below = r.lsl === null ? Infinity : (r.mean - r.lsl) / r.sigmaOverall;
  const above = r.usl === null ? Infinity : (r.usl - r.mean) / r.sigmaOverall;
  if (!Number.isFinite(below) && !Number.isFinite(above)) return { side: null, limit: null, sds: null };
  return below <= above ? { side: 'min', limit: r.lsl, sds: below } : { side: 'max', limit: r.usl, sds: above };
}

function marginRow(r: IndexRow) {
  const m = margin(r);
  return {
    ...r,
    band: `${r.lsl ?? '–'} – ${r.usl ?? '–'}`,
    nearer: m.side === null ? null : `${m.side} ${m.limit}`,
    marginSds: m.sds,
  };
}

type MarginRow = ReturnType<typeof marginRow>;

/** "about 1 heat in 2,400", or "fewer than 1 in a million" (from expected PPM). */
function oneIn(ppm: number | null): string {
  if (ppm === null || !Number.isFinite(ppm)) return 'not worked out';
  if (ppm < 1) return 'fewer than 1 heat in a million';
  if (ppm >= 500_000) return `about ${fmt(ppm / 10_000, 0)} % of heats`;
  return `about 1 heat in ${Math.round(1_000_000 / ppm).toLocaleString('en-GB')}`;
}

/** Several mills at each distance: the mills side by side, then the supply (heat-weighted) row. */
function supplyRows(distances: readonly DistanceCapability[]) {
  return distances.flatMap((d) => {
    if (!d.supply) return [];
    const distance = d.label ?? mmLabel(d.distanceMm);
    const mills = d.supply.mills.map((m) => ({
      distance,
      mill: m.mill,
      n: m.n,
      weightPct: 100 * m.weight,
      cpk: m.cpk as number | null,
      cpkLower: m.cpkInterval.lower as number | null,
      cpkUpper: m.cpkInterval.upper as number | null,
      ppk: m.ppk as number | null,
      ppkLower: m.ppkInterval.lower as number | null,
      ppkUpper: m.ppkInterval.upper as number | null,
      expectedPpm: m.expectedPpm,
      ppmLower: m.expectedPpmInterval.lower,
      ppmUpper: m.expectedPpmInterval.upper,
      observedPpm: m.observedPpm,
    }));
    const total = mills.reduce((a, m) => a + m.n, 0);
    return [
      ...mills,
      { distance, mill: 'supply (heat-weighted)', n: total, weightPct: 100, cpk: null, cpkLower: null, cpkUpper: null, ppk: null, ppkLower: null, ppkUpper: null, expectedPpm: d.supply.expectedPpm, ppmLower: d.supply.expectedPpmInterval.lower, ppmUpper: d.supply.expectedPpmInterval.upper, observedPpm: d.supply.observedPpm },
    ];
  });
}

type SupplyRow = ReturnType<typeof supplyRows>[number];
const range = (lo: number | null, hi: number | null, digits = 2) => (lo === null ? '–' : `${fmt(lo, digits)} – ${fmt(hi, digits)}`);

const SUPPLY_COLUMNS = [
  { key: 'distance', label: 'Distance' },
  { key: 'mill', label: 'Mill' },
  { key: 'n', label: 'n', numeric: true },
  { key: 'weightPct', label: 'Share of heats %', numeric: true, digits: 1 },
  { key: 'cpk', label: 'Cpk', numeric: true, digits: 2 },
  { key: 'cpkInterval', label: 'Cpk 95%', htmlOnly: true, cell: (r: SupplyRow) => range(r.cpkLower, r.cpkUpper) },
  { key: 'cpkLower', label: 'Cpk 95% low', csvOnly: true },
  { key: 'cpkUpper', label: 'Cpk 95% high', csvOnly: true },
  { key: 'ppk', label: 'Ppk', numeric: true, digits: 2 },
  { key: 'ppkInterval', label: 'Ppk 95%', htmlOnly: true, cell: (r: SupplyRow) => range(r.ppkLower, r.ppkUpper) },
  { key: 'ppkLower', label: 'Ppk 95% low', csvOnly: true },
  { key: 'ppkUpper', label: 'Ppk 95% high', csvOnly: true },
  { key: 'expectedPpm', label: 'Expected PPM', numeric: true, digits: 0 },
  { key: 'ppmInterval', label: 'Expected PPM 95%', htmlOnly: true, cell: (r: SupplyRow) => range(r.ppmLower, r.ppmUpper, 0) },
  { key: 'ppmLower', label: 'Expected PPM 95% low', csvOnly: true },
  { key: 'ppmUpper', label: 'Expected PPM 95% high', csvOnly: true },
  { key: 'observedPpm', label: 'Observed PPM', numeric: true, digits: 0 },
];

const interval = (lo: number | null, hi: number | null) => (lo === null ? '–' : `${fmt(lo)} – ${fmt(hi)}`);

/** The figures behind every table, for the CSV (not shown). */
const ALL_FIGURES_CSV = [
  { key: 'lsl', label: 'Band min', csvOnly: true },
  { key: 'usl', label: 'Band max', csvOnly: true },
  { key: 'sigmaWithin', label: 'σ within', csvOnly: true },
  { key: 'sigmaOverall', label: 'σ overall', csvOnly: true },
  { key: 'cp', label: 'Cp', csvOnly: true },
  { key: 'cpk', label: 'Cpk', csvOnly: true },
  { key: 'cpkLower', label: 'Cpk 95% low', csvOnly: true },
  { key: 'cpkUpper', label: 'Cpk 95% high', csvOnly: true },
  { key: 'pp', label: 'Pp', csvOnly: true },
  { key: 'ppkLower', label: 'Ppk 95% low', csvOnly: true },
  { key: 'ppkUpper', label: 'Ppk 95% high', csvOnly: true },
  { key: 'percentilePpk', label: 'Ppk (percentile)', csvOnly: true },
  { key: 'fittedPpk', label: 'Ppk (fitted distribution)', csvOnly: true },
  { key: 'expectedPpm', label: 'Expected PPM', csvOnly: true },
  { key: 'observedPpm', label: 'Observed PPM', csvOnly: true },
  { key: 'adP', label: 'Normality p', csvOnly: true },
];

/** Where the supply is closest to failing: one line per distance, the margin first. */
const MARGIN_COLUMNS = [
  { key: 'distance', label: 'Distance' },
  { key: 'band', label: 'Band HRC' },
  { key: 'n', label: 'Heats', numeric: true },
  { key: 'mean', label: 'Mean HRC', numeric: true, digits: 1 },
  { key: 'nearer', label: 'Nearer limit' },
  { key: 'marginSds', label: 'Margin (overall SDs)', numeric: true, digits: 1 },
  { key: 'ppk', label: 'Ppk', numeric: true, digits: 2 },
  { key: 'ppkInterval', label: 'Ppk 95%', htmlOnly: true, cell: (r: MarginRow) => interval(r.ppkLower, r.ppkUpper) },
  { key: 'expectedPpm', label: 'Expected outside, per million', numeric: true, digits: 0 },
  { key: 'observedPpm', label: 'Seen outside, per million', numeric: true, digits: 0 },
  { key: 'flags', label: 'Worth a look', wrap: true },
  ...ALL_FIGURES_CSV.filter((c) => !['expectedPpm', 'observedPpm'].includes(c.key)),
];

/** Spread and centring: the within/overall SDs and the indices built on them. */
const SPREAD_COLUMNS = [
  { key: 'distance', label: 'Distance' },
  { key: 'n', label: 'Heats', numeric: true },
  { key: 'mean', label: 'Mean', numeric: true, digits: 2 },
  { key: 'sigmaWithin', label: 'σ within (moving range)', numeric: true, digits: 3 },
  { key: 'sigmaOverall', label: 'σ overall', numeric: true, digits: 3 },
  { key: 'cp', label: 'Cp', numeric: true, digits: 2 },
  { key: 'cpk', label: 'Cpk', numeric: true, digits: 2 },
  { key: 'cpkInterval', label: 'Cpk 95%', htmlOnly: true, cell: (r: IndexRow) => interval(r.cpkLower, r.cpkUpper) },
  { key: 'pp', label: 'Pp', numeric: true, digits: 2 },
];

/** The tails: Ppk three ways and the share outside, expected and seen. */
const TAIL_COLUMNS = [
  { key: 'distance', label: 'Distance' },
  { key: 'ppk', label: 'Ppk (normal)', numeric: true, digits: 2 },
  { key: 'ppkInterval', label: 'Ppk 95%', htmlOnly: true, cell: (r: IndexRow) => interval(r.ppkLower, r.ppkUpper) },
  { key: 'fittedPpk', label: 'Ppk (fitted distribution)', numeric: true, digits: 2 },
  { key: 'percentilePpk', label: 'Ppk (percentile)', numeric: true, digits: 2 },
  { key: 'expectedPpm', label: 'Expected PPM', numeric: true, digits: 0 },
  { key: 'observedPpm', label: 'Observed PPM', numeric: true, digits: 0 },
  { key: 'adP', label: 'Normality p', numeric: true, digits: 3 },
];

export function capabilityPage(app: Hono<any>, db: Db) {
  page(app, '/capability', async (c, kit) => {
    let choice: SeriesChoice;
    try {
      choice = await readSeriesChoice(c, db, { needMill: false });
    } catch (error) {
      if (error instanceof ParamError) return { title: 'Capability', section: 'capability', status: 400, body: <Problem message={error.message} /> };
      throw error;
    }
    const mill = choice.mill || undefined;
    const query = { grade: choice.grade, mill, from: choice.from, to: choice.to };
    let study;
    try {
      study = await capabilityStudy(db, query);
    } catch (error) {
      if (!(error instanceof AnalysisError)) throw error;
      return { title: 'Capability', section: 'capability', body: (<><h1>Capability</h1><SeriesForm action="/capability" choice={choice} anyMill /><Problem message={`No capability study: ${error.message}.`} /></>) as Child };
    }
    const chosen = study.distances.find((d) => choice.distanceMm !== null && Math.abs(d.distanceMm - choice.distanceMm) < 1e-6) ?? study.distances[0];
    const values = chosen ? pointsAt(await loadSeriesCurves(db, { ...query, source: study.source }), chosen.distanceMm).map((p) => p.value) : [];
    const r = chosen?.result ?? null;
    const where = chosen ? (chosen.label ?? mmLabel(chosen.distanceMm)) : '';
    const who = `${mill ?? 'all mills'} ${choice.grade}`;
    const rows = study.distances.map((d) => indexRow(d, study.mill));
    const perMillRows = (study.perMill ?? []).flatMap((m) => m.distances.map((d) => indexRow(d, m.mill)));
    const valueRows = values.map((v, i) => ({ index: i + 1, hrc: v }));
    const marginRows = rows.map(marginRow);
    // The weakest distance: the smallest margin to a limit (one mill), or the largest supply share outside (several).
    const judged = marginRows.filter((m) => m.marginSds !== null);
    const weakest = judged.length ? judged.reduce((a, b) => ((b.marginSds as number) < (a.marginSds as number) ? b : a)) : null;
    const supplyWorst = study.distances.filter((d) => d.supply).reduce<DistanceCapability | null>((a, d) => (!a || (d.supply!.expectedPpm > a.supply!.expectedPpm) ? d : a), null);
    const below133 = judged.filter((m) => m.ppkLower !== null && m.ppkLower < 1.33).length;
    return {
      title: 'Capability',
      section: 'capability',
      body: (
        <>
          <h1>Capability</h1>
          <p class="lead">
            Will this supply stay inside our band, and where is it closest to failing? Judged against the band in force on {study.bandInForceOn}, the end of the window (version {study.band.version}, from {study.band.effectiveFrom}), on {study.heats} heat(s).
            {study.mill || !study.distances.some((d) => d.supply) ? '' : ' Several mills: no single index is worked out over the mixture of mills (it can read better than every mill on its own). Each mill keeps its own figures, and the supply answer is the share of heats expected outside the band, the mills’ shares weighted by their heats.'}
          </p>
          <SeriesForm action="/capability" choice={choice} anyMill />
          <Caution>These figures describe the supply as a whole; they neither accept nor reject a heat. Acceptance follows the purchase specification and qualified personnel; statistics do not replace testing.</Caution>
          <section class="card answer" id="answer">
            <h2>Will it stay inside the band?</h2>
            {supplyWorst && !study.mill ? (
              <p>
                The supply's weakest distance is <strong>{supplyWorst.label ?? mmLabel(supplyWorst.distanceMm)}</strong>: {oneIn(supplyWorst.supply!.expectedPpm)} expected outside the band ({fmt(supplyWorst.supply!.expectedPpm, 0)} per million, 95 % interval {fmt(supplyWorst.supply!.expectedPpmInterval.lower, 0)} – {fmt(supplyWorst.supply!.expectedPpmInterval.upper, 0)}); {fmt(supplyWorst.supply!.observedPpm, 0)} per million seen so far.
              </p>
            ) : weakest ? (
              <p>
                Closest to failing at <strong>{weakest.distance}</strong>: mean {fmt(weakest.mean, 1)} HRC, {fmt(weakest.marginSds, 1)} overall SDs from the band {weakest.nearer}. Ppk {fmt(weakest.ppk)} (95 % interval {interval(weakest.ppkLower, weakest.ppkUpper)}).{' '}
                {weakest.fittedPpk !== null
                  ? `The readings there are not normal, so the normal figures may mislead: the fitted distribution gives Ppk ${fmt(weakest.fittedPpk)} (tails table below).`
                  : `Expected outside there: ${oneIn(weakest.expectedPpm)}.`}{' '}
                Seen outside so far: {fmt(weakest.observedPpm, 0)} per million.
              </p>
            ) : (
              <p>No distance has enough heats with spread to answer yet.</p>
            )}
            {judged.length ? (
              <p>
                {below133 === 0 ? `At every one of the ${judged.length} distances the Ppk interval stays at or above 1.33.` : `${below133} of ${judged.length} distance(s) have a Ppk interval reaching below 1.33 (common practice as the least for a supply a plant need not watch closely).`}
              </p>
            ) : null}
          </section>
          <h2>Where is it closest to failing?</h2>
          {kit.chart({
            id: 'ppk',
            title: `Margin to the band by distance: ${who}`,
            note: `Point: Ppk; bar: its 95% interval (Bissell 1990); dashed line: 1.33. The table puts each distance's margin to its nearer limit first, in overall SDs (3 × Ppk under a normal model). Where normality is rejected (on the grouped readings when they are whole HRC), the fitted-distribution Ppk from a Box–Cox or Johnson fit is in the tails table below; the percentile Ppk only from ${PERCENTILE_MIN_N} heats.`,
            spec: pagePpkSpec(study),
            table: { columns: MARGIN_COLUMNS, rows: marginRows },
            openUpTo: 40,
          })}
          <details class="more" id="all-indices">
            <summary>Every index: spread and centring, and the tails</summary>
            {kit.table('spread', `Spread and centring ${who}`, { columns: SPREAD_COLUMNS, rows })}
            {kit.table('tails', `Tails ${who}`, { columns: TAIL_COLUMNS, rows })}
          </details>
          {study.distances.some((d) => d.supply) ? (
            <>
              <h2>Each mill's share of the risk</h2>
              {kit.table('supply', `Supply ${choice.grade}: mills side by side`, { columns: SUPPLY_COLUMNS, rows: supplyRows(study.distances) })}
              <p class="note">
                Expected PPM per mill: normal model on the mill's mean and overall SD. Supply: the heat-weighted sum of the mills' expected PPM, its 95 % interval by generalized pivotal quantities (Weerahandi 1993) with the mix of mills held fixed. Cpk/Ppk intervals: Bissell (1990); the df of each index is in the API answer (intervals.method).
              </p>
            </>
          ) : null}
          {chosen && r ? (
            <>
              <h2>A closer look at {where}</h2>
              <div class="card">
                <p>
                  <strong>Worth a look here.</strong>
                </p>
                <ul class="flags">
                  {flagSentences(r, values).map((s) => (
                    <li>{s}</li>
                  ))}
                </ul>
                <p>
                  Ppk {fmt(r.ppk)} (95% interval {fmt(r.intervals.ppk.lower)} – {fmt(r.intervals.ppk.upper)}), Cpk {fmt(r.cpk)} ({fmt(r.intervals.cpk.lower)} – {fmt(r.intervals.cpk.upper)}); expected {fmt(r.expectedPpm.overall.total, 0)} PPM
                  outside the band, observed {fmt(r.observedPpm.total, 0)} PPM.
                </p>
              </div>
              <div class="grid2">
                {kit.chart({
                  id: 'histogram',
                  title: `The heats at ${where} against the band: ${who}`,
                  note: 'Bars: heats per hardness step; line: the normal curve of the mean and overall σ; dashed: the band limits.',
                  spec: histogramSpec(values, { mean: r.mean, sd: r.sigmaOverall }, { lsl: chosen.lsl, usl: chosen.usl }, `Histogram at ${where}`),
                  table: { columns: [{ key: 'index', label: '#', numeric: true }, { key: 'hrc', label: 'HRC', numeric: true }], rows: valueRows },
                  openUpTo: 0,
                })}
                {kit.chart({
                  id: 'probability',
                  title: `Is the normal model fair at ${where}?`,
                  note: 'Each heat against its normal score: points along the dashed line mean the normal model holds; a bend or S-shape means skew or heavy tails, and the fitted figure is the one to use.',
                  spec: probabilityPlotSpec(values, { mean: r.mean, sd: r.sigmaOverall }, `Normal probability plot at ${where}`),
                  table: { columns: [{ key: 'index', label: '#', numeric: true }, { key: 'hrc', label: 'HRC', numeric: true }], rows: valueRows },
                  openUpTo: 0,
                })}
              </div>
            </>
          ) : (
            <p class="notice">No capability result at this distance: {chosen?.note ?? 'no data'}.</p>
          )}
          {perMillRows.length ? (
            <>
              <h2>Each mill on its own</h2>
              {kit.table('per-mill', `Capability per mill ${choice.grade}`, { columns: [{ key: 'mill', label: 'Mill' }, ...MARGIN_COLUMNS], rows: perMillRows.map(marginRow) })}
            </>
          ) : null}
        </>
      ),
    };
  });
}
