// Period report for a supplier review of one mill: per grade, the capability table against the band in
// force, individuals charts per band distance (SVG), the alerts raised in the period, and the certificates
// whose checks did not pass. Plain trade language; statistics support acceptance testing, never replace it.
import type { Db } from '../db/connection.ts';
import { listHeats } from '../db/heats.ts';
import { findGrade } from '../db/referenceData.ts';
import { listAlerts, type AlertView } from '../db/alerts.ts';
import { checkCurveNonIncreasing } from '../hardenability/checks/curveShape.ts';
import { checkMartensiteCeiling } from '../hardenability/checks/martensiteCeiling.ts';
import { checkChemistryLimits, type ChemistryLimits } from '../hardenability/checks/chemistryLimits.ts';
import { findPossibleCopies } from '../hardenability/checks/copies.ts';
import type { CheckEvidence, Chemistry } from '../hardenability/types.ts';
import { capabilityStudy, type CapabilityStudy } from './capabilityStudy.ts';
import { controlChart, type ControlChart } from './controlCharts.ts';
import { capabilitySpec, controlChartSpec } from './vegaSpecs.ts';
import { renderSvg } from './svgRender.ts';
import { seriesMonitoringView } from './monitoringView.ts';
import { curveCharts } from './curveCharts.ts';
import { groupByHeat, loadSeriesCurves } from './seriesData.ts';
import { millDataQuality, type MillDataQuality } from './millDataQuality.ts';
import { receivingPlans, type ReceivingPlan } from './receivingPlan.ts';

export const REPORT_CAUTION =
  'These statistics and predictions help decide where to look; they support, and do not replace, end-quench testing and acceptance to the purchase specification.';

export interface SuspiciousCertificate {
  heatId: number;
  heatNumber: string;
  grade: string;
  castDate: string;
  findings: Array<{ check: string; verdict: string; summary: string }>;
}

export interface GradeSection {
  grade: string;
  heats: number;
  capability: CapabilityStudy | null;
  capabilityProblem: string | null;
  charts: ControlChart[];
  chartProblems: Array<{ distanceMm: number; problem: string }>;
  /** How the mill reports: even-reading preference and too-smooth curves (null with no curves). */
  reporting: MillDataQuality | null;
  /** The curve-level drift scheme the alerts run, over the heats of the period (level and shape charts). */
  curve?: { status: string; reason: string | null; statements: string[]; lag1Autocorrelation: number | null; charts: ControlChart[]; episodes: Array<{ cause: string; from: string; castDate: string; heats: number }> } | null;
  /** Laboratory agreement and the re-test plan as of the period's end (src/analysis/receivingPlan.ts). */
  receiving?: ReceivingPlan | null;
}

export interface PeriodReport {
  mill: string;
  from: string;
  to: string;
  generatedAt: string;
  caution: string;
  grades: GradeSection[];
  alerts: AlertView[];
  suspicious: SuspiciousCertificate[];
}

export interface ReportRequest {
  mill: string;
  from: string;
  to: string;
  grade?: string;
}

function certificateFindings(curves: Awaited<ReturnType<typeof loadSeriesCurves>>, limits: ChemistryLimits | null): Map<number, CheckEvidence[]> {
  const heats = groupByHeat(curves).map((g) => g[0]);
  // Heat numbers (unique within a mill) name the heats, so the evidence reads as the certificates do.
  const records = heats.map((h) => ({ heatId: h.heatNumber, millId: h.mill, readings: [...h.readings].map(([mm, hrc]) => ({ mm, hrc })), chemistry: h.chemistry as Chemistry }));
  const out = new Map<number, CheckEvidence[]>();
  heats.forEach((h, i) => {
    const readings = records[i].readings;
    const checks: CheckEvidence[] = [checkCurveNonIncreasing(readings), findPossibleCopies(records[i], records)];
    if (h.chemistry.C !== undefined) checks.push(checkMartensiteCeiling(readings, h.chemistry.C));
    if (limits) checks.push(checkChemistryLimits(h.chemistry as Chemistry, limits));
    out.set(h.heatId, checks);
  });
  return out;
}

