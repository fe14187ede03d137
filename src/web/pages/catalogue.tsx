// Catalogue: the mills, grades (with chemistry limits) and band versions a plant sets up before its
// first import. The forms post to this page's own routes (engineer role, as the API's POSTs), which
// validate with the API's schemas (src/ingest/catalogSchema.ts) and return here saying what changed.
import type { Context, Hono } from 'hono';
import type { Db } from '../../db/connection.ts';
import { addBandVersion, findGrade, listBands, listGrades, listMills, upsertGrade, upsertMill } from '../../db/referenceData.ts';
import { HardenabilityInputError } from '../../hardenability/errors.ts';
import { bandInputSchema, catalogProblems, gradeInputSchema, millInputSchema, parseLimitText, parsePointText, storedBandPoints } from '../../ingest/catalogSchema.ts';
import { Caution } from '../components/caution.tsx';
import { page } from '../page.tsx';
import { optionalText } from '../params.ts';

function back(message: string, anchor = ''): string {
  return `/catalogue?${new URLSearchParams({ done: message }).toString()}${anchor}`;
}

const text = (v: unknown): string | undefined => (typeof v === 'string' && v.trim() ? v.trim() : undefined);
const lines = (v: unknown): string[] => (typeof v === 'string' ? v.split(/[\r\n;]+/).map((l) => l.trim()).filter(Boolean) : []);

/** Reads "C=0.17-0.22" lines; a line that is not one is a problem, not dropped. */
function parsed<T>(raw: string[], parse: (t: string) => T, problems: string[]): T[] {
  const out: T[] = [];
  for (const l of raw) {
    try {
      out.push(parse(l));
    } catch (error) {
      problems.push((error as Error).message);
    }
  }
  return out;
}

const range = (min: number | null, max: number | null) => `${min ?? ''}–${max ?? ''}`;

