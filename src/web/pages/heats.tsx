// Heat sheet: the list of heats, and one heat's certificate, curves against the band, predicted curve,
// certificate checks, lots, revisions and alerts.
import type { Hono } from 'hono';
import type { Db } from '../../db/connection.ts';
import { getHeat, listHeats } from '../../db/heats.ts';
import { listGrades, listMills } from '../../db/referenceData.ts';
import { Problem, Select, WindowInputs } from '../components/bits.tsx';
import { page } from '../page.tsx';
import { dateWindow, optionalNumber, optionalText, ParamError, query } from '../params.ts';
import { heatSheet } from './heatSheet.tsx';

const PAGE_SIZE = 200;

export function heatPages(app: Hono<any>, db: Db) {
  page(app, '/heats', async (c, kit) => {
    let window: { from?: string; to?: string };
    let offset: number;
    try {
      window = dateWindow(c.req.query('from'), c.req.query('to'));
      offset = optionalNumber(c.req.query('offset'), 'The offset', { min: 0 }) ?? 0;
    } catch (error) {
      if (error instanceof ParamError) return { title: 'Heat sheet', section: 'heats', status: 400, body: <Problem message={error.message} /> };
      throw error;
    }
    const mill = optionalText(c.req.query('mill'));
    const grade = optionalText(c.req.query('grade'));
    const [mills, grades, found] = await Promise.all([listMills(db), listGrades(db), listHeats(db, { mill, grade, ...window, limit: PAGE_SIZE, offset: Math.floor(offset), order: 'newest' })]);
    const rows = found.heats.map((h) => ({ id: h.id, heatNumber: h.heatNumber, mill: h.mill, grade: h.grade, castDate: h.castDate, certificate: h.certificateNumber, revision: h.revision, grainSize: h.grainSize, C: h.chemistry.C ?? null }));
    type Row = (typeof rows)[number];
    const base = { mill, grade, ...window };
    return {
      title: 'Heat sheet',
      section: 'heats',
      body: (
        <>
          <h1>Heat sheet</h1>
          <p class="lead">Choose a heat to see its certificate, curves against the band, the predicted curve and the certificate checks.</p>
          <form class="filters" method="get" action="/heats">
            <Select name="mill" label="Mill" value={mill} any="All mills" options={mills.map((m) => ({ value: m.code, label: `${m.code} – ${m.name}` }))} />
            <Select name="grade" label="Grade" value={grade} any="All grades" options={grades.map((g) => ({ value: g.code, label: g.code }))} />
            <WindowInputs from={window.from} to={window.to} />
            <button type="submit">Show</button>
          </form>
          <p>
            {found.total} heat(s); showing {offset + 1}–{Math.min(offset + PAGE_SIZE, found.total)} newest first (by cast date).{' '}
            {offset > 0 ? <a href={`/heats${query({ ...base, offset: Math.max(0, offset - PAGE_SIZE) })}`}>Newer heats</a> : null}{' '}
            {offset + PAGE_SIZE < found.total ? <a href={`/heats${query({ ...base, offset: offset + PAGE_SIZE })}`}>Older heats</a> : null}
          </p>
          {kit.table('heats', 'Heats', {
            columns: [
              { key: 'heatNumber', label: 'Heat', cell: (r: Row) => <a href={`/heats/${r.id}`}>{r.heatNumber}</a> },
              { key: 'mill', label: 'Mill' },
              { key: 'grade', label: 'Grade' },
              { key: 'castDate', label: 'Cast' },
              { key: 'certificate', label: 'Inspection certificate (3.1)' },
              { key: 'revision', label: 'Revision', numeric: true },
              { key: 'grainSize', label: 'Grain size', numeric: true },
              { key: 'C', label: 'C %', numeric: true, digits: 2 },
            ],
            rows,
          })}
        </>
      ),
    };
  });

  page(app, '/heats/:id', async (c, kit) => {
    const id = Number(c.req.param('id'));
    const heat = Number.isInteger(id) && id > 0 ? await getHeat(db, id) : null;
    if (!heat) return { title: 'Heat sheet', section: 'heats', status: 404, body: <Problem message={`No heat with id ${c.req.param('id')} is on file.`} /> };
    return { title: `Heat ${heat.heatNumber}`, section: 'heats', body: await heatSheet(db, heat, kit) };
  });
}

