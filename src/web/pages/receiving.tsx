// Receiving: how far each mill's laboratory agrees with ours, how often to re-test its lots, and the lots
// due for a re-test now. The plan is a recommendation with its reasons (src/analysis/skipLot.ts, after
// ISO 2859-3); the agreement study is Bland & Altman (1986) with a chart of the pair bias.
import type { Hono } from 'hono';
import type { Db } from '../../db/connection.ts';
import { listGrades, listMills } from '../../db/referenceData.ts';
import { DEFAULT_AGREEMENT_SETTINGS, type LabAgreement } from '../../analysis/receivingAgreement.ts';
import { receivingPlans, type ReceivingPlan } from '../../analysis/receivingPlan.ts';
import { plantRepeatability } from '../../analysis/receivingRepeatability.ts';
import { Caution } from '../components/caution.tsx';
import { Select, Tag } from '../components/bits.tsx';
import { page, type PageKit } from '../page.tsx';
import { daysBefore, fmt, mmLabel, optionalDate, optionalNumber, optionalText, query } from '../params.ts';
import { todayIso } from '../../analysis/seriesData.ts';
import { agreementPlotSpec, biasChartSpec, type BiasChartRow } from '../specs/receiving.ts';

const planWords = (p: ReceivingPlan) => (p.decision.every === 1 ? 'every lot' : `1 lot in ${p.decision.every}`);

function chartState(a: LabAgreement): { kind: 'good' | 'bad' | 'none'; text: string } {
  if (!a.chart) return { kind: 'none', text: 'too few pairs' };
  const last = a.chart.points[a.chart.points.length - 1];
  if (a.chart.firstSignal) return { kind: 'bad', text: `${a.chart.firstSignal.side === 'high' ? 'reads high' : 'reads low'} since ${a.chart.firstSignal.heatNumber}${last?.signal ? '' : ' (back inside now)'}` };
  return { kind: 'good', text: 'in agreement' };
}

