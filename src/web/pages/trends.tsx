// Trends: individuals, EWMA and CUSUM charts at a distance and Hotelling T² on the whole curve, with
// their limits, the baseline window shaded, signals labelled with their rule, and a form to freeze a
// baseline from a chosen window.
import type { Context, Hono } from 'hono';
import type { Child } from 'hono/jsx';
import type { Db } from '../../db/connection.ts';
import { controlChart, type ChartKind, type ChartParameters, type ControlChart } from '../../analysis/controlCharts.ts';
import { baselinesOnFile, freezeBaselines } from '../../analysis/baselines.ts';
import { AnalysisError } from '../../analysis/errors.ts';
import { seriesMonitoringView } from '../../analysis/monitoringView.ts';
import { curveCharts } from '../../analysis/curveCharts.ts';
import { monitoringSettingsFor } from '../../analysis/monitoringSettings.ts';
import { Caution } from '../components/caution.tsx';
import { Problem } from '../components/bits.tsx';
import { SeriesForm } from '../components/seriesForm.tsx';
import { readSeriesChoice, type SeriesChoice } from '../data/seriesPicker.ts';
import { page, type PageKit } from '../page.tsx';
import { fmt, mmLabel, optionalDate, optionalNumber, ParamError, query } from '../params.ts';
import { pageControlChartSpec, shortRule } from '../specs/controlChart.ts';

const KINDS: Array<{ kind: ChartKind; title: string; explain: (p: ControlChart['parameters']) => string }> = [
  {
    kind: 'individuals',
    title: 'Individuals',
    explain: (p) =>
      `Each heat’s hardness with the centre line and ${p.L}-sigma limits (sigma from the average moving range). ` +
      (p.rules.length ? 'Points breaking a run rule carry a label in words (hover for the rule).' : 'The alerts run no run rules on this grade, so none are drawn here.'),
  },
  { kind: 'ewma', title: 'EWMA', explain: (p) => `Exponentially weighted moving average (λ = ${p.lambda}, limits at ${p.L} sigma) with its exact time-varying limits: slow drifts show here first.` },
  { kind: 'cusum', title: 'CUSUM', explain: (p) => `Tabular CUSUM in sigma units (k = ${p.k}, h = ${p.h}): the upper sum climbs when the mean moves up, the lower (drawn below zero) when it moves down.` },
  { kind: 't2', title: 'Hotelling T²', explain: (p) => `The whole curve at once (false-alarm probability ${p.alpha} per heat): T² grows when a curve departs from the usual shape or level, even if no single distance does.` },
];

/** The looser view of the page: every run rule and the moving-range signal, more than the alerts raise. */
const LOOSER: ChartParameters = { rules: [1, 2, 3, 4, 5, 6, 7, 8], movingRange: true };

function originText(chart: ControlChart): string {
  const o = chart.limitsFrom;
  if (o.type === 'frozen_baseline') return `Limits from frozen baseline #${o.baselineId}: heats cast ${o.window.from} to ${o.window.to}, frozen by ${o.createdBy ?? 'unknown'}${o.reason ? ` (“${o.reason}”)` : ''}. Shaded: the baseline window.`;
  return `Limits from phase I on the heats shown (trial limits, points beyond them set aside${o.excludedHeats.length ? `: ${o.excludedHeats.length} heat(s)` : ''}). No baseline is frozen for this series.`;
}

function chartBlock(kit: PageKit, chart: ControlChart, title: string, explain: string, id: string = chart.kind, names?: { title: string; subtitle: string; y: string }): Child {
  const rules = new Map<number, string[]>();
  for (const s of chart.signals) for (const i of s.points) rules.set(i, [...(rules.get(i) ?? []), shortRule(s.rule)]);
  const rows = chart.points.map((p) => ({
    index: p.index + 1,
    heatId: p.heatId,
    heat: p.heatNumber,
    castDate: p.castDate,
    value: p.value,
    plotted: p.plotted,
    lower: p.plottedLower ?? null,
    lcl: p.lcl,
    ucl: p.ucl,
    phase: p.phase,
    signals: (rules.get(p.index) ?? []).join(' '),
  }));
  return kit.chart({
    id,
    title: `${title}: ${chart.mill} ${chart.grade}${chart.distanceMm === null ? ', whole curve' : `, ${chart.label ?? mmLabel(chart.distanceMm ?? 0)}`}`,
    note: (
      <>
        {explain} {id.startsWith('curve-') ? null : <span class="origin">{originText(chart)}</span>}
      </>
    ),
    spec: pageControlChartSpec(chart, 240, names),
    table: {
      columns: [
        { key: 'index', label: '#', numeric: true },
        { key: 'heat', label: 'Heat', cell: (r: (typeof rows)[number]) => <a href={`/heats/${r.heatId}`}>{r.heat}</a> },
        { key: 'castDate', label: 'Cast' },
        { key: 'value', label: chart.kind === 't2' ? 'T²' : 'HRC', numeric: true, digits: 2 },
        { key: 'plotted', label: chart.kind === 'cusum' ? 'C+ (σ)' : chart.kind === 'ewma' ? 'EWMA' : 'Plotted', numeric: true, digits: 2 },
        ...(chart.kind === 'cusum' ? [{ key: 'lower', label: 'C− (σ, negated)', numeric: true, digits: 2 }] : []),
        { key: 'lcl', label: 'LCL', numeric: true, digits: 2 },
        { key: 'ucl', label: 'UCL', numeric: true, digits: 2 },
        { key: 'phase', label: 'Phase' },
        { key: 'signals', label: 'Signals' },
      ],
      rows,
    },
    openUpTo: 0,
  });
}