/** Gathers the report's data (no rendering). */
export async function buildPeriodReport(db: Db, request: ReportRequest): Promise<PeriodReport> {
  const { heats } = await listHeats(db, { mill: request.mill, grade: request.grade, from: request.from, to: request.to, limit: 1_000_000 });
  const grades = [...new Set(heats.map((h) => h.grade))].sort();
  const sections: GradeSection[] = [];
  const suspicious: SuspiciousCertificate[] = [];
  for (const grade of grades) {
    const section: GradeSection = {
      grade,
      heats: heats.filter((h) => h.grade === grade).length,
      capability: null,
      capabilityProblem: null,
      charts: [],
      chartProblems: [],
      reporting: (await millDataQuality(db, { grade, mill: request.mill, from: request.from, to: request.to }))[0] ?? null,
    };
    try {
      section.capability = await capabilityStudy(db, { grade, mill: request.mill, from: request.from, to: request.to });
    } catch (error) {
      section.capabilityProblem = (error as Error).message;
    }
    try {
      const view = await seriesMonitoringView(db, { grade, mill: request.mill });
      const inPeriod = { ...view, points: view.points.filter((p) => p.castDate >= request.from && p.castDate <= request.to) };
      const charts = curveCharts(inPeriod);
      section.curve = {
        status: view.status,
        reason: view.reason,
        statements: view.statements,
        lag1Autocorrelation: view.reference && 'lag1Autocorrelation' in view.reference ? (view.reference.lag1Autocorrelation ?? null) : null,
        charts: charts ? [charts.level, ...(charts.shape ? [charts.shape] : [])] : [],
        episodes: view.episodes.filter((e) => e.castDate >= request.from && e.castDate <= request.to),
      };
    } catch (error) {
      section.curve = { status: 'refused', reason: (error as Error).message, statements: [], lag1Autocorrelation: null, charts: [], episodes: [] };
    }
    for (const d of section.capability?.distances ?? []) {
      try {
        section.charts.push(await controlChart(db, { kind: 'individuals', grade, mill: request.mill, from: request.from, to: request.to, distanceMm: d.distanceMm }));
      } catch (error) {
        section.chartProblems.push({ distanceMm: d.distanceMm, problem: (error as Error).message });
      }
    }
    section.receiving = (await receivingPlans(db, { grade, mill: request.mill, asOf: request.to })).plans[0] ?? null;
    sections.push(section);
    const info = await findGrade(db, grade);
    const limits = info && info.chemistryLimits.length
      ? (Object.fromEntries(info.chemistryLimits.map((l) => [l.element, { ...(l.min === null ? {} : { min: l.min }), ...(l.max === null ? {} : { max: l.max }) }])) as ChemistryLimits)
      : null;
    const curves = await loadSeriesCurves(db, { grade, mill: request.mill, from: request.from, to: request.to });
    for (const [heatId, checks] of certificateFindings(curves, limits)) {
      const bad = checks.filter((c) => c.verdict === 'fail' || c.verdict === 'warn');
      if (!bad.length) continue;
      const h = heats.find((x) => x.id === heatId)!;
      suspicious.push({ heatId, heatNumber: h.heatNumber, grade, castDate: h.castDate, findings: bad.map((c) => ({ check: c.title, verdict: c.verdict, summary: c.summary })) });
    }
  }
  const alerts = (await listAlerts(db, { mill: request.mill, limit: 10_000 })).alerts.filter((a) => {
    const day = a.createdAt.slice(0, 10);
    return (day >= request.from && day <= request.to) || a.status !== 'resolved';
  });
  return { mill: request.mill, from: request.from, to: request.to, generatedAt: new Date().toISOString(), caution: REPORT_CAUTION, grades: sections, alerts, suspicious };
}

const esc = (s: unknown) => String(s ?? '').replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
const num = (v: number | null | undefined, d = 2) => (v === null || v === undefined || !Number.isFinite(v) ? '–' : v.toFixed(d));

/** In plain words, what a Ppk says (common practice: 1.33 is the usual supplier target). */
export function ppkWords(ppk: number | null | undefined): string {
  if (ppk === null || ppk === undefined || !Number.isFinite(ppk)) return 'not enough data';
  if (ppk >= 1.33) return 'comfortably inside the band';
  if (ppk >= 1) return 'inside the band, little margin';
  return 'expect heats outside the band';
}

