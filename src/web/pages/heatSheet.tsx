// The body of one heat's sheet.
import type { Child } from 'hono/jsx';
import type { Db } from '../../db/connection.ts';
import type { HeatDetail } from '../../db/heats.ts';
import { listAlerts } from '../../db/alerts.ts';
import type { BandSummary } from '../../analysis/bandOf.ts';
import { heatReview, type HeatSignal } from '../../analysis/heatReview.ts';
import { shortRule } from '../specs/controlChart.ts';
import type { Band } from '../../hardenability/bands.ts';
import type { ChemistryRow } from '../../hardenability/checks/chemistryLimits.ts';
import type { CheckEvidence, ChemicalElement, Chemistry } from '../../hardenability/types.ts';
import { Caution } from '../components/caution.tsx';
import { Tag } from '../components/bits.tsx';
import type { PageKit } from '../page.tsx';
import { fmt, mmLabel, query } from '../params.ts';
import { curvesSpec, type BandRow, type CurveRow, type PredictedRow } from '../specs/curves.ts';
import { chemistrySpec, type ChemistryPosition } from '../specs/chemistry.ts';
import { CheckList } from '../components/checks.tsx';
import { simulatedProbabilityText } from '../probabilityText.ts';

const SOURCE_WORDS: Record<string, string> = { mill_certificate: 'mill certificate', receiving_inspection: 'receiving inspection', outside_lab: 'outside lab' };

export const sourceWord = (s: string) => SOURCE_WORDS[s] ?? s.replace(/_/g, ' ');

export function bandRows(band: Band | null): BandRow[] {
  return (band?.points ?? []).map((p) => ({ mm: p.mm, label: p.label ?? mmLabel(p.mm), min: p.minHrc ?? null, max: p.maxHrc ?? null }));
}

export function bandSummaryRows(band: BandSummary | null): BandRow[] {
  return (band?.points ?? []).map((p) => ({ mm: p.distanceMm, label: p.label ?? mmLabel(p.distanceMm), min: p.minHrc, max: p.maxHrc }));
}

function chemistryPositions(rows: readonly ChemistryRow[]): ChemistryPosition[] {
  return rows
    .filter((r) => r.value !== null)
    .map((r) => {
      const lo = r.min ?? 0;
      const hi = r.max ?? null;
      const position = hi === null ? (r.value! >= lo ? 1 : r.value! / lo) : hi > lo ? (r.value! - lo) / (hi - lo) : 0.5;
      return { element: r.element, value: r.value!, min: r.min ?? null, max: r.max ?? null, position, status: r.status.replace('_', ' ') };
    });
}

