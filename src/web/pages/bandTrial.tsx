// Band trial: edit the band's points, pick mills and a window, and see what the proposal would have
// done to history — per mill, heats failing, Ppk and expected PPM per distance, the tightest band each
// mill held — beside the band in force. A read-only replay, so the form is a GET and its result a link.
import type { Hono } from 'hono';
import type { Child } from 'hono/jsx';
import type { Db } from '../../db/connection.ts';
import { bandTrial, type BandTrialResult } from '../../analysis/bandTrial.ts';
import { AnalysisError } from '../../analysis/errors.ts';
import { Caution } from '../components/caution.tsx';
import { Problem, Select, WindowInputs } from '../components/bits.tsx';
import { readSeriesChoice, type SeriesChoice } from '../data/seriesPicker.ts';
import { page } from '../page.tsx';
import { fmt, mmLabel, optionalNumber, ParamError } from '../params.ts';
import { bandsSpec, failingShareSpec } from '../specs/bandTrial.ts';
import { simulatedPercentText } from '../probabilityText.ts';
import { clopperPearson } from '../../stats/binomialBounds.ts';

export interface ProposedPoint {
  distanceMm: number;
  label: string;
  minHrc: number | null;
  maxHrc: number | null;
}

/** The proposed points from repeated at / min / max fields; a row with no distance is ignored. */
export function readPoints(at: string[], min: string[], max: string[], labels: Map<number, string>): ProposedPoint[] {
  const points: ProposedPoint[] = [];
  at.forEach((raw, i) => {
    const mm = optionalNumber(raw, `Distance in row ${i + 1}`, { min: 0.1, max: 200 });
    if (mm === undefined) return;
    const lo = optionalNumber(min[i], `Min HRC in row ${i + 1}`, { min: 0, max: 70 }) ?? null;
    const hi = optionalNumber(max[i], `Max HRC in row ${i + 1}`, { min: 0, max: 70 }) ?? null;
    if (lo === null && hi === null) throw new ParamError(`Row ${i + 1} (${mmLabel(mm)}) needs a min or a max HRC.`);
    if (lo !== null && hi !== null && lo > hi) throw new ParamError(`Row ${i + 1} (${mmLabel(mm)}): min ${lo} is above max ${hi}.`);
    const label = [...labels].find(([d]) => Math.abs(d - mm) < 1e-6)?.[1] ?? mmLabel(mm);
    points.push({ distanceMm: mm, label, minHrc: lo, maxHrc: hi });
  });
  if (points.length === 0) throw new ParamError('The proposed band needs at least one point.');
  if (new Set(points.map((p) => p.distanceMm)).size !== points.length) throw new ParamError('A distance appears twice in the proposed band.');
  return points.sort((a, b) => a.distanceMm - b.distanceMm);
}

const EXTRA_ROWS = 2;