/** The report as one self-contained HTML page with inline SVG charts. */
export async function renderReportHtml(report: PeriodReport): Promise<string> {
  const parts: string[] = [];
  parts.push(`<!doctype html><html lang="en"><head><meta charset="utf-8"><title>Hardenability review: ${esc(report.mill)} ${esc(report.from)} to ${esc(report.to)}</title>
<style>body{font-family:Helvetica,Arial,sans-serif;margin:2em;color:#222;max-width:1000px}table{border-collapse:collapse;margin:1em 0}th,td{border:1px solid #bbb;padding:4px 8px;text-align:right}th{background:#eef2f6}td.l,th.l{text-align:left}.caution{border-left:4px solid #c8691c;padding:8px 12px;background:#faf3ea}figure{margin:1em 0}</style></head><body>`);
  parts.push(`<h1>Hardenability review: ${esc(report.mill)}</h1><p>Heats cast from ${esc(report.from)} to ${esc(report.to)}. Prepared ${esc(report.generatedAt.slice(0, 10))}.</p>`);
  parts.push(`<p class="caution">${esc(report.caution)}</p>`);
  if (report.grades.length === 0) parts.push('<p>No heats from this mill in the period.</p>');
  for (const g of report.grades) {
    parts.push(`<h2>${esc(g.grade)}: ${g.heats} heat(s)</h2>`);
    if (g.capabilityProblem) parts.push(`<p>Capability not worked out: ${esc(g.capabilityProblem)}</p>`);
    if (g.capability) {
      parts.push('<table><tr><th class="l">Distance</th><th>Band</th><th>Heats</th><th>Average HRC</th><th>Spread (SD)</th><th>Ppk</th><th>Ppk 95 % range</th><th>Expected outside band (ppm)</th><th>Found outside</th><th class="l">In short</th></tr>');
      for (const d of g.capability.distances) {
        const r = d.result;
        const band = `${d.lsl ?? '–'} to ${d.usl ?? '–'}`;
        parts.push(
          `<tr><td class="l">${esc(d.label ?? `${d.distanceMm} mm`)}</td><td>${esc(band)}</td><td>${d.n}</td><td>${num(r?.mean, 1)}</td><td>${num(r?.sigmaOverall)}</td><td>${num(r?.ppk)}</td><td>${r ? `${num(r.intervals.ppk.lower)} – ${num(r.intervals.ppk.upper)}` : '–'}</td><td>${num(r?.expectedPpm.overall.total, 0)}</td><td>${r ? Math.round((r.observedPpm.total * r.n) / 1e6) : '–'}</td><td class="l">${esc(ppkWords(r?.ppk))}${r?.flags.unstable ? '; not steady over the period' : ''}${r?.flags.nonNormal ? '; spread not bell-shaped' : ''}</td></tr>`,
        );
      }
      parts.push('</table>');
      parts.push(`<figure>${await renderSvg(capabilitySpec(g.capability))}</figure>`);
    }
    if (g.curve) {
      parts.push('<h3>Whole curve: what the drift alerts judge</h3>');
      parts.push(g.curve.status === 'monitoring' ? `<p>${esc(g.curve.statements.join(' '))}</p>` : `<p>Not monitored: ${esc(g.curve.reason)}.</p>`);
      for (const chart of g.curve.charts) {
        const what = chart.kind === 't2' ? 'Curve shape (T² of the curve once its level is taken out)' : 'Curve level (EWMA of the mean standardised deviation)';
        const note = chart.signals.length ? `${what}. Signals: ${chart.signals.map((s) => `${s.description} (heats ${s.heats.slice(0, 8).join(', ')}${s.heats.length > 8 ? ', …' : ''})`).join('; ')}.` : `${what}. No signal in the period.`;
        parts.push(`<figure>${await renderSvg(controlChartSpec(chart, { width: 760, height: 200 }))}<figcaption>${esc(note)}</figcaption></figure>`);
      }
      if (g.charts.length) parts.push('<h3>Per distance (explanation: which distances move; run rules as the alerts use them)</h3>');
    }
    for (const chart of g.charts) {
      const note = chart.signals.length ? `Signals: ${chart.signals.map((s) => `${s.description} (heats ${s.heats.slice(0, 8).join(', ')}${s.heats.length > 8 ? ', …' : ''})`).join('; ')}.` : 'No signal: the series looks steady.';
      parts.push(`<figure>${await renderSvg(controlChartSpec(chart, { width: 760, height: 200 }))}<figcaption>${esc(note)}</figcaption></figure>`);
    }
    for (const p of g.chartProblems) parts.push(`<p>No chart at ${esc(p.distanceMm)} mm: ${esc(p.problem)}</p>`);
    if (g.reporting) {
      const findings = [g.reporting.evenReadings, g.reporting.smoothness].filter((c) => c.verdict === 'fail' || c.verdict === 'warn');
      parts.push('<h3>How the readings are reported</h3>');
      parts.push(
        findings.length
          ? `<p>${findings.map((f) => `${esc(f.title)}: <strong>${f.verdict === 'fail' ? 'no' : 'doubtful'}</strong> — ${esc(f.summary)}`).join('<br>')}</p><p>Ask the mill for the raw readings of a few heats; this is a reason to look, not proof of anything.</p>`
          : '<p>The readings look measured: even and odd values are about equally frequent, and the curves scatter as much as measurements do.</p>',
      );
    }
  }
  const received = report.grades.filter((g) => g.receiving);
  if (received.length) {
    parts.push('<h2>Receiving inspection: laboratory agreement and re-test plan</h2>');
    parts.push('<table><tr><th class="l">Grade</th><th>Heats tested by both</th><th>Mill − plant (HRC)</th><th>95 % range</th><th>Limits of agreement</th><th class="l">Laboratory</th><th class="l">Re-test</th><th>Lots due</th><th class="l">Why</th></tr>');
    for (const g of received) {
      const p = g.receiving!;
      const o = p.agreement.overall;
      const chart = p.agreement.chart;
      const lab = !chart ? 'too few pairs to chart' : chart.firstSignal ? `reads ${chart.firstSignal.side} since heat ${chart.firstSignal.heatNumber} (${chart.firstSignal.castDate})` : 'in agreement';
      parts.push(
        `<tr><td class="l">${esc(g.grade)}</td><td>${p.agreement.pairs}</td><td>${num(o?.bias)}</td><td>${o ? `${num(o.biasInterval.lower)} – ${num(o.biasInterval.upper)}` : '–'}</td><td>${o ? `${num(o.lowerLimit, 1)} to ${num(o.upperLimit, 1)}` : '–'}</td><td class="l">${esc(lab)}</td><td class="l">${p.decision.every === 1 ? 'every lot' : `1 lot in ${p.decision.every}`}</td><td>${p.due.length}</td><td class="l">${esc(p.decision.reasons.join(' '))}</td></tr>`,
      );
    }
    parts.push('</table><p>Pairs are heats with both the mill’s certificate and our receiving test (Bland &amp; Altman 1986 on the mean difference per heat). The plan follows skip-lot rules after ISO 2859-3 and is a recommendation: it does not replace the receiving test or the purchase specification.</p>');
  }
  parts.push('<h2>Alerts</h2>');
  if (report.alerts.length === 0) parts.push('<p>No alert raised in the period, and none open.</p>');
  else {
    parts.push('<table><tr><th class="l">Raised</th><th class="l">Severity</th><th class="l">What</th><th class="l">Heat</th><th class="l">Status</th></tr>');
    for (const a of report.alerts) parts.push(`<tr><td class="l">${esc(a.createdAt.slice(0, 10))}</td><td class="l">${esc(a.severity)}</td><td class="l">${esc(a.title)}</td><td class="l">${esc(a.heat?.heatNumber ?? '')}</td><td class="l">${esc(a.status)}</td></tr>`);
    parts.push('</table>');
  }
  parts.push('<h2>Certificates to look at</h2>');
  const failed = report.suspicious.flatMap((s) => s.findings.filter((f) => f.verdict === 'fail').map((f) => ({ s, f })));
  const doubtful = new Map<string, string[]>();
  for (const s of report.suspicious) for (const f of s.findings) if (f.verdict === 'warn') doubtful.set(f.check, [...(doubtful.get(f.check) ?? []), s.heatNumber]);
  if (report.suspicious.length === 0) parts.push('<p>Every certificate passed the checks (curve shape, quenched-end hardness, chemistry limits, repeated values).</p>');
  if (failed.length) {
    parts.push('<table><tr><th class="l">Heat</th><th class="l">Grade</th><th class="l">Cast</th><th class="l">Check failed</th></tr>');
    for (const { s, f } of failed) parts.push(`<tr><td class="l">${esc(s.heatNumber)}</td><td class="l">${esc(s.grade)}</td><td class="l">${esc(s.castDate)}</td><td class="l">${esc(f.check)}. ${esc(f.summary)}</td></tr>`);
    parts.push('</table>');
  }
  if (doubtful.size) {
    parts.push('<p>Worth a look (each is common on its own, and a pattern only in numbers):</p><ul>');
    for (const [check, heats] of doubtful) parts.push(`<li>${esc(check)}: ${heats.length} certificate(s), e.g. heats ${esc(heats.slice(0, 6).join(', '))}${heats.length > 6 ? ', …' : ''}.</li>`);
    parts.push('</ul>');
  }
  parts.push(`<p class="caution">${esc(report.caution)}</p></body></html>`);
  return parts.join('\n');
}