export function cataloguePage(app: Hono<any>, db: Db) {
  page(app, '/catalogue', async (c, kit) => {
    const done = optionalText(c.req.query('done'));
    const [mills, grades] = await Promise.all([listMills(db), listGrades(db)]);
    const bands = await Promise.all(grades.map(async (g) => ({ grade: g.code, versions: await listBands(db, g.code) })));
    const millRows = mills.map((m) => ({ code: m.code, name: m.name, country: m.country, notes: m.notes }));
    const gradeRows = grades.map((g) => ({
      code: g.code,
      unit: g.distanceSystem === 'mm' ? 'mm (ISO 642)' : 'sixteenths of an inch (ASTM A255)',
      limits: g.chemistryLimits.map((l) => `${l.element} ${range(l.min, l.max)}`).join(', ') || 'none on file',
      description: g.description,
    }));
    const bandRows = bands.flatMap((b) =>
      b.versions.map((v) => ({
        grade: b.grade,
        version: v.version,
        from: v.effectiveFrom,
        status: v.status,
        kind: v.kind,
        points: v.points.map((p) => `${p.label} ${range(p.minHrc, p.maxHrc)}`).join(', '),
        reason: v.reason ?? null,
      })),
    );
    return {
      title: 'Catalogue',
      section: 'catalogue',
      body: (
        <>
          <h1>Catalogue</h1>
          <p class="lead">
            The mills that send certificates, the grades with their chemistry limits, and each grade's end-quench band. Set them up before the first import; the command line does the
            same (<code>endquench catalogue FILE</code>, <code>mill add</code>, <code>grade add</code>, <code>band add</code>).
          </p>
          {done ? (
            <p class="notice" role="status" id="done">
              {done}
            </p>
          ) : null}
          <Caution>Limits and bands entered here decide what the pages call inside or outside. Take them from the standard and your purchase specification; changing the catalogue needs the engineer role.</Caution>
          <h2 id="mills">Mills ({mills.length})</h2>
          {kit.table('mills', 'Mills', {
            columns: [
              { key: 'code', label: 'Code' },
              { key: 'name', label: 'Name', wrap: true },
              { key: 'country', label: 'Country' },
              { key: 'notes', label: 'Notes', wrap: true },
            ],
            rows: millRows,
          })}
          <form class="card catalogue-form" method="post" action="/catalogue/mills">
            <h3>Add a mill, or edit one (same code)</h3>
            <label>
              Code <input name="code" required maxlength={40} placeholder="ORW" />
            </label>
            <label>
              Name <input name="name" required placeholder="Orwell Bar Mill" />
            </label>
            <label>
              Country <input name="country" placeholder="GB" />
            </label>
            <label>
              Notes <input name="notes" />
            </label>
            <button type="submit">Save mill</button>
          </form>

          <h2 id="grades">Grades ({grades.length})</h2>
          {kit.table('grades', 'Grades', {
            columns: [
              { key: 'code', label: 'Grade' },
              { key: 'unit', label: 'Band distances in', wrap: true },
              { key: 'limits', label: 'Chemistry limits (wt%)', wrap: true },
              { key: 'description', label: 'Description', wrap: true },
            ],
            rows: gradeRows,
          })}
          <form class="card catalogue-form" method="post" action="/catalogue/grades">
            <h3>Add a grade, or replace its limits (same code)</h3>
            <label>
              Grade <input name="code" required maxlength={40} placeholder="20MnCr5" />
            </label>
            <label>
              Band distances in{' '}
              <select name="distanceSystem">
                <option value="mm">mm (ISO 642)</option>
                <option value="sixteenths">sixteenths of an inch (ASTM A255)</option>
              </select>
            </label>
            <label class="wide">
              Chemistry limits, one a line: ELEMENT=MIN-MAX in wt%
              <textarea name="limits" rows={4} placeholder={'C=0.17-0.22\nSi=-0.40\nMn=1.10-1.40'}></textarea>
            </label>
            <label class="wide">
              Description <input name="description" />
            </label>
            <button type="submit">Save grade</button>
          </form>

          <h2 id="bands">Band versions ({bandRows.length})</h2>
          {kit.table('bands', 'Band versions', {
            columns: [
              { key: 'grade', label: 'Grade' },
              { key: 'version', label: 'Version', numeric: true },
              { key: 'from', label: 'In force from' },
              { key: 'status', label: 'Status' },
              { key: 'kind', label: 'Kind' },
              { key: 'points', label: 'HRC limits by distance', wrap: true },
              { key: 'reason', label: 'Why', wrap: true },
            ],
            rows: bandRows,
          })}
          {grades.length ? (
            <form class="card catalogue-form" method="post" action="/catalogue/bands">
              <h3>Add a band version (earlier versions are kept)</h3>
              <label>
                Grade{' '}
                <select name="grade">
                  {grades.map((g) => (
                    <option value={g.code}>{g.code}</option>
                  ))}
                </select>
              </label>
              <label>
                In force from <input name="effectiveFrom" type="date" required />
              </label>
              <label>
                Kind{' '}
                <select name="kind">
                  <option value="standard">standard</option>
                  <option value="restricted">restricted</option>
                </select>
              </label>
              <label>
                Status{' '}
                <select name="status">
                  <option value="active">active</option>
                  <option value="draft">draft</option>
                </select>
              </label>
              <label class="wide">
                Points, one a line: DISTANCE=MIN-MAX in HRC, distances in the grade's unit
                <textarea name="points" rows={5} placeholder={'1.5=41-49\n3=39-49\n25=-35'}></textarea>
              </label>
              <label class="wide">
                Why (e.g. the standard and its edition) <input name="reason" />
              </label>
              <button type="submit">Add band version</button>
            </form>
          ) : (
            <p class="empty">Add a grade first; its bands follow.</p>
          )}
        </>
      ),
    };
  });

  const refuse = (what: string, problems: string[], anchor: string) => back(`Nothing changed: the ${what} is not valid: ${problems.join('; ')}.`, anchor);

  app.post('/catalogue/mills', async (c: Context<any>) => {
    const form = await c.req.parseBody();
    const result = millInputSchema.safeParse({ code: text(form.code) ?? '', name: text(form.name) ?? '', country: text(form.country) ?? null, notes: text(form.notes) ?? null });
    if (!result.success) return c.redirect(refuse('mill', catalogProblems(result.error), '#mills'), 303);
    const row = await upsertMill(db, result.data);
    return c.redirect(back(`Mill ${row.code} "${row.name}" is on file.`, '#mills'), 303);
  });

  app.post('/catalogue/grades', async (c: Context<any>) => {
    const form = await c.req.parseBody();
    const problems: string[] = [];
    const limits = parsed(lines(form.limits), parseLimitText, problems);
    const result = gradeInputSchema.safeParse({ code: text(form.code) ?? '', description: text(form.description) ?? null, distanceSystem: text(form.distanceSystem) ?? 'mm', chemistryLimits: limits });
    if (!result.success) problems.push(...catalogProblems(result.error));
    if (problems.length || !result.success) return c.redirect(refuse('grade', problems, '#grades'), 303);
    const row = await upsertGrade(db, result.data);
    return c.redirect(back(`Grade ${row.code} is on file with ${row.chemistryLimits.length} chemistry limit(s).`, '#grades'), 303);
  });

  app.post('/catalogue/bands', async (c: Context<any>) => {
    const form = await c.req.parseBody();
    const problems: string[] = [];
    const gradeCode = text(form.grade) ?? '';
    const grade = gradeCode ? await findGrade(db, gradeCode) : null;
    if (!grade) return c.redirect(refuse('band', [`grade ${gradeCode || '(none)'} is not on file`], '#bands'), 303);
    const points = parsed(lines(form.points), parsePointText, problems);
    const result = bandInputSchema.safeParse({
      effectiveFrom: text(form.effectiveFrom) ?? '',
      status: text(form.status) ?? 'active',
      kind: text(form.kind) ?? 'standard',
      reason: text(form.reason),
      distanceSystem: grade.distanceSystem,
      points,
    });
    if (!result.success) problems.push(...catalogProblems(result.error));
    if (problems.length || !result.success) return c.redirect(refuse('band', problems, '#bands'), 303);
    try {
      const by = (c.get('auth') as { name?: string } | undefined)?.name ?? 'web';
      const band = await addBandVersion(db, grade.code, { ...result.data, author: by, points: storedBandPoints(result.data) });
      return c.redirect(back(`Band version ${band.version} of ${grade.code} is on file (${band.points.length} points, from ${band.effectiveFrom}).`, '#bands'), 303);
    } catch (error) {
      if (error instanceof HardenabilityInputError) return c.redirect(refuse('band', [error.message], '#bands'), 303);
      throw error;
    }
  });
}
