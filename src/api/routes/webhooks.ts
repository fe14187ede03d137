// Webhook subscriptions and their deliveries (the outbox rows, dead letters included).
import { createRoute, z, type OpenAPIHono } from '@hono/zod-openapi';
import type { Db } from '../../db/connection.ts';
import { ALERT_EVENTS } from '../../db/alerts.ts';
import {
  DeliveryStateError,
  SubscriptionInputError,
  createSubscription,
  deactivateSubscription,
  getSubscription,
  listDeliveries,
  listSubscriptions,
  retryDelivery,
} from '../../db/outbox.ts';
import { ApiError, errorBodySchema } from '../errors.ts';
import type { AppEnv } from '../context.ts';

const json = (schema: z.ZodType, description: string) => ({ description, content: { 'application/json': { schema } } });

const subscriptionSchema = z
  .object({ id: z.number().int(), url: z.string(), events: z.array(z.string()), active: z.boolean(), createdBy: z.string().nullable(), createdAt: z.string() })
  .openapi('WebhookSubscription');

const deliverySchema = z
  .object({
    id: z.number().int(),
    subscriptionId: z.number().int(),
    eventType: z.string(),
    idempotencyKey: z.string(),
    status: z.enum(['pending', 'delivered', 'dead']),
    attempts: z.number().int(),
    nextAttemptAt: z.string().nullable(),
    lockedUntil: z.string().nullable(),
    lastError: z.string().nullable(),
    createdAt: z.string(),
    deliveredAt: z.string().nullable(),
    payload: z.unknown(),
  })
  .openapi('WebhookDelivery');

const EVENT_NAMES = [...ALERT_EVENTS, '*'] as const;
const idParam = z.object({ id: z.coerce.number().int().positive() });

export function webhookRoutes(app: OpenAPIHono<AppEnv>, db: Db) {
  app.openapi(
    createRoute({
      method: 'post',
      path: '/api/v1/webhooks',
      tags: ['webhooks'],
      summary: 'Subscribe a URL to events; the signing secret is in this answer only',
      description:
        'Each delivery is a POST of JSON with headers Idempotency-Key (one per event), X-Endquench-Event, X-Endquench-Timestamp and X-Endquench-Signature: sha256=<hex HMAC-SHA256 of "<timestamp>.<body>" with the secret>. Delivery is at least once and unordered: receivers ignore an Idempotency-Key they have seen, refuse a timestamp older than 5 minutes (replay), and order by the payload\'s occurredAt. Failed deliveries are retried with exponential back-off and equal jitter; by default 20 attempts (first retry after 30-60 s, ceiling 4 h) over 24.1-48.3 h before a delivery is dead.',
      request: {
        body: {
          content: { 'application/json': { schema: z.object({ url: z.string().url(), events: z.array(z.enum(EVENT_NAMES)).min(1) }).openapi('WebhookInput') } },
          required: true,
        },
      },
      responses: { 201: json(subscriptionSchema.extend({ secret: z.string() }), 'The subscription and its secret'), 400: json(errorBodySchema, 'Invalid URL or events') },
    }),
    async (c) => {
      const body = c.req.valid('json');
      try {
        const { subscription, secret } = await createSubscription(db, { ...body, createdBy: c.get('auth')?.name });
        return c.json({ ...subscription, secret }, 201);
      } catch (error) {
        if (error instanceof SubscriptionInputError) throw new ApiError(400, 'invalid_webhook', error.message);
        throw error;
      }
    },
  );

  app.openapi(
    createRoute({
      method: 'get',
      path: '/api/v1/webhooks',
      tags: ['webhooks'],
      summary: 'Active subscriptions (secrets are never shown again)',
      request: { query: z.object({ includeDeleted: z.enum(['true', 'false']).optional() }) },
      responses: { 200: json(z.array(subscriptionSchema), 'Subscriptions') },
    }),
    async (c) => c.json(await listSubscriptions(db, c.req.valid('query').includeDeleted === 'true'), 200),
  );

  app.openapi(
    createRoute({
      method: 'delete',
      path: '/api/v1/webhooks/{id}',
      tags: ['webhooks'],
      summary: 'Delete a subscription: no further deliveries; its history stays readable',
      request: { params: idParam },
      responses: { 204: { description: 'Deleted' }, 404: json(errorBodySchema, 'No such active subscription') },
    }),
    async (c) => {
      const { id } = c.req.valid('param');
      if (!(await deactivateSubscription(db, id))) throw new ApiError(404, 'not_found', `no active webhook subscription ${id}`);
      return c.body(null, 204);
    },
  );

  app.openapi(
    createRoute({
      method: 'get',
      path: '/api/v1/webhooks/{id}/deliveries',
      tags: ['webhooks'],
      summary: "A subscription's deliveries, newest first: pending (with the next attempt), delivered, dead (with the last error)",
      request: {
        params: idParam,
        query: z.object({
          status: z.enum(['pending', 'delivered', 'dead']).optional(),
          limit: z.coerce.number().int().min(1).max(1000).default(100),
          offset: z.coerce.number().int().min(0).default(0),
        }),
      },
      responses: { 200: json(z.object({ total: z.number().int(), deliveries: z.array(deliverySchema) }), 'Deliveries'), 404: json(errorBodySchema, 'No such subscription') },
    }),
    async (c) => {
      const { id } = c.req.valid('param');
      if (!(await getSubscription(db, id))) throw new ApiError(404, 'not_found', `no webhook subscription ${id}`);
      return c.json(await listDeliveries(db, id, c.req.valid('query')), 200);
    },
  );

  app.openapi(
    createRoute({
      method: 'post',
      path: '/api/v1/webhooks/{id}/deliveries/{deliveryId}/retry',
      tags: ['webhooks'],
      summary: 'Queue a dead (or waiting) delivery again now, with a fresh attempt count',
      request: { params: z.object({ id: z.coerce.number().int().positive(), deliveryId: z.coerce.number().int().positive() }) },
      responses: {
        200: json(deliverySchema, 'The delivery, pending again'),
        404: json(errorBodySchema, 'No such delivery'),
        409: json(errorBodySchema, 'Already delivered, or the subscription was deleted'),
      },
    }),
    async (c) => {
      const { id, deliveryId } = c.req.valid('param');
      try {
        const delivery = await retryDelivery(db, id, deliveryId);
        if (!delivery) throw new ApiError(404, 'not_found', `no delivery ${deliveryId} for webhook subscription ${id}`);
        return c.json(delivery, 200);
      } catch (error) {
        if (error instanceof DeliveryStateError) throw new ApiError(409, 'delivery_state', error.message);
        throw error;
      }
    },
  );
}
