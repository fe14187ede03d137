// Grade: the active band as an envelope with every heat's curve over it (window and mill selectable),
// and the band's versions with their history.
import type { Hono } from 'hono';
import type { Db } from '../../db/connection.ts';
import { findGrade, listBands, listMills } from '../../db/referenceData.ts';
import { toBand } from '../../analysis/bandOf.ts';
import { groupByHeat, loadSeriesCurves, pointsAt, todayIso } from '../../analysis/seriesData.ts';
import { bandInForce, bandLimitAt, type Band } from '../../hardenability/bands.ts';
import { Caution } from '../components/caution.tsx';
import { Problem, Select, WindowInputs } from '../components/bits.tsx';
import { page } from '../page.tsx';
import { dateWindow, daysBefore, mmLabel, optionalText, ParamError, query } from '../params.ts';
import { curvesSpec, type CurveRow } from '../specs/curves.ts';
import { bandVersionsSpec } from '../specs/bandVersions.ts';
import { bandRows } from './heatSheet.tsx';

function outside(band: Band | null, mm: number, hrc: number): boolean {
  if (!band) return false;
  const min = bandLimitAt(band, mm, 'min');
  const max = bandLimitAt(band, mm, 'max');
  return (min !== null && hrc < min.value) || (max !== null && hrc > max.value);
}

