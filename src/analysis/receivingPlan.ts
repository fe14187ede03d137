// The re-test plan per mill and grade: replays the plant's receiving re-tests in order of arrival through
// the skip-lot rules of src/analysis/skipLot.ts (after ISO 2859-3), with the evidence the rules need —
// the capability of the mill's certificates (lowest Ppk over the band distances, last 365 days, ISO
// 22514-2 via src/analysis/capabilityStudy.ts), the laboratory agreement and its bias chart
// (src/analysis/receivingAgreement.ts), and open laboratory-agreement alerts — and lists the lots due.
// A plan supports, and does not replace, the purchase specification and qualified judgement.
import type { Db, Executor } from '../db/connection.ts';
import { loadCurves, type HeatCurve } from '../db/series.ts';
import { listLotsOfGrade, newestReceivedDate, type LotRow } from '../db/receivingLots.ts';
import { listBands, listGrades } from '../db/referenceData.ts';
import { listAlerts } from '../db/alerts.ts';
import { bandInForce, type Band } from '../hardenability/bands.ts';
import { testConformance } from '../hardenability/conformance.ts';
import { toBand } from './bandOf.ts';
import { capabilityAtBand } from './capabilityStudy.ts';
import { asTest } from './seriesData.ts';
import { DEFAULT_AGREEMENT_SETTINGS, labAgreementOf, type AgreementSettings, type LabAgreement } from './receivingAgreement.ts';
import { DEFAULT_SKIP_LOT_SETTINGS, lotsDue, skipLotDecision, type LotHistoryItem, type PlanDecision, type PlanEvidence, type SkipLotSettings } from './skipLot.ts';

export const LAB_AGREEMENT_RULE = 'lab_agreement';

export interface PlanSettings extends SkipLotSettings {
  /** A re-test whose mean difference from the certificate exceeds this (HRC) is not accepted. */
  pairToleranceHrc: number;
  /** Lots received this many days before the as-of date or later are listed as due. */
  dueWindowDays: number;
  /** Capability window (days before the as-of date). */
  capabilityDays: number;
}

export const DEFAULT_PLAN_SETTINGS: PlanSettings = Object.freeze({
  ...DEFAULT_SKIP_LOT_SETTINGS,
  // 3 HRC: above the limits of agreement of a laboratory pair in good order (√2 · 1.96 · ~1 HRC per
  // reading ≈ 2.8 HRC for single readings; a curve's mean is tighter) — our choice, stated on the page.
  pairToleranceHrc: 3,
  dueWindowDays: 60,
  capabilityDays: 365,
});

export interface LotDue {
  lotId: number;
  lotNumber: string;
  heatNumber: string;
  heatId: number;
  receivedDate: string;
}

export interface RetestOutcome {
  lotNumber: string;
  heatNumber: string;
  heatId: number;
  receivedDate: string;
  accepted: boolean;
  reason: string | null;
}

export interface ReceivingPlan {
  mill: string;
  grade: string;
  asOf: string;
  lots: number;
  retested: number;
  decision: PlanDecision;
  evidence: PlanEvidence & { ppkDistance: string | null; pairs: number; bias: number | null; openAlert: boolean };
  due: LotDue[];
  /** Due lots received before the window (older arrivals that a full inspection would also have tested). */
  overdueBeforeWindow: number;
  recent: RetestOutcome[];
  agreement: LabAgreement;
}

const addDays = (iso: string, days: number): string => {
  const d = new Date(`${iso}T00:00:00Z`);
  d.setUTCDate(d.getUTCDate() + days);
  return d.toISOString().slice(0, 10);
};

interface HistoryLot extends LotHistoryItem {
  row: LotRow;
}

/** Outcome of a re-test: inside the band at every band distance, and near the mill's own curve. */
function judgeRetest(test: HeatCurve, certificate: HeatCurve | undefined, band: Band | null, settings: PlanSettings): { accepted: boolean; reason: string | null } {
  if (band) {
    const c = testConformance(asTest(test), band);
    if (c.verdict === 'fail') {
      const failed = c.points.filter((p) => p.verdict === 'fail').map((p) => p.label ?? `${p.mm} mm`);
      return { accepted: false, reason: `outside the band at ${failed.join(', ')}` };
    }
  }
  if (certificate) {
    const diffs: number[] = [];
    for (const [mm, hrc] of test.readings) {
      for (const [cmm, chrc] of certificate.readings) if (Math.abs(cmm - mm) <= 1e-6) diffs.push(chrc - hrc);
    }
    if (diffs.length) {
      const bias = diffs.reduce((s, v) => s + v, 0) / diffs.length;
      if (Math.abs(bias) > settings.pairToleranceHrc)
        return { accepted: false, reason: `certificate reads ${bias > 0 ? 'above' : 'below'} our test by ${Math.abs(bias).toFixed(1)} HRC on average` };
    }
  }
  return { accepted: true, reason: null };
}

