// Receiving inspection: pairing of mill and plant curves, the paired-bias chart, and the skip-lot rules.
// The numbers here are invented inputs to exercise rules of our own (src/analysis/skipLot.ts header);
// the statistics underneath are checked against published values in test/reference/agreement.test.ts.
import { describe, expect, it } from 'vitest';
import type { HeatCurve } from '../../../src/db/series.ts';
import { biasChart, labAgreementOf, labPairs, preferredAtLeast, DEFAULT_AGREEMENT_SETTINGS } from '../../../src/analysis/receivingAgreement.ts';
import { lotsDue, skipLotDecision, type LotHistoryItem } from '../../../src/analysis/skipLot.ts';
import { createRng } from '../../../src/stats/random.ts';
import { planOf } from '../../../src/analysis/receivingPlan.ts';
import type { LotRow } from '../../../src/db/receivingLots.ts';
import type { Band } from '../../../src/hardenability/bands.ts';

const MM = [1.5, 3, 5, 7, 9, 11, 13, 15];

function curve(heatId: number, source: HeatCurve['source'], values: number[], castDate: string, lot: string | null = null, testId = heatId * 10): HeatCurve {
  return {
    heatId, heatNumber: `H${String(heatId).padStart(3, '0')}`, mill: 'MILLA', castDate, grainSize: 7, chemistry: {}, testId, source, lotNumber: lot,
    readings: new Map(values.map((v, i) => [MM[i]!, v])),
  };
}

const date = (i: number) => new Date(Date.UTC(2025, 0, 1 + 7 * i)).toISOString().slice(0, 10);

/** Heats with a certificate and a receiving test; the mill reads `shift(i)` HRC above the plant. */
function history(n: number, shift: (i: number) => number, seed = 1): HeatCurve[] {
  const rng = createRng(BigInt(seed));
  const out: HeatCurve[] = [];
  for (let i = 0; i < n; i++) {
    const truth = MM.map((_, k) => 48 - 2.5 * k);
    out.push(curve(i + 1, 'mill_certificate', truth.map((v) => v + shift(i) + 0.8 * rng.normal()), date(i)));
    out.push(curve(i + 1, 'receiving_inspection', truth.map((v) => v + 0.8 * rng.normal()), date(i), 'L1', (i + 1) * 10 + 1));
  }
  return out;
}

describe('pairs of mill and plant curves', () => {
  it('pairs a heat only when both sides exist, at common distances, averaging several lots', () => {
    const curves = [
      curve(1, 'mill_certificate', [50, 48, 45], '2025-01-01'),
      curve(1, 'receiving_inspection', [49, 47, 44, 40], '2025-01-01', 'L1', 11),
      curve(1, 'receiving_inspection', [48, 46], '2025-01-01', 'L2', 12),
      curve(2, 'mill_certificate', [50, 48], '2025-01-02'),
      curve(3, 'receiving_inspection', [50, 48], '2025-01-03', 'L1', 31),
      curve(4, 'mill_certificate', [50, 48], '2025-01-04'),
      curve(4, 'outside_lab', [49, 47], '2025-01-04', 'L1', 41),
    ];
    const pairs = labPairs(curves);
    expect(pairs.map((p) => p.heatId)).toEqual([1]);
    expect(pairs[0]!.plantTests).toBe(2);
    // 1.5 mm: 50 − (49 + 48)/2 = 1.5; 3 mm: 48 − 46.5 = 1.5; 5 mm: 45 − 44 = 1 (only lot L1 measured it).
    expect(pairs[0]!.differences.map((d) => d.difference)).toEqual([1.5, 1.5, 1]);
    expect(pairs[0]!.bias).toBeCloseTo(4 / 3, 12);
  });
});