export async function heatSheet(db: Db, heat: HeatDetail, kit: PageKit): Promise<Child> {
  const [review, alerts] = await Promise.all([heatReview(db, heat.id), listAlerts(db, { heatId: heat.id, limit: 100 })]);
  const band = review.band;
  const chemCheck = review.checks.find((c) => c.check === 'chemistry_limits') as (CheckEvidence<{ rows: ChemistryRow[] }> | undefined);
  const chemistry = heat.chemistry as Chemistry;
  const limited = new Set((chemCheck?.values.rows ?? []).map((r) => r.element));
  const reported = (Object.keys(chemistry) as string[]).filter((e) => e !== 'other') as ChemicalElement[];
  const chemRows = [
    ...(chemCheck?.values.rows ?? []),
    ...reported.filter((e) => !limited.has(e)).map((e) => ({ element: e, value: chemistry[e] ?? null, min: undefined, max: undefined, status: 'no limit' as const, excess: 0 })),
  ].map((r) => ({ element: r.element, value: r.value, min: r.min ?? null, max: r.max ?? null, status: r.status.replace('_', ' '), excess: r.excess }));

  const prediction = review.prediction;
  const predicted: PredictedRow[] = (prediction?.points ?? []).map((p) => ({ mm: p.distanceMm, label: p.label, hrc: p.hrc, lower: p.lower, upper: p.upper }));

  const current = review.tests.filter((t) => t.current && t.readings.length);
  const curveRows: CurveRow[] = current.flatMap((t) => {
    const failing = new Set((t.conformance?.points ?? []).filter((p) => p.verdict === 'fail' && p.basis === 'measured').map((p) => p.mm));
    return t.readings.map((r) => ({
      curve: `test ${t.testId}`,
      group: `${sourceWord(t.source)}${t.lotNumber ? ` (lot ${t.lotNumber})` : ''} #${t.testId}`,
      heat: heat.heatNumber,
      mm: r.distanceMm,
      label: r.label,
      hrc: r.hrc,
      outside: failing.has(r.distanceMm),
    }));
  });
  const conformance = current
    .filter((t) => t.conformance)
    .map((t) => {
      const result = t.conformance!;
      return { test: `#${t.testId}`, source: sourceWord(t.source), lot: t.lotNumber, verdict: result.verdict, minMargin: result.minMargin, failing: result.points.filter((p) => p.verdict === 'fail').map((p) => p.label ?? mmLabel(p.mm)).join(', ') };
    });
  const checks = review.checks.filter((c) => c.check !== 'chemistry_limits');
  const facts: Array<[string, Child]> = [
    ['Mill', heat.mill],
    ['Grade', <a href={`/grades/${encodeURIComponent(heat.grade)}`}>{heat.grade}</a>],
    ['Cast', heat.castDate],
    ['Inspection certificate (EN 10204 3.1) / mill test report', `${heat.certificateNumber ?? '–'} (revision ${heat.revision}${heat.revisions.length > 1 ? ` of ${heat.revisions.length}` : ''})`],
    ['Grain size (ASTM E112)', heat.grainSizeStated ? `${heat.grainSizeStated} as stated (${heat.grainSize === null ? 'no single number: calculations treat it as not reported' : `${heat.grainSize} used in calculations`})` : (heat.grainSize ?? '–')],
    ['Band in force on the cast date', band ? `${heat.grade} version ${band.version} (${band.kind}, from ${band.effectiveFrom})` : 'none'],
    ['Heat verdict', review.verdict ? <><Tag kind={review.verdict.verdict === 'pass' ? 'good' : review.verdict.verdict === 'fail' ? 'bad' : 'odd'}>{review.verdict.verdict}</Tag> {review.verdict.explanation}</> : 'not judged'],
  ];
  type Conf = (typeof conformance)[number];
  return (
    <>
      <h1>Heat sheet: {heat.heatNumber}</h1>
      <div class="card">
        <dl class="facts">
          {facts.map(([k, v]) => (
            <>
              <dt>{k}</dt>
              <dd>{v}</dd>
            </>
          ))}
        </dl>
      </div>
      <Caution>
        The predicted curve and the checks point at what to look at; they do not replace the end-quench test. Whether this heat is accepted follows the purchase specification and the decision of qualified personnel.
      </Caution>

      <h2>Certificate chemistry against the grade limits</h2>
      {chemCheck ? (
        <p>
          <Tag kind={chemCheck.verdict === 'pass' ? 'good' : chemCheck.verdict === 'fail' ? 'bad' : 'odd'}>{chemCheck.verdict}</Tag> {chemCheck.summary}
        </p>
      ) : (
        <p class="notice">The grade has no chemistry limits on file.</p>
      )}
      {kit.chart({
        id: 'chemistry',
        title: `Chemistry of ${heat.heatNumber} within the grade limits`,
        note: 'Each element placed on its own range: 0 is the minimum (or zero when only a maximum is set), 1 the maximum.',
        spec: chemistrySpec(chemistryPositions(chemCheck?.values.rows ?? [])),
        table: {
          columns: [
            { key: 'element', label: 'Element' },
            { key: 'value', label: 'Reported %', numeric: true },
            { key: 'min', label: 'Min %', numeric: true },
            { key: 'max', label: 'Max %', numeric: true },
            { key: 'status', label: 'Status', cell: (r: { status: string }) => <Tag kind={r.status === 'inside' ? 'good' : r.status === 'outside' ? 'bad' : 'none'}>{r.status}</Tag> },
          ],
          rows: chemRows,
        },
      })}

      <h2>End-quench curves against the band</h2>
      {band ? null : <p class="notice">No band of {heat.grade} was in force on {heat.castDate}: the curves are shown without limits.</p>}
      {kit.chart({
        id: 'curves',
        title: `End-quench curves of ${heat.heatNumber}`,
        note: (
          <>
            Shaded blue: the band; dashed blue: its limits. Coloured lines: the tests of the current certificate and re-tests; a triangle marks a reading outside the band. Purple, dotted: the predicted curve
            {prediction?.points.some((p) => p.lower !== null) ? ` with its ${Math.round((prediction?.level ?? 0.95) * 100)}% prediction interval` : ''}.
          </>
        ),
        spec: curvesSpec(bandSummaryRows(band), curveRows, predicted, { title: `End-quench curves of ${heat.heatNumber}`, groupTitle: 'Test' }),
        table: {
          columns: [
            { key: 'group', label: 'Test' },
            { key: 'label', label: 'Distance' },
            { key: 'mm', label: 'mm', numeric: true },
            { key: 'hrc', label: 'HRC', numeric: true },
            { key: 'outside', label: 'Outside band' },
          ],
          rows: curveRows,
        },
      })}
      {band ? (
        <>
          <h3>Conformance of each test</h3>
          {kit.table('conformance', 'Test conformance', {
            columns: [
              { key: 'test', label: 'Test' },
              { key: 'source', label: 'Source' },
              { key: 'lot', label: 'Lot' },
              { key: 'verdict', label: 'Verdict', cell: (r: Conf) => <Tag kind={r.verdict === 'pass' ? 'good' : r.verdict === 'fail' ? 'bad' : 'odd'}>{r.verdict}</Tag> },
              { key: 'minMargin', label: 'Smallest margin HRC', numeric: true, digits: 1 },
              { key: 'failing', label: 'Failing points' },
            ],
            rows: conformance,
          })}
        </>
      ) : null}

      <h2>Predicted curve</h2>
      {prediction ? (
        <>
          <p>
            {prediction.answeredBy.type === 'plant_model'
              ? `From the plant's chemistry model of ${prediction.answeredBy.grade}${prediction.answeredBy.mill ? ` for ${prediction.answeredBy.mill}` : ''} (version ${prediction.answeredBy.version}, ${prediction.answeredBy.heatCount} heats).`
              : `From the published predictor (${prediction.answeredBy.methods.join(', ')}): ${prediction.answeredBy.reason}.`}
            {prediction.wholeBand ? ` Chance that a curve of this chemistry meets every band point: ${simulatedProbabilityText(prediction.wholeBand.probability, prediction.wholeBand.draws)} (Monte Carlo over ${prediction.wholeBand.draws} simulated curves; the bounds are those of the simulation size, Clopper–Pearson). An estimate to support, not replace, the end-quench test.` : ''}
          </p>
          {prediction.notes.length ? (
            <ul>
              {prediction.notes.map((n) => (
                <li>{n}</li>
              ))}
            </ul>
          ) : null}
          {kit.table('predicted', `Predicted curve of ${heat.heatNumber}`, {
            columns: [
              { key: 'label', label: 'Distance' },
              { key: 'hrc', label: 'Predicted HRC', numeric: true, digits: 1 },
              { key: 'lower', label: 'Interval low', numeric: true, digits: 1 },
              { key: 'upper', label: 'Interval high', numeric: true, digits: 1 },
              { key: 'minHrc', label: 'Band min', numeric: true },
              { key: 'maxHrc', label: 'Band max', numeric: true },
              { key: 'probabilityInBand', label: 'P(inside) at this point', numeric: true, digits: 3 },
              { key: 'method', label: 'Method' },
            ],
            rows: prediction.points,
          })}
        </>
      ) : (
        <p class="notice">No prediction: {review.predictionProblem}</p>
      )}

      <h2>Certificate checks</h2>
      <CheckList checks={checks} />
      {review.notes.length ? (
        <ul>
          {review.notes.map((n) => (
            <li>{n}</li>
          ))}
        </ul>
      ) : null}

      <h2>Chart signals on the mill's series at this heat</h2>
      <p class="note">
        The whole curve is judged as the drift alerts judge it: a level statistic (is the curve as a whole harder or softer than its reference?) and a
        shape statistic, with limits designed for a stated false-alarm rate. A level signal stays on from where a drift began until the series comes
        back, so it may have started at an earlier heat: the Trends page shows where. A signal supports, and does not replace, the receiving test.
      </p>
      <p id="curve-monitoring">
        {review.curveMonitoring.status === 'monitoring'
          ? `At this heat: level ${review.curveMonitoring.level ? `${review.curveMonitoring.level.ewma.toFixed(2)} against ±${review.curveMonitoring.level.limit.toFixed(2)}` : '–'}` +
            (review.curveMonitoring.shape ? `, shape T² ${review.curveMonitoring.shape.t2.toFixed(1)} against ${review.curveMonitoring.shape.ucl.toFixed(1)}` : '') +
            (review.curveMonitoring.episodeFrom ? `; the signal episode began at heat ${review.curveMonitoring.episodeFrom}.` : '.')
          : `Curve-level monitoring: ${review.curveMonitoring.reason ?? review.curveMonitoring.status}.`}{' '}
        {review.curveMonitoring.statements.join(' ')}
      </p>
      {kit.table('signals', `Chart signals of ${heat.heatNumber}`, {
        columns: [
          { key: 'label', label: 'Distance' },
          { key: 'kind', label: 'Chart', cell: (s: HeatSignal) => <a href={`/trends${query({ grade: heat.grade, mill: heat.mill, distance: s.distanceMm, chart: s.kind })}`}>{s.kind}</a> },
          { key: 'rule', label: 'Signal', cell: (s: HeatSignal) => shortRule(s.rule) },
          { key: 'description', label: 'What it means', wrap: true },
          { key: 'limitsFrom', label: 'Limits from' },
        ],
        rows: review.signals,
      })}

      <h2>Lots</h2>
      {kit.table('lots', `Lots of ${heat.heatNumber}`, {
        columns: [
          { key: 'lotNumber', label: 'Lot' },
          { key: 'receivedDate', label: 'Received' },
          { key: 'massKg', label: 'Mass kg', numeric: true },
          { key: 'barDiameterMm', label: 'Bar Ø mm', numeric: true },
          { key: 'purchaseOrder', label: 'Purchase order' },
        ],
        rows: heat.lots,
      })}

      <h2>Certificate revisions</h2>
      {kit.table('revisions', `Certificate revisions of ${heat.heatNumber}`, {
        columns: [
          { key: 'revision', label: 'Revision', numeric: true },
          { key: 'certificateNumber', label: 'Certificate' },
          { key: 'certificateDate', label: 'Dated' },
          { key: 'grainSize', label: 'Grain size', numeric: true },
          { key: 'createdAt', label: 'Received by us' },
        ],
        rows: heat.revisions,
      })}

      <h2>Alerts on this heat</h2>
      {kit.table('alerts', `Alerts on ${heat.heatNumber}`, {
        columns: [
          { key: 'id', label: 'Alert', cell: (a: { id: number }) => <a href={`/alerts#alert-${a.id}`}>#{a.id}</a> },
          { key: 'severity', label: 'Severity' },
          { key: 'status', label: 'Status' },
          { key: 'title', label: 'What', wrap: true },
          { key: 'createdAt', label: 'Raised' },
        ],
        rows: alerts.alerts,
      })}
    </>
  );
}