/** The plan of one mill and grade from loaded data (pure). */
export function planOf(
  mill: string,
  grade: string,
  input: { curves: readonly HeatCurve[]; lots: readonly LotRow[]; bands: readonly Band[]; openAlert: boolean; asOf: string },
  settings: PlanSettings = DEFAULT_PLAN_SETTINGS,
  agreementSettings: AgreementSettings = DEFAULT_AGREEMENT_SETTINGS,
): ReceivingPlan {
  const curves = input.curves.filter((c) => c.mill === mill);
  const lots = input.lots.filter((l) => l.mill === mill && l.receivedDate <= input.asOf);
  const certificateOf = new Map<number, HeatCurve>();
  const retestOf = new Map<string, HeatCurve>();
  for (const c of curves) {
    if (c.source === 'mill_certificate') certificateOf.set(c.heatId, c);
    else if (c.source === 'receiving_inspection' && c.lotNumber !== null) retestOf.set(`${c.heatId}/${c.lotNumber}`, c);
  }
  const history: HistoryLot[] = lots.map((row) => {
    const test = retestOf.get(`${row.heatId}/${row.lotNumber}`);
    const band = bandInForce(input.bands, row.castDate);
    return { lotKey: `${row.heatNumber}/${row.lotNumber}`, receivedDate: row.receivedDate, row, retest: test ? judgeRetest(test, certificateOf.get(row.heatId), band, settings) : null };
  });

  const agreement = labAgreementOf(mill, grade, curves, agreementSettings);
  const band = bandInForce(input.bands, input.asOf);
  const from = addDays(input.asOf, -settings.capabilityDays);
  const recentCertificates = curves.filter((c) => c.source === 'mill_certificate' && c.castDate >= from && c.castDate <= input.asOf);
  let ppk: number | null = null;
  let ppkDistance: string | null = null;
  if (band) {
    for (const d of capabilityAtBand(recentCertificates, band)) {
      if (d.result && (ppk === null || d.result.ppk < ppk)) {
        ppk = d.result.ppk;
        ppkDistance = d.label ?? `${d.distanceMm} mm`;
      }
    }
  }
  const chart = agreement.chart;
  const lastPoint = chart?.points[chart.points.length - 1];
  const chartSignalNow = Boolean(lastPoint && lastPoint.signal);
  const halfWidth = agreement.overall ? Math.max(Math.abs(agreement.overall.lowerLimit), Math.abs(agreement.overall.upperLimit)) : null;
  const evidence: PlanEvidence = { ppk, agreementSignal: input.openAlert || chartSignalNow, agreementHalfWidthHrc: halfWidth };
  const decision = skipLotDecision(history, evidence, settings);
  const windowFrom = addDays(input.asOf, -settings.dueWindowDays);
  const dueAll = lotsDue(history, decision);
  const due = dueAll
    .filter((l) => l.receivedDate >= windowFrom)
    .map((l) => ({ lotId: l.row.lotId, lotNumber: l.row.lotNumber, heatNumber: l.row.heatNumber, heatId: l.row.heatId, receivedDate: l.receivedDate }));
  const recent = history
    .filter((l) => l.retest)
    .slice(-5)
    .reverse()
    .map((l) => ({ lotNumber: l.row.lotNumber, heatNumber: l.row.heatNumber, heatId: l.row.heatId, receivedDate: l.receivedDate, accepted: l.retest!.accepted, reason: l.retest!.reason }));
  return {
    mill,
    grade,
    asOf: input.asOf,
    lots: lots.length,
    retested: history.filter((l) => l.retest).length,
    decision,
    evidence: { ...evidence, ppkDistance, pairs: agreement.pairs, bias: agreement.overall?.bias ?? null, openAlert: input.openAlert },
    due,
    overdueBeforeWindow: dueAll.length - due.length,
    recent,
    agreement,
  };
}

export interface PlanQuery {
  grade?: string;
  mill?: string;
  /** Default: the newest received date on file. */
  asOf?: string;
  /**
   * Years of history before the as-of date that are loaded (default 5): enough for the re-test record, the
   * 12-month capability and the agreement chart, and a bound on the load for a plant with decades on file.
   */
  historyYears?: number;
}

/** Plans of every mill and grade (or the ones asked for). */
export async function receivingPlans(db: Db | Executor, query: PlanQuery = {}, settings: PlanSettings = DEFAULT_PLAN_SETTINGS, agreementSettings: AgreementSettings = DEFAULT_AGREEMENT_SETTINGS): Promise<{ asOf: string | null; plans: ReceivingPlan[] }> {
  const grades = query.grade ? [query.grade] : (await listGrades(db as Db)).map((g) => g.code);
  const asOf = query.asOf ?? (await newestReceivedDate(db, { grade: query.grade, mill: query.mill }));
  if (asOf === null) return { asOf: null, plans: [] };
  const from = addDays(asOf, -Math.round(365.25 * (query.historyYears ?? 5)));
  const loaded: Array<{ grade: string; lots: LotRow[]; curves: HeatCurve[]; bands: Band[] }> = [];
  for (const grade of grades) {
    const lots = await listLotsOfGrade(db, { grade, mill: query.mill, from });
    if (lots.length === 0) continue;
    const curves = await loadCurves(db as Db, { grade, mill: query.mill, from, source: 'both' });
    const bands = (await listBands(db as Db, grade)).map(toBand);
    loaded.push({ grade, lots, curves, bands });
  }
  const open = [
    ...(await listAlerts(db as Db, { rule: LAB_AGREEMENT_RULE, status: 'open', limit: 1000 })).alerts,
    ...(await listAlerts(db as Db, { rule: LAB_AGREEMENT_RULE, status: 'acknowledged', limit: 1000 })).alerts,
  ];
  const plans: ReceivingPlan[] = [];
  for (const g of loaded) {
    for (const mill of [...new Set(g.lots.map((l) => l.mill))].sort()) {
      const openAlert = open.some((a) => a.mill === mill && a.grade === g.grade);
      plans.push(planOf(mill, g.grade, { curves: g.curves, lots: g.lots, bands: g.bands, openAlert, asOf }, settings, agreementSettings));
    }
  }
  return { asOf, plans };
}