function TrialForm(props: { choice: SeriesChoice; points: ProposedPoint[]; mills: string[]; share: number }) {
  const c = props.choice;
  const rows = [...props.points.map((p) => ({ at: String(p.distanceMm), label: p.label, min: p.minHrc, max: p.maxHrc })), ...Array.from({ length: EXTRA_ROWS }, () => ({ at: '', label: 'new point', min: null, max: null }))];
  return (
    <form method="get" action="/band-trial" id="trial-form" class="card">
      <div class="filters">
        <Select name="grade" label="Grade" value={c.grade} options={c.grades.map((g) => ({ value: g, label: g }))} />
        <WindowInputs from={c.from} to={c.to} />
        <label>
          Share of curves the suggested band must hold (95 % confidence)
          <input type="number" name="share" min="0.5" max="0.999" step="0.005" value={String(props.share)} />
        </label>
      </div>
      <fieldset class="mills">
        <legend>Mills</legend>
        {c.suppliers.map((m) => (
          <label class="check">
            <input type="checkbox" name="mill" value={m} checked={props.mills.length === 0 || props.mills.includes(m)} /> {m}
          </label>
        ))}
      </fieldset>
      <div class="table-wrap">
        <table class="points">
          <thead>
            <tr>
              <th>Point</th>
              <th>Distance (mm)</th>
              <th>Min HRC</th>
              <th>Max HRC</th>
            </tr>
          </thead>
          <tbody>
            {rows.map((r, i) => (
              <tr>
                <td>{r.label}</td>
                <td>
                  <input type="number" name="at" step="any" min="0" value={r.at} aria-label={`Distance of row ${i + 1}`} />
                </td>
                <td>
                  <input type="number" name="min" step="0.1" min="0" max="70" value={r.min === null ? '' : String(r.min)} aria-label={`Min HRC of row ${i + 1}`} />
                </td>
                <td>
                  <input type="number" name="max" step="0.1" min="0" max="70" value={r.max === null ? '' : String(r.max)} aria-label={`Max HRC of row ${i + 1}`} />
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      <input type="hidden" name="run" value="1" />
      <p>
        <button type="submit" class="primary">
          Replay history
        </button>{' '}
        <a href={`/band-trial?grade=${encodeURIComponent(c.grade)}`}>Start again from the band in force</a> (the window starts two years back; set an earlier start for more history)
      </p>
    </form>
  );
}

function results(result: BandTrialResult, kit: Parameters<Parameters<typeof page>[2]>[1]): Child {
  const summary = result.mills.map((m) => ({
    mill: m.mill,
    heats: m.proposed.heats,
    failing: m.proposed.failingCount,
    share: m.proposed.failingShare,
    currentFailing: m.current?.failingCount ?? null,
    currentShare: m.current?.failingShare ?? null,
    incomplete: m.proposed.incomplete,
    expected: m.proposed.expectedShare,
    expectedShare: m.proposed.expectedShare?.share ?? null,
    held: m.suggestion?.heldShare ?? null,
    heldLater: m.suggestion?.outOfSample?.heldShare ?? null,
  }));
  const t = result.total;
  summary.push({ mill: 'all chosen', heats: t.proposed.heats, failing: t.proposed.failingCount, share: t.proposed.failingShare, currentFailing: t.current?.failingCount ?? null, currentShare: t.current?.failingShare ?? null, incomplete: t.proposed.incomplete, expected: t.proposed.expectedShare, expectedShare: t.proposed.expectedShare?.share ?? null, held: null, heldLater: null });
  const shareRows = result.mills.flatMap((m) => [
    ...(m.current ? [{ mill: m.mill, band: 'band in force', share: m.current.failingShare, failing: m.current.failingCount, heats: m.current.heats }] : []),
    { mill: m.mill, band: 'proposed band', share: m.proposed.failingShare, failing: m.proposed.failingCount, heats: m.proposed.heats },
  ]);
  const bandRows = [
    ...(result.current?.points ?? []).map((p) => ({ band: 'band in force', mm: p.distanceMm, label: p.label ?? mmLabel(p.distanceMm), min: p.minHrc, max: p.maxHrc })),
    ...result.proposed.points.map((p) => ({ band: 'proposed band', mm: p.distanceMm, label: p.label ?? mmLabel(p.distanceMm), min: p.minHrc, max: p.maxHrc })),
  ];
  const perDistance = result.mills.flatMap((m) => m.proposed.perDistance.map((d) => ({ mill: m.mill, distance: d.label ?? mmLabel(d.distanceMm), min: d.minHrc, max: d.maxHrc, n: d.n, ppk: d.ppk, expectedPpm: d.expectedPpm, failures: d.observedFailures })));
  const suggestions = result.mills.flatMap((m) => (m.suggestion ? m.suggestion.points.map((p) => ({ mill: m.mill, distance: p.label ?? mmLabel(p.distanceMm), min: p.minHrc, max: p.maxHrc, held: m.suggestion!.heldShare, later: m.suggestion!.outOfSample?.heldShare ?? null, counted: m.suggestion!.heatsCounted })) : []));
  const suggestionMethod = result.mills.find((m) => m.suggestion)?.suggestion?.method ?? null;
  const failing = result.mills.flatMap((m) => m.proposed.failing.map((f) => ({ mill: m.mill, heatId: f.heatId, heat: f.heatNumber, castDate: f.castDate, missed: f.missed.map((x) => `${mmLabel(x.distanceMm)} ${x.hrc} HRC (${fmt(x.margin, 1)})`).join('; ') })));
  return (
    <section id="trial-results">
      <h2>What the proposal would have done</h2>
      {kit.table('summary', `Band trial ${result.grade} summary`, {
        columns: [
          { key: 'mill', label: 'Mill' },
          { key: 'heats', label: 'Heats', numeric: true },
          { key: 'failing', label: 'Would fail', numeric: true },
          { key: 'share', label: 'Share failing', numeric: true, cell: (r: (typeof summary)[number]) => `${fmt(100 * r.share, 1)} %` },
          { key: 'currentFailing', label: 'Fail today', numeric: true },
          { key: 'currentShare', label: 'Share today', numeric: true, cell: (r: (typeof summary)[number]) => (r.currentShare === null ? '–' : `${fmt(100 * r.currentShare, 1)} %`) },
          { key: 'incomplete', label: 'Not fully tested', numeric: true },
          { key: 'expected', label: 'Expected outside (whole curve)', htmlOnly: true, cell: (r: (typeof summary)[number]) => (r.expected ? simulatedPercentText(clopperPearson(Math.round(r.expected.share * r.expected.draws), r.expected.draws)) : '–') },
          { key: 'expectedShare', label: 'Expected share outside', csvOnly: true },
          { key: 'held', label: 'Share inside suggested band', numeric: true, digits: 3 },
          { key: 'heldLater', label: 'Same rule, newer third', numeric: true, digits: 3 },
        ],
        rows: summary,
      })}
      <div class="grid2">
        {kit.chart({ id: 'failing', title: `Heats that would fail: ${result.grade}`, spec: failingShareSpec(shareRows), table: { columns: [{ key: 'mill', label: 'Mill' }, { key: 'band', label: 'Band' }, { key: 'failing', label: 'Failing', numeric: true }, { key: 'heats', label: 'Heats', numeric: true }, { key: 'share', label: 'Share', numeric: true, digits: 4 }], rows: shareRows } })}
        {kit.chart({ id: 'bands', title: `Proposed band against the band in force: ${result.grade}`, note: 'Solid: maximum; dashed: minimum.', spec: bandsSpec(bandRows), table: { columns: [{ key: 'band', label: 'Band' }, { key: 'label', label: 'Distance' }, { key: 'min', label: 'Min HRC', numeric: true }, { key: 'max', label: 'Max HRC', numeric: true }], rows: bandRows } })}
      </div>
      <details class="more">
        <summary>Per distance under the proposal ({perDistance.length} rows)</summary>
      {kit.table('per-distance', `Band trial ${result.grade} per distance`, {
        columns: [
          { key: 'mill', label: 'Mill' },
          { key: 'distance', label: 'Distance' },
          { key: 'min', label: 'Min', numeric: true },
          { key: 'max', label: 'Max', numeric: true },
          { key: 'n', label: 'n', numeric: true },
          { key: 'ppk', label: 'Ppk', numeric: true, digits: 2 },
          { key: 'expectedPpm', label: 'Expected PPM', numeric: true, digits: 0 },
          { key: 'failures', label: 'Observed failures', numeric: true },
        ],
        rows: perDistance,
      })}
      </details>
      <details class="more">
        <summary>Tightest band each mill held ({suggestions.length} rows)</summary>
      {kit.table('suggested', `Band trial ${result.grade} tightest band held`, {
        columns: [
          { key: 'mill', label: 'Mill' },
          { key: 'distance', label: 'Distance' },
          { key: 'min', label: 'Min HRC', numeric: true },
          { key: 'max', label: 'Max HRC', numeric: true },
          { key: 'held', label: 'Share held (in sample)', numeric: true, digits: 3 },
          { key: 'later', label: 'Same rule on the older two thirds, share of the newer third held', numeric: true, digits: 3 },
          { key: 'counted', label: 'Heats counted', numeric: true },
        ],
        rows: suggestions,
      })}
      {suggestionMethod ? <p class="note">Suggested band: {suggestionMethod}. It is a starting point for a talk with the mill, not a purchase specification; acceptance follows the agreed specification and qualified personnel.</p> : null}
      </details>
      <details class="more">
        <summary>Heats that would fail under the proposal ({failing.length})</summary>
      {kit.table('failing-heats', `Band trial ${result.grade} failing heats`, {
        columns: [
          { key: 'mill', label: 'Mill' },
          { key: 'heat', label: 'Heat', cell: (r: (typeof failing)[number]) => <a href={`/heats/${r.heatId}`}>{r.heat}</a> },
          { key: 'castDate', label: 'Cast' },
          { key: 'missed', label: 'Missed (margin HRC)', wrap: true },
        ],
        rows: failing,
      })}
      </details>
    </section>
  );
}

export function bandTrialPage(app: Hono<any>, db: Db) {
  page(app, '/band-trial', async (c, kit) => {
    let choice: SeriesChoice;
    try {
      choice = await readSeriesChoice(c, db, { needMill: false, defaultDays: 730 });
    } catch (error) {
      if (error instanceof ParamError) return { title: 'Band trial', section: 'trial', status: 400, body: <Problem message={error.message} /> };
      throw error;
    }
    const labels = new Map((choice.band?.points ?? []).map((p) => [p.mm, p.label ?? mmLabel(p.mm)]));
    const run = c.req.query('run') !== undefined;
    const mills = (c.req.queries('mill') ?? []).filter((m) => choice.suppliers.includes(m));
    let problem: string | null = null;
    let share = 0.95;
    let points: ProposedPoint[] = (choice.band?.points ?? []).map((p) => ({ distanceMm: p.mm, label: p.label ?? mmLabel(p.mm), minHrc: p.minHrc ?? null, maxHrc: p.maxHrc ?? null }));
    let result: BandTrialResult | null = null;
    if (run) {
      try {
        share = optionalNumber(c.req.query('share'), 'The share', { min: 0.5, max: 0.999 }) ?? 0.95;
        points = readPoints(c.req.queries('at') ?? [], c.req.queries('min') ?? [], c.req.queries('max') ?? [], labels);
        result = await bandTrial(db, { grade: choice.grade, points, mills: mills.length ? mills : undefined, from: choice.from, to: choice.to, share });
      } catch (error) {
        if (error instanceof ParamError || error instanceof AnalysisError) problem = error.message;
        else throw error;
      }
    }
    return {
      title: 'Band trial',
      section: 'trial',
      status: problem ? 422 : 200,
      body: (
        <>
          <h1>Band trial</h1>
          <p class="lead">What if the band were tighter? Edit the points, choose mills and a window, and replay the history of {choice.grade} under the proposal, beside the band in force.</p>
          <Caution>
            A replay of history estimates what a band would have cost; it does not decide a purchase specification. Changing a band is agreed with the mills, and acceptance follows the specification in force and qualified
            personnel.
          </Caution>
          <TrialForm choice={choice} points={points} mills={mills} share={share} />
          {problem ? <Problem message={`The trial did not run: ${problem}`} /> : null}
          {result ? results(result, kit) : null}
        </>
      ),
    };
  });
}
