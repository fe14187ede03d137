// GET /alerts (filters), GET /alerts/{id}, POST /alerts/{id}/ack, POST /alerts/{id}/resolve.
import { createRoute, z, type OpenAPIHono } from '@hono/zod-openapi';
import type { Db } from '../../db/connection.ts';
import { ALERT_STATUSES, AlertNotFoundError, AlertStateError, acknowledgeAlert, getAlert, listAlerts, resolveAlert } from '../../db/alerts.ts';
import { ApiError, errorBodySchema } from '../errors.ts';
import type { AppEnv } from '../context.ts';

const json = (schema: z.ZodType, description: string) => ({ description, content: { 'application/json': { schema } } });

const statusChange = z.object({ by: z.string(), at: z.string(), note: z.string().nullable() }).nullable();

export const alertSchema = z
  .object({
    id: z.number().int(),
    rule: z.string(),
    severity: z.enum(['info', 'warning', 'critical']),
    causeKey: z.string(),
    title: z.string(),
    status: z.enum(['open', 'acknowledged', 'resolved']),
    mill: z.string().nullable(),
    grade: z.string().nullable(),
    heat: z.object({ id: z.number().int(), heatNumber: z.string() }).nullable(),
    lot: z.object({ id: z.number().int(), lotNumber: z.string() }).nullable(),
    distanceMm: z.number().nullable(),
    evidence: z.record(z.string(), z.unknown()),
    createdAt: z.string(),
    acknowledged: statusChange,
    resolved: statusChange,
  })
  .openapi('Alert');

const idParam = z.object({ id: z.coerce.number().int().positive() });
const noteBody = z.object({ note: z.string().max(4000).optional() }).openapi('AlertNote');

export function alertRoutes(app: OpenAPIHono<AppEnv>, db: Db) {
  app.openapi(
    createRoute({
      method: 'get',
      path: '/api/v1/alerts',
      tags: ['alerts'],
      summary: 'Alerts, newest first, filtered by status, mill, grade, rule or heat',
      request: {
        query: z.object({
          status: z.enum(ALERT_STATUSES as [string, ...string[]]).optional(),
          mill: z.string().optional(),
          grade: z.string().optional(),
          rule: z.string().optional(),
          heat: z.coerce.number().int().positive().optional(),
          limit: z.coerce.number().int().min(1).max(1000).default(100),
          offset: z.coerce.number().int().min(0).default(0),
        }),
      },
      responses: { 200: json(z.object({ total: z.number().int(), alerts: z.array(alertSchema) }), 'A page of alerts and the total') },
    }),
    async (c) => {
      const q = c.req.valid('query');
      const page = await listAlerts(db, { ...q, status: q.status as never, heatId: q.heat });
      return c.json(page, 200);
    },
  );

  app.openapi(
    createRoute({
      method: 'get',
      path: '/api/v1/alerts/{id}',
      tags: ['alerts'],
      summary: 'One alert with its evidence',
      request: { params: idParam },
      responses: { 200: json(alertSchema, 'The alert'), 404: json(errorBodySchema, 'No such alert') },
    }),
    async (c) => {
      const { id } = c.req.valid('param');
      const alert = await getAlert(db, id);
      if (!alert) throw new ApiError(404, 'not_found', `alert ${id} is not on file`);
      return c.json(alert, 200);
    },
  );

  for (const action of ['ack', 'resolve'] as const) {
    app.openapi(
      createRoute({
        method: 'post',
        path: `/api/v1/alerts/{id}/${action}`,
        tags: ['alerts'],
        summary:
          action === 'ack'
            ? 'Acknowledge an open alert (who and when are recorded, with an optional note)'
            : 'Resolve an open or acknowledged alert (who and when are recorded, with an optional note); the same cause may raise a new alert later',
        request: { params: idParam, body: { content: { 'application/json': { schema: noteBody } }, required: false } },
        responses: {
          200: json(alertSchema, 'The alert after the change'),
          404: json(errorBodySchema, 'No such alert'),
          409: json(errorBodySchema, 'The alert is not in a state that allows it'),
        },
      }),
      async (c) => {
        const { id } = c.req.valid('param');
        // The body is optional: an empty request acknowledges without a note.
        const raw = await c.req.text();
        const body = raw.trim() ? noteBody.parse(JSON.parse(raw)) : {};
        const change = { by: c.get('auth')?.name ?? 'unknown', note: body.note ?? null };
        try {
          const alert = action === 'ack' ? await acknowledgeAlert(db, id, change) : await resolveAlert(db, id, change);
          return c.json(alert, 200);
        } catch (error) {
          if (error instanceof AlertNotFoundError) throw new ApiError(404, 'not_found', error.message);
          if (error instanceof AlertStateError) throw new ApiError(409, 'alert_state', error.message, { status: error.status });
          throw error;
        }
      },
    );
  }
}