function detail(plan: ReceivingPlan, kit: PageKit) {
  const a = plan.agreement;
  const chart = a.chart;
  const o = a.overall;
  const rows: BiasChartRow[] = chart
    ? chart.points.map((p, i) => ({ index: i + 1, heatNumber: p.heatNumber, castDate: p.castDate, bias: p.bias, ewma: p.z, ucl: p.ucl, lcl: p.lcl, centre: chart.target, signal: i === chart.firstSignal?.index ? 'moved' : '', reference: i < chart.referencePairs ? 'reference pairs' : 'judged pairs' }))
    : [];
  const splitAt = chart?.firstSignal ? chart.points[chart.firstSignal.index]!.castDate : null;
  const points = a.pairList.flatMap((p) =>
    p.differences.map((d) => ({ level: (d.mill + d.plant) / 2, difference: d.difference, heatNumber: p.heatNumber, distance: mmLabel(d.distanceMm), period: splitAt && p.castDate >= splitAt ? `from ${splitAt}` : splitAt ? `before ${splitAt}` : 'all pairs' })),
  );
  const perDistance = a.byDistance.map((d) => ({ distance: mmLabel(d.distanceMm), n: d.result.n, bias: d.result.bias, lo: d.result.biasInterval.lower, hi: d.result.biasInterval.upper, lower: d.result.lowerLimit, upper: d.result.upperLimit, ownSd: d.result.ownSd }));
  const levels = a.byLevel.bins.map((b) => ({ level: `${b.fromHrc}–${b.toHrc} HRC`, n: b.n, bias: b.bias, sd: b.sd }));
  return (
    <section id="agreement-detail">
      <h2>
        {plan.mill} {plan.grade}: agreement with our laboratory
      </h2>
      {o ? (
        <p>
          Over {o.n} heats tested by both laboratories the mill reads <strong>{fmt(o.bias, 2)} HRC</strong> {o.bias >= 0 ? 'above' : 'below'} ours on average (95 % interval {fmt(o.biasInterval.lower, 2)} to {fmt(o.biasInterval.upper, 2)}); the mean difference of one heat's curve lies between{' '}
          <strong>
            {fmt(o.lowerLimit, 2)} and {fmt(o.upperLimit, 2)} HRC
          </strong>{' '}
          in 95 % of heats (limits of agreement, Bland &amp; Altman 1986).
          {a.plantRepeatabilitySd !== null ? ` Our own repeatability (${fmt(a.plantRepeatabilitySd, 2)} HRC per reading) leaves ${fmt(o.ownSd, 2)} HRC of the scatter to the mill's side.` : ''}
          {a.byLevel.regression ? ` The difference changes by ${fmt(a.byLevel.regression.slope, 3)} HRC per HRC of level (a guide only: readings of one curve are not independent).` : ''}
        </p>
      ) : (
        <p>Fewer than 3 heats were tested by both laboratories.</p>
      )}
      {chart ? (
        <div class="grid2">
          {kit.chart({
            id: 'bias-chart',
            openUpTo: 0,
            title: `Pair bias ${plan.mill} ${plan.grade}`,
            note: (
              <>
                Circles: the {chart.referencePairs} reference pairs that set the established bias ({fmt(chart.target, 2)} HRC) and σ of one pair ({fmt(chart.sigma, 2)} HRC); triangles: pairs judged against them. Amber: EWMA (λ {chart.lambda}); dashed: its limits (L {fmt(chart.L, 2)}), designed for at most one false alarm in three years at {fmt(chart.pairsPerYear, 1)} pairs a year (in-control ARL {fmt(chart.targetArl, 0)} pairs, widened for the estimated reference). A shift of one σ is found in about {fmt(chart.arlAtShift.oneSigma, 0)} pairs, two σ in {fmt(chart.arlAtShift.twoSigma, 0)}.
              </>
            ),
            spec: biasChartSpec(rows),
            table: { columns: [{ key: 'heatNumber', label: 'Heat' }, { key: 'castDate', label: 'Cast' }, { key: 'bias', label: 'Mill − plant', numeric: true, digits: 2 }, { key: 'ewma', label: 'EWMA', numeric: true, digits: 2 }, { key: 'lcl', label: 'LCL', numeric: true, digits: 2 }, { key: 'ucl', label: 'UCL', numeric: true, digits: 2 }, { key: 'reference', label: 'Window' }], rows },
          })}
          {o
            ? kit.chart({
                id: 'agreement-plot',
                title: `Agreement plot ${plan.mill} ${plan.grade}`,
                note: 'Every reading both laboratories made: the difference against the level. Solid: bias; dashed: limits of agreement of the mean difference per heat (single readings scatter wider).',
                spec: agreementPlotSpec(points, { bias: o.bias, lower: o.lowerLimit, upper: o.upperLimit }),
                table: { columns: [{ key: 'heatNumber', label: 'Heat' }, { key: 'distance', label: 'Distance' }, { key: 'level', label: 'Level', numeric: true, digits: 2 }, { key: 'difference', label: 'Mill − plant', numeric: true, digits: 2 }, { key: 'period', label: 'Period' }], rows: points },
              })
            : null}
        </div>
      ) : (
        <p class="empty">{a.chartNote}</p>
      )}
      <details class="more">
        <summary>Per distance ({perDistance.length}) and by hardness level ({levels.length})</summary>
        {kit.table('per-distance', `Agreement ${plan.mill} ${plan.grade} per distance`, {
          columns: [
            { key: 'distance', label: 'Distance' },
            { key: 'n', label: 'Heats', numeric: true },
            { key: 'bias', label: 'Bias', numeric: true, digits: 2 },
            { key: 'lo', label: '95 % from', numeric: true, digits: 2 },
            { key: 'hi', label: '95 % to', numeric: true, digits: 2 },
            { key: 'lower', label: 'Lower limit of agreement', numeric: true, digits: 2 },
            { key: 'upper', label: 'Upper limit of agreement', numeric: true, digits: 2 },
            { key: 'ownSd', label: "Mill's own SD", numeric: true, digits: 2 },
          ],
          rows: perDistance,
        })}
        {kit.table('by-level', `Agreement ${plan.mill} ${plan.grade} by level`, {
          columns: [
            { key: 'level', label: 'Level' },
            { key: 'n', label: 'Readings', numeric: true },
            { key: 'bias', label: 'Mean difference', numeric: true, digits: 2 },
            { key: 'sd', label: 'SD', numeric: true, digits: 2 },
          ],
          rows: levels,
        })}
      </details>
    </section>
  );
}

