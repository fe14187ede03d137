// Mills, grades and their versioned bands; heats.
import { createRoute, z, type OpenAPIHono } from '@hono/zod-openapi';
import type { Db } from '../../db/connection.ts';
import { addBandVersion, listBands, listGrades, listMills, findGrade, upsertGrade, upsertMill } from '../../db/referenceData.ts';
import { getHeat, listHeats } from '../../db/heats.ts';
import { bandInputSchema, gradeInputSchema, millInputSchema, storedBandPoints } from '../../ingest/catalogSchema.ts';
import { ApiError, errorBodySchema } from '../errors.ts';
import type { AppEnv } from '../context.ts';

const json = (schema: z.ZodType, description: string) => ({ description, content: { 'application/json': { schema } } });
const anyObject = z.record(z.string(), z.unknown());
const isoDate = z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'must be a date written YYYY-MM-DD');

const millSchema = millInputSchema.openapi('Mill');
const gradeSchema = gradeInputSchema.openapi('Grade');
const bandSchema = bandInputSchema.openapi('BandVersion');

export function catalogRoutes(app: OpenAPIHono<AppEnv>, db: Db) {
  app.openapi(
    createRoute({ method: 'get', path: '/api/v1/mills', tags: ['catalog'], summary: 'Mills on file', description: 'Role: viewer.', responses: { 200: json(z.array(anyObject), 'Mills') } }),
    async (c) => {
      const scope = c.get('auth')?.millScope;
      const mills = await listMills(db);
      return c.json(mills.filter((m) => !scope || m.code === scope).map((m) => ({ ...m, createdAt: m.createdAt.toISOString() })), 200);
    },
  );
  app.openapi(
    createRoute({
      method: 'post',
      path: '/api/v1/mills',
      tags: ['catalog'],
      summary: 'Add or update a mill',
      description: 'Role: engineer.',
      request: { body: { content: { 'application/json': { schema: millSchema } }, required: true } },
      responses: { 200: json(anyObject, 'The mill') },
    }),
    async (c) => {
      const mill = await upsertMill(db, c.req.valid('json'));
      return c.json({ ...mill, createdAt: mill.createdAt.toISOString() }, 200);
    },
  );
  app.openapi(
    createRoute({ method: 'get', path: '/api/v1/grades', tags: ['catalog'], summary: 'Grades with their chemistry limits', description: 'Role: viewer.', responses: { 200: json(z.array(anyObject), 'Grades') } }),
    async (c) => c.json(await listGrades(db), 200),
  );
  app.openapi(
    createRoute({
      method: 'post',
      path: '/api/v1/grades',
      tags: ['catalog'],
      summary: 'Add a grade or replace its chemistry limits',
      description: 'Role: engineer.',
      request: { body: { content: { 'application/json': { schema: gradeSchema } }, required: true } },
      responses: { 200: json(anyObject, 'The grade') },
    }),
    async (c) => c.json(await upsertGrade(db, c.req.valid('json')), 200),
  );
  app.openapi(
    createRoute({
      method: 'get',
      path: '/api/v1/grades/{code}/bands',
      tags: ['catalog'],
      summary: "A grade's band versions, newest first",
      description: 'Role: viewer.',
      request: { params: z.object({ code: z.string() }) },
      responses: { 200: json(z.array(anyObject), 'Band versions'), 404: json(errorBodySchema, 'No such grade') },
    }),
    async (c) => {
      const { code } = c.req.valid('param');
      if (!(await findGrade(db, code))) throw new ApiError(404, 'not_found', `grade ${code} is not on file`);
      return c.json(await listBands(db, code), 200);
    },
  );
  app.openapi(
    createRoute({
      method: 'post',
      path: '/api/v1/grades/{code}/bands',
      tags: ['catalog'],
      summary: 'Add a new band version (earlier versions are kept)',
      description: 'Role: engineer.',
      request: { params: z.object({ code: z.string() }), body: { content: { 'application/json': { schema: bandSchema } }, required: true } },
      responses: { 201: json(anyObject, 'The new version'), 404: json(errorBodySchema, 'No such grade') },
    }),
    async (c) => {
      const { code } = c.req.valid('param');
      const body = c.req.valid('json');
      if (!(await findGrade(db, code))) throw new ApiError(404, 'not_found', `grade ${code} is not on file`);
      const band = await addBandVersion(db, code, {
        effectiveFrom: body.effectiveFrom,
        status: body.status,
        kind: body.kind,
        rounding: body.rounding,
        reason: body.reason,
        author: c.get('auth')?.name,
        points: storedBandPoints(body),
      });
      return c.json(band, 201);
    },
  );
  app.openapi(
    createRoute({
      method: 'get',
      path: '/api/v1/heats',
      tags: ['heats'],
      summary: 'Heats with their current certificate, in cast-date order',
      description: 'Role: viewer (a mill token sees its own mill only).',
      request: {
        query: z.object({
          mill: z.string().optional(),
          grade: z.string().optional(),
          from: isoDate.optional(),
          to: isoDate.optional(),
          limit: z.coerce.number().int().min(1).max(5000).default(500),
          offset: z.coerce.number().int().min(0).default(0),
        }),
      },
      responses: { 200: json(anyObject, 'A page of heats and the total') },
    }),
    async (c) => {
      const q = c.req.valid('query');
      const scope = c.get('auth')?.millScope;
      if (scope && q.mill && q.mill !== scope) throw new ApiError(403, 'forbidden_mill', `This token may only read mill ${scope}.`);
      return c.json(await listHeats(db, { ...q, millScope: scope }), 200);
    },
  );
  app.openapi(
    createRoute({
      method: 'get',
      path: '/api/v1/heats/{id}',
      tags: ['heats'],
      summary: 'One heat: every certificate revision, lots and end-quench tests',
      description: 'Role: viewer (a mill token sees its own mill only).',
      request: { params: z.object({ id: z.coerce.number().int().positive() }) },
      responses: { 200: json(anyObject, 'The heat'), 403: json(errorBodySchema, 'Another mill'), 404: json(errorBodySchema, 'No such heat') },
    }),
    async (c) => {
      const { id } = c.req.valid('param');
      const heat = await getHeat(db, id);
      if (!heat) throw new ApiError(404, 'not_found', `heat ${id} is not on file`);
      const scope = c.get('auth')?.millScope;
      if (scope && heat.mill !== scope) throw new ApiError(403, 'forbidden_mill', `This token may only read mill ${scope}.`);
      return c.json(heat, 200);
    },
  );
}