function BaselineForm(props: { choice: SeriesChoice; from: string; to: string }) {
  const c = props.choice;
  return (
    <form class="filters stack" method="post" action="/trends/baseline" id="freeze-baseline">
      <input type="hidden" name="grade" value={c.grade} />
      <input type="hidden" name="mill" value={c.mill} />
      <input type="hidden" name="distance" value={c.distanceMm === null ? '' : String(c.distanceMm)} />
      <input type="hidden" name="viewFrom" value={c.from ?? ''} />
      <input type="hidden" name="viewTo" value={c.to ?? ''} />
      <label>
        Baseline cast from
        <input type="date" name="from" value={props.from} required />
      </label>
      <label>
        Baseline cast to
        <input type="date" name="to" value={props.to} required />
      </label>
      <label>
        Distances
        <select name="scope">
          <option value="band">every band distance</option>
          <option value="one">only {c.distances.find((d) => d.mm === c.distanceMm)?.label ?? 'this distance'}</option>
        </select>
      </label>
      <label>
        Why (kept with the baseline)
        <input type="text" name="reason" required maxlength={500} placeholder="e.g. stable run after mill audit" />
      </label>
      <button type="submit" class="primary">
        Freeze baseline
      </button>
    </form>
  );
}

export function trendsPage(app: Hono<any>, db: Db) {
  page(app, '/trends', async (c, kit) => {
    let choice: SeriesChoice;
    try {
      choice = await readSeriesChoice(c, db);
    } catch (error) {
      if (error instanceof ParamError) return { title: 'Trends', section: 'trends', status: 400, body: <Problem message={error.message} /> };
      throw error;
    }
    const done = c.req.query('done');
    const looser = c.req.query('view') === 'looser';
    const blocks: Child[] = [];
    const charts: ControlChart[] = [];
    for (const k of KINDS) {
      if (k.kind !== 't2' && choice.distanceMm === null) continue;
      try {
        const chart = await controlChart(db, {
          kind: k.kind,
          grade: choice.grade,
          mill: choice.mill,
          distanceMm: choice.distanceMm ?? undefined,
          from: choice.from,
          to: choice.to,
          parameters: looser && k.kind === 'individuals' ? LOOSER : undefined,
        });
        charts.push(chart);
        blocks.push(
          <>
            <h2>{k.title}</h2>
            {chartBlock(kit, chart, k.title, k.explain(chart.parameters))}
          </>,
        );
      } catch (error) {
        if (!(error instanceof AnalysisError)) throw error;
        blocks.push(
          <>
            <h2>{k.title}</h2>
            <p class="notice">No {k.title} chart: {error.message}.</p>
          </>,
        );
      }
    }
    const monitoring = await seriesMonitoringView(db, { grade: choice.grade, mill: choice.mill });
    const curve = curveCharts(monitoring);
    const settings = await monitoringSettingsFor(db, choice.grade);
    const perDistanceAlerts = settings.ewma.enabled || settings.cusum.enabled || settings.t2.enabled || settings.nelson.enabled;
    const curveBlock = (
      <section id="whole-curve">
        <h2>Whole curve: what the drift alerts judge</h2>
        <p>
          {monitoring.status === 'monitoring'
            ? `Monitoring against ${monitoring.reference?.origin?.type === 'frozen_baseline' ? `frozen baseline #${monitoring.reference.origin.baselineId}` : `the first ${monitoring.reference?.heats ?? ''} complete curves of the series`}` +
              (monitoring.reference && 'from' in monitoring.reference ? ` (cast ${monitoring.reference.from} to ${monitoring.reference.to})` : '') +
              `, over ${monitoring.distances.length} distances.`
            : `Not monitored yet: ${monitoring.reason}.`}
        </p>
        {monitoring.reference && 'lag1Autocorrelation' in monitoring.reference ? (
          <p id="autocorrelation">
            Lag-1 autocorrelation of the curve level over the reference: <strong>{fmt(monitoring.reference.lag1Autocorrelation ?? null, 2)}</strong>
            {monitoring.reference.autocorrelationTreated ? ' (material: the level chart runs on the residuals of an AR(1) fit).' : ' (below the threshold: charted as it is).'}
          </p>
        ) : null}
        {monitoring.statements.length ? (
          <ul class="statements">
            {monitoring.statements.map((t) => (
              <li>{t}</li>
            ))}
          </ul>
        ) : null}
        {curve ? (
          <>
            {chartBlock(kit, curve.level, 'Curve level', 'EWMA of the mean standardised deviation of the curve (each distance against its reference mean and SD): above the upper limit the curve is harder as a whole, below the lower softer.', 'curve-level', {
              title: `Curve level: ${choice.mill} ${choice.grade}, heats after the reference`,
              subtitle: `Designed limit ±${fmt(curve.level.ucl, 2)} (L = ${fmt(curve.level.parameters.L, 2)}, λ = ${curve.level.parameters.lambda})`,
              y: 'Level EWMA (reference SDs)',
            })}
            {curve.shape
              ? chartBlock(kit, curve.shape, 'Curve shape', 'T² of what is left of the curve once its level is taken out: above the limit the curve has a form its reference did not show.', 'curve-shape', {
                  title: `Curve shape: ${choice.mill} ${choice.grade}, heats after the reference`,
                  subtitle: `Designed limit ${fmt(curve.shape.ucl, 1)} (false-alarm probability ${fmt(curve.shape.parameters.alpha * 1000, 2)} per thousand heats)`,
                  y: 'Shape T²',
                })
              : null}
          </>
        ) : null}
        {monitoring.episodes.length
          ? kit.table('episodes', `Signal episodes ${choice.mill} ${choice.grade}`, {
              columns: [
                { key: 'what', label: 'Signal' },
                { key: 'from', label: 'From heat' },
                { key: 'castDate', label: 'Cast' },
                { key: 'heats', label: 'Heats signalling', numeric: true },
                { key: 'last', label: 'Last heat' },
              ],
              rows: monitoring.episodes.map((e) => ({ ...e, what: shortRule(e.cause === 'shape' ? 'curve_shape' : e.cause === 'level:high' ? 'curve_level_high' : 'curve_level_low') })),
            })
          : null}
        <p>
          <a href={`/monitoring${query({ grade: choice.grade })}`}>Monitoring settings of {choice.grade}</a>
        </p>
      </section>
    );
    const signals = charts.flatMap((ch) => ch.signals.map((s) => ({ chart: ch.kind, rule: s.rule, short: shortRule(s.rule), description: s.description, count: s.points.length, heats: s.heats.join(', ') })));
    const baselines = await baselinesOnFile(db, { grade: choice.grade, mill: choice.mill });
    const first = charts[0]?.points;
    const defaultFrom = choice.from ?? first?.[0]?.castDate ?? '';
    const defaultTo = first && first.length ? first[Math.min(first.length - 1, Math.max(19, Math.floor(first.length / 3)))].castDate : (choice.to ?? '');
    return {
      title: 'Trends',
      section: 'trends',
      body: (
        <>
          <h1>Trends</h1>
          <p class="lead">Is the mill's supply of this grade stable? Control charts of one mill's series in cast order.</p>
          <SeriesForm action="/trends" choice={choice} />
          {done ? (
            <p class="notice" role="status" id="done">
              {done}
            </p>
          ) : null}
          <p class="note" id="chart-view">
            {looser ? (
              <>
                <strong>Looser view:</strong> the individuals chart shows every run rule and the moving-range signal, more than the alert rules raise (expect signals on a process in control).{' '}
                <a href={`/trends${query({ grade: choice.grade, mill: choice.mill, distance: choice.distanceMm ?? undefined, from: choice.from, to: choice.to })}`}>Back to the alerts’ view</a>.
              </>
            ) : (
              <>
                The charts use the settings the alert rules run with for this grade, so a signal here is one the alerts raise.{' '}
                <a href={`/trends${query({ grade: choice.grade, mill: choice.mill, distance: choice.distanceMm ?? undefined, from: choice.from, to: choice.to, view: 'looser' })}`}>Looser view (every run rule)</a>.
              </>
            )}
          </p>
          <Caution>A signal says the process changed, not that a heat is bad: talk with the mill and look at the heat sheet. Acceptance follows the purchase specification and qualified personnel.</Caution>
          {curveBlock}
          <h2>Per distance</h2>
          <p class="note" id="per-distance-view">
            {perDistanceAlerts
              ? 'Per-distance charts with the settings the alert rules use for this grade.'
              : 'Explanation: which distances move. The drift alerts judge the whole curve (above); the per-distance rules are off for this grade, so a signal drawn here is a looser view, not an alert.'}
          </p>
          {blocks}
          <h2>Signals</h2>
          {kit.table('signals', `Signals ${choice.mill} ${choice.grade}`, {
            columns: [
              { key: 'chart', label: 'Chart' },
              { key: 'short', label: 'Label' },
              { key: 'description', label: 'Meaning', wrap: true },
              { key: 'count', label: 'Points', numeric: true },
              { key: 'heats', label: 'Heats', wrap: true },
            ],
            rows: signals,
          })}
          <h2>Freeze a baseline</h2>
          <p>
            Pick a window of heats that ran as the mill should; its limits are estimated (phase I, points beyond the trial limits set aside) and frozen, and later heats are judged against them. A new baseline retires
            the previous one of the same distance.
          </p>
          <BaselineForm choice={choice} from={defaultFrom} to={defaultTo} />
          <h3>Baselines on file</h3>
          {kit.table('baselines', `Baselines ${choice.mill} ${choice.grade}`, {
            columns: [
              { key: 'id', label: 'Baseline', numeric: true },
              { key: 'distanceMm', label: 'mm', numeric: true },
              { key: 'source', label: 'Source' },
              { key: 'windowFrom', label: 'From' },
              { key: 'windowTo', label: 'To' },
              { key: 'centre', label: 'Centre HRC', numeric: true, digits: 2 },
              { key: 'sigma', label: 'Sigma', numeric: true, digits: 3 },
              { key: 'reason', label: 'Why', wrap: true },
              { key: 'createdBy', label: 'By' },
              { key: 'createdAt', label: 'Frozen' },
            ],
            rows: baselines.map((b) => {
              const l = b.limits as { center?: number; centre?: number; sigma?: number };
              return { ...b, centre: l.center ?? l.centre ?? null, sigma: l.sigma ?? null, createdAt: b.createdAt.slice(0, 16).replace('T', ' ') };
            }),
          })}
        </>
      ),
    };
  });

  app.post('/trends/baseline', async (c: Context<any>) => {
    const form = await c.req.parseBody();
    const text = (k: string) => (typeof form[k] === 'string' ? (form[k] as string).trim() : '');
    const view = { grade: text('grade'), mill: text('mill'), distance: text('distance'), from: text('viewFrom'), to: text('viewTo') };
    const back = (message: string) => c.redirect(`/trends${query({ ...view, done: message })}#done`, 303);
    try {
      const from = optionalDate(text('from'), 'The baseline start');
      const to = optionalDate(text('to'), 'The baseline end');
      const distance = optionalNumber(text('distance'), 'The distance', { min: 0 });
      if (!from || !to) throw new ParamError('The baseline needs a start and an end date.');
      if (!text('reason')) throw new ParamError('Say why this window is a fair baseline.');
      const by = (c.get('auth') as { name?: string } | undefined)?.name ?? 'web';
      const result = await freezeBaselines(db, {
        grade: view.grade,
        mill: view.mill,
        from,
        to,
        reason: text('reason').slice(0, 500),
        createdBy: by,
        distancesMm: text('scope') === 'one' && distance !== undefined ? [distance] : undefined,
      });
      const skipped = result.skipped.length ? ` Not frozen: ${result.skipped.map((s) => `${fmt(s.distanceMm, 1)} mm (${s.reason})`).join('; ')}.` : '';
      // What the window means for the curve-level scheme (docs/monitoring.md): refused below the minimum, wider limits below the advised size.
      const curve = (await monitoringSettingsFor(db, view.grade)).curve;
      const heats = Math.max(...result.baselines.map((b) => ((b.limits as { heats?: string[] }).heats ?? []).length));
      const size =
        heats < curve.minReferenceHeats
          ? ` Warning: ${heats} heats in the window; the whole-curve drift alerts need at least ${curve.minReferenceHeats} and will not run on this baseline.`
          : heats < curve.referenceHeats
            ? ` Note: ${heats} heats in the window (${curve.referenceHeats} advised): the whole-curve limits are widened for it, and a small drift is found later.`
            : '';
      return back(`Baseline frozen for ${result.baselines.length} distance(s) from heats cast ${from} to ${to}.${skipped}${size}`);
    } catch (error) {
      if (error instanceof ParamError || error instanceof AnalysisError) return back(`Nothing frozen: ${error.message}`);
      throw error;
    }
  });
}