export function gradePage(app: Hono<any>, db: Db) {
  page(app, '/grades/:code', async (c, kit) => {
    const code = c.req.param('code') ?? '';
    const grade = await findGrade(db, code);
    if (!grade) return { title: 'Grade', section: 'grade', status: 404, body: <Problem message={`No grade ${code} is on file.`} /> };
    let window: { from?: string; to?: string };
    try {
      window = dateWindow(c.req.query('from'), c.req.query('to'));
    } catch (error) {
      if (error instanceof ParamError) return { title: grade.code, section: 'grade', status: 400, body: <Problem message={error.message} /> };
      throw error;
    }
    if (!window.from && !window.to && c.req.query('all') === undefined) window = { from: daysBefore(todayIso(), 365), to: todayIso() };
    const mill = optionalText(c.req.query('mill'));
    const [mills, views, curves] = await Promise.all([listMills(db), listBands(db, grade.code), loadSeriesCurves(db, { grade: grade.code, mill, ...window, source: 'mill_certificate' })]);
    const versions = views.map(toBand);
    const active = bandInForce(versions, window.to ?? todayIso());
    const curveRows: CurveRow[] = curves.flatMap((cv) =>
      [...cv.readings].map(([mm, hrc]) => ({ curve: cv.testId, group: cv.mill, heat: cv.heatNumber, mm, hrc, outside: outside(active, mm, hrc) })),
    );
    const distances = active?.points.map((p) => ({ mm: p.mm, label: p.label ?? mmLabel(p.mm) })) ?? [];
    const perDistance = new Map(distances.map((d) => [d.mm, new Map(pointsAt(curves, d.mm).map((p) => [p.heatId, p.value]))]));
    const heatRows = groupByHeat(curves).map((g) => {
      const h = g[0];
      const row: Record<string, unknown> = { heatId: h.heatId, heat: h.heatNumber, mill: h.mill, castDate: h.castDate };
      distances.forEach((d, i) => (row[`d${i}`] = perDistance.get(d.mm)?.get(h.heatId) ?? null));
      return row;
    });
    const versionRows = views.map((v) => ({ version: v.version, effectiveFrom: v.effectiveFrom, status: v.status, kind: v.kind, reason: v.reason, author: v.author, createdAt: v.createdAt.slice(0, 10), points: v.points.map((p) => `${p.label} ${p.minHrc ?? '–'}/${p.maxHrc ?? '–'}`).join('; ') }));
    const versionPoints = views.flatMap((v) => v.points.map((p) => ({ version: `v${v.version} (${v.status}, from ${v.effectiveFrom})`, mm: p.distanceMm, label: p.label, min: p.minHrc, max: p.maxHrc })));
    const w = { mill, ...window };
    return {
      title: `Grade ${grade.code}`,
      section: 'grade',
      body: (
        <>
          <h1>Grade {grade.code}</h1>
          <p class="lead">{grade.description ? `${grade.description.replace(/\.?$/, '.')} ` : ''}Every certificate curve of the window over the band in force; the band's versions below.</p>
          <form class="filters" method="get" action={`/grades/${encodeURIComponent(grade.code)}`}>
            <Select name="mill" label="Mill" value={mill} any="All mills" options={mills.map((m) => ({ value: m.code, label: m.code }))} />
            <WindowInputs from={window.from} to={window.to} />
            <button type="submit">Show</button>
            <a href={`/grades/${encodeURIComponent(grade.code)}${query({ mill, all: 1 })}`}>All history</a>
          </form>
          <p>
            <a href={`/trends${query({ grade: grade.code, mill, ...window })}`}>Trends</a> · <a href={`/capability${query({ grade: grade.code, ...w })}`}>Capability</a> ·{' '}
            <a href={`/chemistry${query({ grade: grade.code, mill })}`}>Chemistry model</a> · <a href={`/band-trial${query({ grade: grade.code, ...window })}`}>Band trial</a> ·{' '}
            <a href={`/heats${query({ grade: grade.code, ...w })}`}>Heats</a>
          </p>
          <Caution>Curves over the band show how a supply has run; whether a heat is accepted follows the purchase specification and the decision of qualified personnel.</Caution>
          {active ? null : <p class="notice">No active band of {grade.code} is in force on {window.to ?? todayIso()}.</p>}
          {kit.chart({
            id: 'curves',
            title: `${grade.code}: ${heatRows.length} heat(s) over band ${active ? `v${active.version}` : '(none)'}`,
            note: 'Shaded: the band in force at the end of the window; lines: one certificate curve per heat, coloured by mill; triangles: readings outside the band.',
            spec: curvesSpec(bandRows(active), curveRows, null, { title: `${grade.code} curves over the band`, many: true, groupTitle: 'Mill', height: 360 }),
            table: {
              columns: [
                { key: 'heat', label: 'Heat', cell: (r: Record<string, unknown>) => <a href={`/heats/${r.heatId}`}>{String(r.heat)}</a> },
                { key: 'mill', label: 'Mill' },
                { key: 'castDate', label: 'Cast' },
                ...distances.map((d, i) => ({ key: `d${i}`, label: d.label, numeric: true })),
              ],
              rows: heatRows,
            },
            openUpTo: 0,
          })}
          <h2>Band versions</h2>
          {versionPoints.length
            ? kit.chart({
                id: 'versions',
                title: `${grade.code}: band versions`,
                note: 'Solid: maximum; dashed: minimum; one colour per version.',
                spec: bandVersionsSpec(versionPoints),
                table: {
                  columns: [
                    { key: 'version', label: 'Version' },
                    { key: 'label', label: 'Distance' },
                    { key: 'mm', label: 'mm', numeric: true },
                    { key: 'min', label: 'Min HRC', numeric: true },
                    { key: 'max', label: 'Max HRC', numeric: true },
                  ],
                  rows: versionPoints,
                },
                openUpTo: 0,
              })
            : null}
          {kit.table('history', `${grade.code} band history`, {
            columns: [
              { key: 'version', label: 'Version', numeric: true },
              { key: 'effectiveFrom', label: 'Effective from' },
              { key: 'status', label: 'Status' },
              { key: 'kind', label: 'Kind' },
              { key: 'reason', label: 'Reason', wrap: true },
              { key: 'author', label: 'Author' },
              { key: 'createdAt', label: 'Entered' },
              { key: 'points', label: 'Points (min/max HRC)', csvOnly: true },
            ],
            rows: versionRows,
          })}
          <h2>Chemistry limits</h2>
          {kit.table('limits', `${grade.code} chemistry limits`, {
            columns: [
              { key: 'element', label: 'Element' },
              { key: 'min', label: 'Min %', numeric: true },
              { key: 'max', label: 'Max %', numeric: true },
            ],
            rows: grade.chemistryLimits,
          })}
        </>
      ),
    };
  });
}