export function receivingPage(app: Hono<any>, db: Db) {
  page(app, '/receiving', async (c, kit) => {
    const [grades, mills] = await Promise.all([listGrades(db), listMills(db)]);
    const grade = grades.find((g) => g.code === optionalText(c.req.query('grade')))?.code;
    const mill = mills.find((m) => m.code === optionalText(c.req.query('mill')))?.code;
    const asOf = optionalDate(c.req.query('asOf'), 'The as-of date');
    // Our repeatability per reading: as entered (e.g. from a gauge study), else from our repeat tests.
    const entered = optionalNumber(c.req.query('repeatability'), 'Our repeatability', { min: 0, max: 5 });
    // The last five years of repeat tests (the plans load the same span).
    const repeatability = await plantRepeatability(db, { from: daysBefore(asOf ?? todayIso(), 1826) });
    const sd = entered ?? repeatability.sd;
    const { asOf: used, plans } = await receivingPlans(db, { grade, mill, asOf }, undefined, { ...DEFAULT_AGREEMENT_SETTINGS, plantRepeatabilitySd: sd });
    const summary = plans.map((p) => {
      const o = p.agreement.overall;
      const state = chartState(p.agreement);
      return {
        mill: p.mill,
        grade: p.grade,
        pairs: p.agreement.pairs,
        bias: o?.bias ?? null,
        limits: o ? `${fmt(o.lowerLimit, 1)} to ${fmt(o.upperLimit, 1)}` : '–',
        agreement: state.text,
        kind: state.kind,
        ppk: p.evidence.ppk,
        inARow: p.decision.acceptedInARow,
        plan: planWords(p),
        due: p.due.length,
        reasons: p.decision.reasons.join(' '),
      };
    });
    const due = plans.flatMap((p) => p.due.map((d) => ({ mill: p.mill, grade: p.grade, heat: d.heatNumber, heatId: d.heatId, lot: d.lotNumber, received: d.receivedDate, plan: planWords(p) })));
    // The detail: the series asked for, else the first whose laboratory moved.
    const chosen = (grade && mill ? plans.find((p) => p.grade === grade && p.mill === mill) : undefined) ?? plans.find((p) => p.agreement.chart?.firstSignal);
    const body = (
      <>
        <h1>Receiving</h1>
        <p class="lede">
          How far each mill's laboratory agrees with ours, how often to re-test its lots, and which lots are due now. Plans as of <strong>{used ?? '–'}</strong> (the newest arrival on file unless a date is given).
        </p>
        <Caution>A re-test plan and an agreement study support the receiving test; they do not replace it. Acceptance follows the purchase specification and the judgement of qualified personnel.</Caution>
        <form method="get" action="/receiving" class="card">
          <div class="filters">
            <Select name="grade" label="Grade" value={grade} any="all grades" options={grades.map((g) => ({ value: g.code, label: g.code }))} />
            <Select name="mill" label="Mill" value={mill} any="all mills" options={mills.map((m) => ({ value: m.code, label: m.code }))} />
            <label>
              As of
              <input type="date" name="asOf" value={asOf ?? ''} />
            </label>
            <label>
              Our repeatability, HRC (blank: from our repeat tests)
              <input type="number" name="repeatability" min="0" max="5" step="0.01" value={entered === undefined ? '' : String(entered)} />
            </label>
            <button type="submit" class="primary">
              Show
            </button>
          </div>
        </form>
        <h2>Plan per mill and grade</h2>
        {kit.table('plans', 'Receiving plans', {
          columns: [
            { key: 'mill', label: 'Mill' },
            { key: 'grade', label: 'Grade', cell: (r: (typeof summary)[number]) => <a href={`/receiving${query({ grade: r.grade, mill: r.mill, asOf, repeatability: entered })}`}>{r.grade}</a> },
            { key: 'pairs', label: 'Heats tested by both', numeric: true },
            { key: 'bias', label: 'Mill − plant (HRC)', numeric: true, digits: 2 },
            { key: 'limits', label: 'Limits of agreement' },
            { key: 'agreement', label: 'Laboratory', cell: (r: (typeof summary)[number]) => <Tag kind={r.kind}>{r.agreement}</Tag> },
            { key: 'ppk', label: 'Weakest Ppk (12 months)', numeric: true, digits: 2 },
            { key: 'inARow', label: 'Accepted re-tests in a row', numeric: true },
            { key: 'plan', label: 'Re-test' },
            { key: 'due', label: 'Lots due', numeric: true },
            { key: 'reasons', label: 'Why', csvOnly: true },
          ],
          rows: summary,
        })}
        <ul class="reasons">
          {plans.map((p) => (
            <li>
              <strong>
                {p.mill} {p.grade}: {planWords(p)}.
              </strong>{' '}
              {p.decision.reasons.slice(1).join('; ')}.
            </li>
          ))}
        </ul>
        <p class="note">
          Rules (after ISO 2859-3, the numbers our own): every lot until 10 re-tests in a row are accepted — inside the band, and within 3 HRC of the certificate on average — with a weakest-distance Ppk of at least 1.0 over the last 12 months and no open laboratory signal; then 1 lot in 2, one step rarer for each further 10 accepted, never rarer than 1 in 3 without Ppk 1.33 and limits of agreement within ±2.5 HRC, and never rarer than 1 in 5. One re-test not accepted returns the mill to every lot. Our repeatability: {entered !== undefined ? `${fmt(entered, 2)} HRC per reading, as entered` : repeatability.sd !== null ? `${fmt(repeatability.sd, 2)} HRC per reading (r = ${fmt(repeatability.limit, 1)} HRC) from ${repeatability.heats} heats we tested twice; ${repeatability.note}` : repeatability.note}.
        </p>
        <h2>Lots due for a re-test ({due.length})</h2>
        <p class="note">Lots received in the 60 days up to the as-of date that the plan selects and that have no receiving test on file.</p>
        {kit.table('due', 'Lots due for a re-test', {
          columns: [
            { key: 'mill', label: 'Mill' },
            { key: 'grade', label: 'Grade' },
            { key: 'heat', label: 'Heat', cell: (r: (typeof due)[number]) => <a href={`/heats/${r.heatId}`}>{r.heat}</a> },
            { key: 'lot', label: 'Lot' },
            { key: 'received', label: 'Received' },
            { key: 'plan', label: 'Plan' },
          ],
          rows: due,
        })}
        {chosen ? detail(chosen, kit) : <p class="empty">Choose a grade and a mill for the agreement study of one series.</p>}
      </>
    );
    return { title: 'Receiving', section: 'receiving', body };
  });
}
