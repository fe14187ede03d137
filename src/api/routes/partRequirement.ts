// Part-to-band API under /api/v1: the end-quench distance a round part needs at a location, the band
// minimum it implies and what that means for each mill's heats (src/analysis/partRequirement.ts), and the
// bar-equivalence table and quench-severity ranges behind it. Read-only computations (viewer).
import { createRoute, z, type OpenAPIHono } from '@hono/zod-openapi';
import type { Db } from '../../db/connection.ts';
import { ELEMENTS } from '../../ingest/certificateSchema.ts';
import { AnalysisError } from '../../analysis/errors.ts';
import { equivalenceTable, LIMITS, LOCATION_FRACTIONS, partRequirement, type PartLocation, type QuenchInput } from '../../analysis/partRequirement.ts';
import { SEVERITY_TABLE, type Agitation, type Medium } from '../../hardenability/quench/severity.ts';
import { ApiError, errorBodySchema } from '../errors.ts';
import type { AppEnv } from '../context.ts';

const json = (schema: z.ZodType, description: string) => ({ description, content: { 'application/json': { schema } } });
const anyObject = z.record(z.string(), z.unknown());
const errors = { 400: json(errorBodySchema, 'Invalid request'), 404: json(errorBodySchema, 'Not on file') };
const isoDate = z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'must be a date written YYYY-MM-DD');
const MEDIA = ['air', 'oil', 'water', 'brine'] as const;
const AGITATIONS = ['none', 'mild', 'moderate', 'good', 'strong', 'violent'] as const;

const quenchQuery = {
  medium: z.enum(MEDIA).optional().openapi({ description: 'Quench medium; its typical Grossmann H range is used (see /api/v1/quench/severities). Give medium or severity.' }),
  agitation: z.enum(AGITATIONS).optional().openapi({ description: 'Agitation of the medium (default none).' }),
  severity: z.coerce.number().positive().max(100).optional().openapi({ description: 'Grossmann H in in⁻¹, instead of a medium.' }),
  criterion: z.enum(['rate700', 'rate500', 't85']).optional().openapi({ description: 'Equal cooling rate at 700 °C (Lamont, default), equal cooling rate at 500 °C, or equal t8/5.' }),
};

function quenchOf(q: { medium?: Medium; agitation?: Agitation; severity?: number }): QuenchInput {
  if (q.severity !== undefined && q.medium !== undefined) throw new ApiError(400, 'invalid_request', 'give a medium or a severity H, not both');
  if (q.severity !== undefined) return { severity: q.severity };
  if (q.medium !== undefined) return { medium: q.medium, agitation: q.agitation };
  throw new ApiError(400, 'invalid_request', 'give a quench medium (air, oil, water, brine) or a severity H');
}

/** "C:0.21,Mn:0.85" to a chemistry. */
export function parseChemistry(text: string): Record<string, number> {
  const out: Record<string, number> = {};
  for (const part of text.split(',').map((s) => s.trim()).filter(Boolean)) {
    const [element, value] = part.split(':').map((s) => s.trim());
    if (!(ELEMENTS as readonly string[]).includes(element)) throw new ApiError(400, 'invalid_request', `chemistry: unknown element "${element}"`);
    const v = Number(value);
    if (!Number.isFinite(v) || v < 0 || v > 100) throw new ApiError(400, 'invalid_request', `chemistry: ${element} must be a number of wt% (got "${value}")`);
    out[element] = v;
  }
  if (out.C === undefined) throw new ApiError(400, 'invalid_request', 'chemistry: carbon is needed');
  return out;
}

function locationOf(text: string): PartLocation | number {
  if (text in LOCATION_FRACTIONS) return text as PartLocation;
  const v = Number(text);
  if (text.trim() !== '' && Number.isFinite(v) && v >= 0 && v <= 1) return v;
  throw new ApiError(400, 'invalid_request', `location must be ${Object.keys(LOCATION_FRACTIONS).join(', ')} or a fraction of the radius from 0 (centre) to 1 (surface)`);
}

async function answer<T>(work: () => Promise<T> | T): Promise<T> {
  try {
    return await work();
  } catch (error) {
    if (error instanceof AnalysisError) throw new ApiError(error.code === 'not_found' ? 404 : error.code === 'invalid_input' ? 400 : 422, error.code, error.message, error.details);
    throw error;
  }
}

