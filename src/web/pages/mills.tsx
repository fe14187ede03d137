// Mills: every mill and grade at a glance, with a way into the grade, its trends and its capability.
import type { Hono } from 'hono';
import type { Db } from '../../db/connection.ts';
import { millsOverview, type MillGradeRow } from '../data/millsOverview.ts';
import { Caution } from '../components/caution.tsx';
import { Problem, Tag, TrendArrow, WindowInputs } from '../components/bits.tsx';
import { page } from '../page.tsx';
import { dateWindow, daysBefore, fmt, mmLabel, ParamError, query } from '../params.ts';
import { todayIso } from '../../analysis/seriesData.ts';
import { lowestPpkSpec } from '../specs/mills.ts';

export function millsPage(app: Hono<any>, db: Db) {
  page(app, '/mills', async (c, kit) => {
    let window: { from?: string; to?: string };
    try {
      window = dateWindow(c.req.query('from'), c.req.query('to'));
      // Without a window: the last twelve months (an explicit empty window, ?all=1, is all history).
      if (!window.from && !window.to && c.req.query('all') === undefined) window = { from: daysBefore(todayIso(), 365), to: todayIso() };
    } catch (error) {
      if (error instanceof ParamError) return { title: 'Mills', section: 'mills', status: 400, body: <Problem message={error.message} /> };
      throw error;
    }
    const overview = await millsOverview(db, window);
    const w = { from: window.from, to: window.to };
    const rows = overview.rows.map((r) => ({
      ...r,
      sharePct: r.shareInBand === null ? null : 100 * r.shareInBand,
      ppk: r.lowest?.ppk ?? null,
      ppkLower: r.lowest?.lower ?? null,
      ppkUpper: r.lowest?.upper ?? null,
      at: r.lowest ? (r.lowest.label ?? mmLabel(r.lowest.distanceMm)) : null,
      reporting: r.dataQuality.findings.length ? r.dataQuality.findings.join('; ') : r.dataQuality.verdict === 'not_applicable' ? 'too few readings to judge' : 'no sign of rounding or smoothing beyond what measurement gives',
    }));
    type Row = (typeof rows)[number];
    const table = {
      columns: [
        { key: 'mill', label: 'Mill', cell: (r: Row) => <a href={`/grades/${encodeURIComponent(r.grade)}${query({ mill: r.mill, ...w })}`}>{r.mill}</a> },
        { key: 'grade', label: 'Grade', cell: (r: Row) => <a href={`/grades/${encodeURIComponent(r.grade)}${query(w)}`}>{r.grade}</a> },
        {
          key: 'heats',
          label: 'Heats',
          numeric: true,
          cell: (r: Row) =>
            r.calculatedCurves ? (
              <span title={`${r.calculatedCurves} certificate curve(s) stated as calculated from chemistry are left out of every figure in this row`}>
                {r.heats} <small>(+{r.calculatedCurves} calculated)</small>
              </span>
            ) : (
              String(r.heats)
            ),
        },
        { key: 'calculatedCurves', label: 'Calculated curves left out', csvOnly: true },
        { key: 'sharePct', label: 'In band %', numeric: true, cell: (r: Row) => shareCell(r) },
        { key: 'failed', label: 'Out of band', numeric: true },
        { key: 'ppk', label: 'Lowest Ppk (min over distances)', numeric: true, digits: 2, cell: (r: Row) => ppkCell(r.ppk) },
        { key: 'ppkInterval', label: '95% joint interval', htmlOnly: true, cell: (r: Row) => (r.lowest ? `${fmt(r.ppkLower)} – ${fmt(r.ppkUpper)}` : '–') },
        { key: 'ppkLower', label: 'Ppk 95% low', csvOnly: true },
        { key: 'ppkUpper', label: 'Ppk 95% high', csvOnly: true },
        { key: 'at', label: 'At' },
        { key: 'openAlerts', label: 'Open alerts', numeric: true, cell: (r: Row) => (r.openAlerts ? <a href={`/alerts${query({ mill: r.mill, grade: r.grade, status: 'open' })}`}>{r.openAlerts}</a> : '0') },
        { key: 'trend', label: 'Trend', cell: (r: Row) => <TrendArrow word={r.trend} /> },
        {
          key: 'reporting',
          label: 'Reporting',
          // A gentle word for what the tests found, with the evidence one click away (the numbers behind it).
          cell: (r: Row) => (
            <details class="evidence-cell">
              <summary>
                <Tag kind={r.dataQuality.verdict === 'fail' ? 'bad' : r.dataQuality.verdict === 'warn' ? 'odd' : 'none'}>
                  {r.dataQuality.verdict === 'fail' ? 'ask for raw data' : r.dataQuality.verdict === 'warn' ? 'worth a check' : r.dataQuality.verdict === 'pass' ? 'as measured' : 'too few'}
                </Tag>
              </summary>
              <small>{r.reporting}</small>
            </details>
          ),
        },
        {
          key: 'links',
          label: 'Look closer',
          htmlOnly: true,
          wrap: true,
          cell: (r: Row) => (
            <>
              <a href={`/trends${query({ grade: r.grade, mill: r.mill, distance: r.lowest?.distanceMm, ...w })}`}>Trends</a>
              {' · '}
              <a href={`/capability${query({ grade: r.grade, mill: r.mill, distance: r.lowest?.distanceMm, ...w })}`}>Capability</a>
            </>
          ),
        },
      ],
      rows,
    };
    const chartRows = rows
      .filter((r) => r.lowest)
      .map((r) => ({ series: `${r.mill} · ${r.grade}`, mill: r.mill, grade: r.grade, distance: r.at ?? '', ppk: r.ppk!, lower: r.ppkLower!, upper: r.ppkUpper! }));
    return {
      title: 'Mills',
      section: 'mills',
      body: (
        <>
          <h1>Mills</h1>
          <p class="lead">Each mill's grades in the chosen cast-date window: how many heats, how many inside the band, the weakest distance's Ppk, open alerts and where the series is heading.</p>
          <form class="filters" method="get" action="/mills">
            <WindowInputs from={window.from} to={window.to} />
            <button type="submit">Show</button>
            <a href="/mills?all=1">All history</a>
          </form>
          <Caution>
            A low Ppk or a drift is a reason to look closer and to talk with the mill, not a verdict on any heat. Acceptance follows the purchase specification and the judgement of qualified personnel; statistics do not replace testing.
          </Caution>
          <h2>Mill and grade</h2>
          {kit.table('overview', 'Mills overview', table)}
          <p class="note">
            Heats: those with a measured end-quench curve; curves a certificate states as calculated from chemistry are counted beside them and left out of every figure. In band: heats whose deciding end-quench test conforms to the band in force on the cast date (a receiving re-test overrides the certificate). Lowest Ppk: the smallest Ppk over the band distances of the active band, from the mill's
            certificate curves; as the minimum of several estimates it reads somewhat low, and its interval is worked out jointly over all the distances (Šidák), so it covers the weakest distance's true Ppk at 95 % or more. Trend: the whole-curve level the drift alerts watch (EWMA of the curve's mean standardised deviation against its designed limit), at the newest heat: steady within half-way to its limit, a signal beyond it or when the newest heat signals in level or shape. Reporting: whether the
            mill's certificate readings favour even numbers (chi-square on even/odd) or scatter less than measured readings can (against the other
            mills' scatter); open the word for the numbers. "Ask for raw data" means the readings are more regular than measured readings usually are: a reason to ask the mill for its raw test records, not proof that anything was changed.
          </p>
          {chartRows.length
            ? kit.chart({
                id: 'ppk',
                title: 'Lowest Ppk by mill and grade',
                note: 'Diamond: the estimate; bar: its 95% interval; dashed lines at 1.00 and 1.33.',
                spec: lowestPpkSpec(chartRows),
                table: {
                  columns: [
                    { key: 'series', label: 'Mill · grade' },
                    { key: 'distance', label: 'At' },
                    { key: 'ppk', label: 'Ppk', numeric: true, digits: 2 },
                    { key: 'lower', label: '95% low', numeric: true, digits: 2 },
                    { key: 'upper', label: '95% high', numeric: true, digits: 2 },
                  ],
                  rows: chartRows,
                },
              })
            : <p class="empty">No series has enough heats for a capability figure in this window.</p>}
        </>
      ),
    };
  });
}

function shareCell(r: MillGradeRow & { sharePct: number | null }) {
  if (r.sharePct === null) return <Tag kind="none">no band</Tag>;
  return (
    <span title={`${r.inBand} of ${r.judged} heats judged`}>
      {fmt(r.sharePct, 1)} <small>({r.inBand}/{r.judged})</small>
    </span>
  );
}

function ppkCell(ppk: number | null) {
  if (ppk === null) return '–';
  return ppk >= 1.33 ? fmt(ppk) : <Tag kind={ppk >= 1 ? 'odd' : 'bad'}>{fmt(ppk)}</Tag>;
}
