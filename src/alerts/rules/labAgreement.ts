// Rule "lab_agreement": the mill's laboratory has moved away from the plant's receiving laboratory. For
// each mill x grade the ingest touched, the pairs (a heat with both the mill's certificate curve and the
// plant's receiving test) are charted in time order by src/analysis/receivingAgreement.ts: the mean
// difference mill − plant over the common distances, EWMA (λ 0.2) centred on the bias of the first
// reference pairs, limits designed as the drift monitoring's are: at most one false alarm per mill x
// grade in three years at the series' own re-test rate (in-control ARL = pairs a year × 3, at least 20
// pairs, rounded up to an R10 preferred number), widened so that 90 % of estimated references meet it (Lucas & Saccucci 1990 Markov chain;
// Gandy & Kvaløy 2013; src/stats/monitoringDesign.ts). An alert is raised when a pair the ingest brought
// (either of its tests new) lies beyond a limit after the reference window.
// Cause key: rule + mill + grade + side; severity warning. While open, nothing more is raised.
import type { Executor } from '../../db/connection.ts';
import type { ApplyResult } from '../../db/certificateStore.ts';
import { raiseAlert } from '../../db/alerts.ts';
import { DEFAULT_AGREEMENT_SETTINGS, labAgreementOf, type AgreementSettings } from '../../analysis/receivingAgreement.ts';
import { LAB_AGREEMENT_RULE } from '../../analysis/receivingPlan.ts';
import { DEFAULT_ALERT_SETTINGS, type AlertRuleSettings } from './settings.ts';
import { ingestScope } from './ingestScope.ts';

export { LAB_AGREEMENT_RULE };

const r2 = (x: number) => Math.round(x * 100) / 100;

/** The laboratory-agreement rule (history length from the shared settings; chart settings its own). */
export function labAgreementRule(settings: AlertRuleSettings = DEFAULT_ALERT_SETTINGS, agreement: AgreementSettings = DEFAULT_AGREEMENT_SETTINGS) {
  return async function labAgreement(tx: Executor, written: ApplyResult): Promise<void> {
    const scope = await ingestScope(tx, written, settings.historyDays);
    for (const group of scope.groups) {
      const newHeats = new Set(group.newTests.filter((t) => t.source === 'mill_certificate' || t.source === 'receiving_inspection').map((t) => t.heatId));
      if (newHeats.size === 0) continue;
      const study = labAgreementOf(group.mill, group.grade, group.curves, agreement);
      const chart = study.chart;
      if (!chart) continue;
      const pairs = study.pairList;
      const hit = chart.points.findIndex((p, i) => i >= chart.referencePairs && p.signal !== null && newHeats.has(pairs[i]!.heatId));
      if (hit < 0) continue;
      const point = chart.points[hit]!;
      const side = point.signal!;
      const since = chart.points.slice(chart.referencePairs, hit + 1);
      const recent = chart.points.slice(Math.max(0, hit - 5), hit + 1);
      const recentBias = recent.reduce((s, p) => s + p.bias, 0) / recent.length;
      await raiseAlert(tx, {
        rule: LAB_AGREEMENT_RULE,
        severity: 'warning',
        causeKey: `${LAB_AGREEMENT_RULE}:mill:${group.millId}:grade:${group.gradeId}:${side}`,
        title: `${group.mill} ${group.grade}: the mill's laboratory reads ${side === 'high' ? 'higher' : 'lower'} than ours (mean of the last ${recent.length} pairs ${r2(recentBias)} HRC against an established ${r2(chart.target)} HRC, from heat ${point.heatNumber})`,
        millId: group.millId,
        gradeId: group.gradeId,
        heatId: pairs[hit]!.heatId,
        evidence: {
          heatNumber: point.heatNumber,
          castDate: point.castDate,
          side,
          pairBias: r2(point.bias),
          ewma: r2(point.z),
          limit: r2(side === 'high' ? point.ucl : point.lcl),
          establishedBias: r2(chart.target),
          sigmaPerPair: r2(chart.sigma),
          referencePairs: chart.referencePairs,
          referenceFrom: chart.points[0]!.castDate,
          referenceTo: chart.points[chart.referencePairs - 1]!.castDate,
          lambda: chart.lambda,
          L: Math.round(chart.L * 1000) / 1000,
          targetArlPairs: Math.round(chart.targetArl),
          pairsPerYear: r2(chart.pairsPerYear),
          designedFor: `at most one false alarm in 3 years at ${r2(chart.pairsPerYear)} pairs a year (limits widened for a reference of ${chart.referencePairs} pairs, 90 % guarantee)`,
          arlAtOneSigma: r2(chart.arlAtShift.oneSigma),
          pairsSinceReference: since.map((p) => ({ heatNumber: p.heatNumber, castDate: p.castDate, bias: r2(p.bias), ewma: r2(p.z) })),
          method: 'EWMA of the mean difference mill − plant per heat (Roberts 1959; limits for a designed ARL, Lucas & Saccucci 1990, Gandy & Kvaløy 2013)',
          caution: 'A laboratory difference is a reason to compare test practice and calibration with the mill; acceptance follows the purchase specification.',
        },
      });
    }
  };
}