export function partRequirementRoutes(app: OpenAPIHono<AppEnv>, db: Db) {
  app.openapi(
    createRoute({
      method: 'get',
      path: '/api/v1/part-requirement',
      tags: ['analysis'],
      summary: 'From a round part to a band minimum, and what it means for each mill',
      description:
        'For a long round bar of the given diameter and quench, the equivalent end-quench distance at the location (Lamont: equal cooling rate at 700 °C, or equal t8/5) from a heat-conduction computation, at the low, middle and high end of the medium’s H range; λ (t8/5 in hectoseconds); the band minimum it implies (at least `hrc` HRC at the standard position at or beyond the distance of the slowest quench); per mill, the share of historical heats that met it (Wilson 95 % interval) and the predicted probability from chemistry (given, or each mill’s mean chemistry). An estimate for a long cylinder, to be confirmed by testing parts: `limits` says what it leaves out.',
      request: {
        query: z.object({
          grade: z.string().min(1),
          mill: z.string().min(1).optional(),
          diameter: z.coerce.number().min(5).max(300).openapi({ description: 'Bar diameter, mm.' }),
          location: z.string().min(1).openapi({ description: 'surface, three_quarter_radius, half_radius, centre, or a fraction of the radius (0 centre … 1 surface).' }),
          hrc: z.coerce.number().min(10).max(70).openapi({ description: 'Hardness the part needs there (HRC).' }),
          ...quenchQuery,
          austenitize: z.coerce.number().min(700).max(1100).optional().openapi({ description: 'Austenitizing temperature of the part and the test (°C, default 850).' }),
          from: isoDate.optional(),
          to: isoDate.optional(),
          source: z.enum(['mill_certificate', 'receiving_inspection', 'both']).optional(),
          chemistry: z.string().optional().openapi({ description: 'Chemistry for the prediction, e.g. "C:0.21,Mn:0.85,Cr:0.55,Ni:0.5,Mo:0.2" (default: each mill’s mean chemistry).' }),
          grainSize: z.coerce.number().min(1).max(12).optional(),
          di: z.coerce.number().min(2).max(500).optional().openapi({ description: 'Ideal critical diameter DI (mm): the answer adds Grossmann’s critical diameter at the middle H.' }),
        }),
      },
      responses: { 200: json(anyObject, 'The estimate, the band minimum and each mill’s share'), ...errors },
    }),
    async (c) => {
      const q = c.req.valid('query');
      const result = await answer(() =>
        partRequirement(db, {
          grade: q.grade,
          mill: q.mill,
          diameterMm: q.diameter,
          location: locationOf(q.location),
          requiredHrc: q.hrc,
          quench: quenchOf(q),
          criterion: q.criterion,
          austenitize: q.austenitize,
          from: q.from,
          to: q.to,
          source: q.source,
          chemistry: q.chemistry === undefined ? undefined : parseChemistry(q.chemistry),
          grainSize: q.grainSize,
          diMm: q.di,
        }),
      );
      return c.json(result, 200);
    },
  );

  app.openapi(
    createRoute({
      method: 'get',
      path: '/api/v1/quench/equivalence',
      tags: ['analysis'],
      summary: 'Equivalent end-quench distance at surface, 3/4 radius and centre of round bars',
      description: 'Heat-conduction computation for long round bars in a medium (middle of its typical H range) or at a given H, against the end-quench specimen. Distances in mm; λ at the centre.',
      request: {
        query: z.object({
          diameters: z.string().regex(/^\d+(\.\d+)?(,\d+(\.\d+)?)*$/, 'comma-separated diameters in mm').openapi({ description: 'e.g. 20,30,40,50,60,70,80' }),
          ...quenchQuery,
        }),
      },
      responses: { 200: json(anyObject, 'One row per diameter'), ...errors },
    }),
    async (c) => {
      const q = c.req.valid('query');
      const diameters = q.diameters.split(',').map(Number);
      if (diameters.length > 30 || diameters.some((d) => !(d >= 5 && d <= 300))) throw new ApiError(400, 'invalid_request', 'up to 30 diameters, each 5 to 300 mm');
      const quench = quenchOf(q);
      if ('severity' in quench) throw new ApiError(400, 'invalid_request', 'the table is by medium; give medium (and agitation)');
      const rows = await answer(() => equivalenceTable(diameters, [quench], q.criterion));
      return c.json({ criterion: q.criterion ?? 'rate700', rows, limits: LIMITS }, 200);
    },
  );

  app.openapi(
    createRoute({
      method: 'get',
      path: '/api/v1/quench/severities',
      tags: ['analysis'],
      summary: 'Typical Grossmann H ranges by medium and agitation',
      description: 'The table the part requirement uses (ASM Handbook Vol. 4 after Grossmann, typical values), with the bath temperature assumed. Real quenches vary: the range is the message.',
      responses: { 200: json(anyObject, 'The table') },
    }),
    (c) => c.json({ unit: 'in⁻¹', rows: SEVERITY_TABLE }, 200),
  );
}