describe('the paired-bias chart', () => {
  it('stays quiet on a laboratory pair in agreement, and finds a lasting 1.5 HRC shift within a few pairs', () => {
    const quiet = labAgreementOf('MILLA', 'G', history(40, () => 0.3));
    expect(quiet.chart!.firstSignal).toBeNull();
    expect(quiet.overall!.bias).toBeGreaterThan(0);
    // The overall bias is the mean of the pair biases (difference of the curve means = mean of differences).
    expect(quiet.overall!.bias).toBeCloseTo(quiet.pairList.reduce((t, p) => t + p.bias, 0) / quiet.pairs, 12);
    expect(quiet.overall!.n).toBe(40);
    const shifted = labAgreementOf('MILLA', 'G', history(40, (i) => (i >= 20 ? 1.8 : 0.3)));
    const first = shifted.chart!.firstSignal!;
    expect(first.side).toBe('high');
    expect(first.index).toBeGreaterThanOrEqual(20);
    expect(first.index).toBeLessThan(26);
  });

  it('one lot that truly differs (clipped at 3σ) does not read as a laboratory that moved', () => {
    const curves = history(30, (i) => (i === 20 ? 6 : 0.3));
    const chart = biasChart(labPairs(curves)).chart!;
    expect(chart.points[20]!.bias).toBeGreaterThan(4);
    expect(chart.firstSignal).toBeNull();
    // Without the clip the same lot fires the chart.
    const unclipped = biasChart(labPairs(curves), { ...DEFAULT_AGREEMENT_SETTINGS, clipSigma: 100 }).chart!;
    expect(unclipped.firstSignal?.index).toBe(20);
  });

  it('rounds the designed ARL up to an R10 preferred number (ISO 3), never down', () => {
    expect([20, 21, 25, 26, 31.5, 35, 59, 63, 64, 1000].map(preferredAtLeast)).toEqual([20, 25, 25, 31.5, 31.5, 40, 63, 63, 80, 1000]);
    const chart = biasChart(labPairs(history(30, () => 0))).chart!;
    expect(chart.targetArl).toBeGreaterThanOrEqual(3 * chart.pairsPerYear);
  });

  it('says why there is no chart with too few pairs', () => {
    const r = biasChart(labPairs(history(5, () => 0)));
    expect(r.chart).toBeNull();
    expect(r.note).toMatch(/needs 8 reference pairs/);
  });
});

describe('skip-lot rules (after ISO 2859-3)', () => {
  const lots = (outcomes: Array<boolean | null>): LotHistoryItem[] =>
    outcomes.map((o, i) => ({ lotKey: `H${i}/L1`, receivedDate: date(i), retest: o === null ? null : { accepted: o, reason: o ? null : 'outside the band at 9 mm' } }));
  const good = { ppk: 1.5, agreementSignal: false, agreementHalfWidthHrc: 1.2 };

  it('qualifies after 10 accepted re-tests in a row, then steps down one frequency per 10 more, to 1 in 5 at most', () => {
    expect(skipLotDecision(lots(Array(9).fill(true)), good).state).toBe('full');
    expect(skipLotDecision(lots(Array(10).fill(true)), good)).toMatchObject({ state: 'skipping', every: 2 });
    expect(skipLotDecision(lots(Array(20).fill(true)), good).every).toBe(3);
    expect(skipLotDecision(lots(Array(40).fill(true)), good).every).toBe(5);
    expect(skipLotDecision(lots(Array(90).fill(true)), good).every).toBe(5);
  });

  it('returns to re-testing every lot after a re-test that is not accepted, naming it, and must qualify again', () => {
    const d = skipLotDecision(lots([...Array(30).fill(true), false, ...Array(9).fill(true)]), good);
    expect(d).toMatchObject({ state: 'full', every: 1, acceptedInARow: 9 });
    expect(d.lastRejection?.lotKey).toBe('H30/L1');
    expect(d.reasons.join(' ')).toMatch(/9 accepted re-test\(s\) since lot H30\/L1 \(outside the band at 9 mm\)/);
    expect(skipLotDecision(lots([...Array(30).fill(true), false, ...Array(10).fill(true)]), good)).toMatchObject({ state: 'skipping', every: 2 });
  });

  it('a laboratory-agreement signal or a Ppk below 1.0 means every lot; weaker evidence caps the frequency at 1 in 3', () => {
    const many = lots(Array(60).fill(true));
    expect(skipLotDecision(many, { ...good, agreementSignal: true }).every).toBe(1);
    expect(skipLotDecision(many, { ...good, ppk: 0.9 }).every).toBe(1);
    expect(skipLotDecision(many, { ...good, ppk: null }).every).toBe(1);
    expect(skipLotDecision(many, { ...good, ppk: 1.2 }).every).toBe(3);
    expect(skipLotDecision(many, { ...good, agreementHalfWidthHrc: 3.1 }).every).toBe(3);
    expect(skipLotDecision(many, { ...good, agreementHalfWidthHrc: null }).every).toBe(3);
  });

  it('lists every untested lot since the last re-test when inspecting in full, every k-th when skipping', () => {
    const h = lots([true, null, null, true, null, null, null, null, null]);
    expect(lotsDue(h, skipLotDecision(h, { ...good, ppk: 0.5 })).map((l) => l.lotKey)).toEqual(['H4/L1', 'H5/L1', 'H6/L1', 'H7/L1', 'H8/L1']);
    const decision = { ...skipLotDecision(h, good), state: 'skipping' as const, every: 2 };
    expect(lotsDue(h, decision).map((l) => l.lotKey)).toEqual(['H5/L1', 'H7/L1']);
  });
});

