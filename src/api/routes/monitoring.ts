// GET/PUT /api/v1/monitoring/{grade}: the grade's drift-monitoring configuration (versioned, stored; the
// deployment's settings are the default), and GET /api/v1/monitoring/{grade}/series: one mill's
// curve-level scheme as the alerts run it (reference, designed limits, autocorrelation, points, episodes).
import { createRoute, z, type OpenAPIHono } from '@hono/zod-openapi';
import type { Db } from '../../db/connection.ts';
import { AnalysisError } from '../../analysis/errors.ts';
import { gradeMonitoringConfig, saveGradeMonitoring, seriesMonitoringView } from '../../analysis/monitoringView.ts';
import type { GradeMonitoringOverride } from '../../alerts/rules/settings.ts';
import { ApiError } from '../errors.ts';
import type { AppEnv } from '../context.ts';

const json = (schema: z.ZodType, description: string) => ({ description, content: { 'application/json': { schema } } });
const anyObject = z.record(z.string(), z.unknown());

async function answer<T>(work: () => Promise<T>): Promise<T> {
  try {
    return await work();
  } catch (error) {
    if (error instanceof AnalysisError) throw new ApiError(error.code === 'not_found' ? 404 : error.code === 'invalid_input' ? 400 : 422, error.code, error.message, error.details);
    throw error;
  }
}

const curve = z
  .object({
    enabled: z.boolean(),
    lambda: z.number(),
    yearsPerFalseAlarm: z.number(),
    heatsPerYear: z.number().nullable(),
    referenceHeats: z.number().int(),
    minReferenceHeats: z.number().int(),
    guarantee: z.number(),
    locationShare: z.number(),
    shapeComponents: z.number().int(),
    autocorrelationThreshold: z.number(),
  })
  .partial()
  .strict();

const override = z
  .object({
    curve,
    nelson: z.object({ enabled: z.boolean(), rules: z.array(z.number().int().min(1).max(8)) }).partial().strict(),
    ewma: z.object({ enabled: z.boolean(), lambda: z.number(), L: z.number() }).partial().strict(),
    cusum: z.object({ enabled: z.boolean(), k: z.number(), h: z.number(), headStart: z.number() }).partial().strict(),
    t2: z.object({ enabled: z.boolean(), alpha: z.number() }).partial().strict(),
  })
  .partial()
  .strict()
  .openapi('MonitoringSettingsOverride');

export function monitoringRoutes(app: OpenAPIHono<AppEnv>, db: Db) {
  const grade = z.object({ grade: z.string().min(1) });
  app.openapi(
    createRoute({
      method: 'get',
      path: '/api/v1/monitoring/{grade}',
      tags: ['monitoring'],
      summary: 'The drift-monitoring configuration of a grade: in force, its stored versions, the deployment defaults',
      description: 'The alerts, Trends, heat sheet, Mills and report all use the settings in force. version is null while the deployment defaults apply.',
      request: { params: grade },
      responses: { 200: json(anyObject, 'Configuration in force and versions, newest first') },
    }),
    async (c) => c.json(await answer(() => gradeMonitoringConfig(db, c.req.valid('param').grade)), 200),
  );

  app.openapi(
    createRoute({
      method: 'put',
      path: '/api/v1/monitoring/{grade}',
      tags: ['monitoring'],
      summary: 'Store a new version of the grade’s drift-monitoring configuration (who and why are kept)',
      description: 'The given parts replace the deployment’s settings for this grade from the next import on; earlier versions stay on file. Values no rule can use are refused with the reason.',
      request: { params: grade, body: { content: { 'application/json': { schema: z.object({ settings: override, reason: z.string().min(1).max(500) }).strict() } } } },
      responses: { 200: json(anyObject, 'The configuration now in force') },
    }),
    async (c) => {
      const body = c.req.valid('json');
      const result = await answer(() =>
        saveGradeMonitoring(db, { grade: c.req.valid('param').grade, settings: body.settings as GradeMonitoringOverride, reason: body.reason, createdBy: c.get('auth')?.name ?? null }),
      );
      return c.json(result, 200);
    },
  );

  app.openapi(
    createRoute({
      method: 'get',
      path: '/api/v1/monitoring/{grade}/series',
      tags: ['monitoring'],
      summary: 'One mill’s curve-level drift scheme as the alerts run it',
      description:
        'Status (monitoring, collecting its reference, refused with the reason), the fixed reference (frozen baseline or first heats, heats set aside), the designed limits and what the estimated reference costs, the lag-1 autocorrelation of the reference and its treatment, every heat after the reference (level EWMA and limit, shape T² and limit) and the signal episodes.',
      request: { params: grade, query: z.object({ mill: z.string().min(1), source: z.enum(['mill_certificate', 'receiving_inspection', 'both']).optional() }) },
      responses: { 200: json(anyObject, 'The series monitoring') },
    }),
    async (c) => {
      const q = c.req.valid('query');
      return c.json(await answer(() => seriesMonitoringView(db, { grade: c.req.valid('param').grade, mill: q.mill, source: q.source })), 200);
    },
  );
}