const csvCell = (v: unknown) => {
  const s = v === null || v === undefined || (typeof v === 'number' && !Number.isFinite(v)) ? '' : String(v);
  return /[",\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
};

/** The report as CSV: one row per grade and distance (capability), then findings and alerts. */
export function renderReportCsv(report: PeriodReport): string {
  const rows: unknown[][] = [['section', 'mill', 'grade', 'distance_mm', 'label', 'lsl', 'usl', 'n', 'mean', 'sd_overall', 'ppk', 'ppk_low95', 'ppk_high95', 'cpk', 'expected_ppm', 'observed_outside', 'note']];
  for (const g of report.grades) {
    for (const d of g.capability?.distances ?? []) {
      const r = d.result;
      rows.push(['capability', report.mill, g.grade, d.distanceMm, d.label, d.lsl, d.usl, d.n, r?.mean, r?.sigmaOverall, r?.ppk, r?.intervals.ppk.lower, r?.intervals.ppk.upper, r?.cpk, r?.expectedPpm.overall.total, r ? Math.round((r.observedPpm.total * r.n) / 1e6) : null, d.note ?? ppkWords(r?.ppk)]);
    }
    if (g.receiving) {
      const p = g.receiving;
      const o = p.agreement.overall;
      rows.push(['receiving', report.mill, g.grade, null, null, o?.lowerLimit ?? null, o?.upperLimit ?? null, p.agreement.pairs, o?.bias ?? null, o?.sd ?? null, null, o?.biasInterval.lower ?? null, o?.biasInterval.upper ?? null, null, null, p.due.length, `columns here: lsl/usl = limits of agreement, mean = bias mill − plant, sd_overall = its SD, ppk_low95/high95 = the bias interval, observed_outside = lots due; plan ${p.decision.every === 1 ? 'every lot' : `1 lot in ${p.decision.every}`}: ${p.decision.reasons.join(' ')}`]);
    }
    for (const c of g.charts) for (const s of c.signals) rows.push(['chart_signal', report.mill, g.grade, c.distanceMm, c.label, null, null, s.points.length, null, null, null, null, null, null, null, null, `${s.description}: ${s.heats.join(' ')}`]);
  }
  for (const s of report.suspicious) for (const f of s.findings) rows.push(['certificate', report.mill, s.grade, null, s.heatNumber, null, null, null, null, null, null, null, null, null, null, null, `${f.verdict}: ${f.check}. ${f.summary}`]);
  for (const a of report.alerts) rows.push(['alert', report.mill, a.grade, a.distanceMm, a.heat?.heatNumber ?? '', null, null, null, null, null, null, null, null, null, null, null, `${a.severity} ${a.status}: ${a.title}`]);
  rows.push(['caution', report.mill, null, null, null, null, null, null, null, null, null, null, null, null, null, null, report.caution]);
  return rows.map((r) => r.map(csvCell).join(',')).join('\n') + '\n';
}