describe('the plan from loaded data', () => {
  const band: Band = { grade: 'G', version: 1, effectiveFrom: '2020-01-01', status: 'active', kind: 'standard', points: MM.map((mm, k) => ({ mm, minHrc: 40 - 2.5 * k, maxHrc: 56 - 2.5 * k })) };
  /** n heats with one lot each; re-tested where `tested(i)`; the plant reads `plantShift(i)` off the truth. */
  function data(n: number, tested: (i: number) => boolean, plantShift: (i: number) => number) {
    const rng = createRng(5n);
    const curves: HeatCurve[] = [];
    const lots: LotRow[] = [];
    for (let i = 0; i < n; i++) {
      const truth = MM.map((_, k) => 48 - 2.5 * k + 0.5 * rng.normal());
      curves.push(curve(i + 1, 'mill_certificate', truth.map((v) => v + 0.3 * rng.normal()), date(i)));
      if (tested(i)) curves.push(curve(i + 1, 'receiving_inspection', truth.map((v) => v + plantShift(i) + 0.3 * rng.normal()), date(i), 'L1', (i + 1) * 10 + 1));
      lots.push({ lotId: i + 1, lotNumber: 'L1', heatId: i + 1, heatNumber: `H${String(i + 1).padStart(3, '0')}`, mill: 'MILLA', castDate: date(i), receivedDate: date(i), receivedOnFile: true });
    }
    return { curves, lots, bands: [band], openAlert: false, asOf: date(n - 1) };
  }

  it('skips after 10 accepted re-tests with a capable supply, and lists every second lot since the last re-test', () => {
    const p = planOf('MILLA', 'G', data(60, (i) => i < 40, () => 0));
    expect(p.evidence.ppk!).toBeGreaterThan(1.33);
    expect(p.decision.state).toBe('skipping');
    expect(p.retested).toBe(40);
    // Lots 41..60 untested since the last re-test; 1 in k of them is due, those inside the 60-day window.
    const windowFrom = new Date(Date.parse(`${p.asOf}T00:00:00Z`) - 60 * 86_400_000).toISOString().slice(0, 10);
    expect(p.due.length).toBeGreaterThan(0);
    expect(p.due.every((d) => d.receivedDate >= windowFrom && d.receivedDate <= p.asOf)).toBe(true);
    expect(p.due.length + p.overdueBeforeWindow).toBe(Math.floor(20 / p.decision.every));
  });

  it('a re-test 4 HRC below the certificate is not accepted and returns the mill to every lot', () => {
    const p = planOf('MILLA', 'G', data(60, (i) => i < 40, (i) => (i === 35 ? -4 : 0)));
    expect(p.decision.state).toBe('full');
    expect(p.decision.lastRejection?.lotKey).toBe('H036/L1');
    expect(p.decision.lastRejection?.reason).toMatch(/certificate reads above our test by [34]\.\d HRC/);
    expect(p.decision.acceptedInARow).toBe(4);
  });

  it('an open laboratory-agreement alert keeps every lot due', () => {
    const p = planOf('MILLA', 'G', { ...data(60, (i) => i < 40, () => 0), openAlert: true });
    expect(p.decision.every).toBe(1);
    expect(p.due.length + p.overdueBeforeWindow).toBe(20);
  });
});

