// The HTTP application: JSON API under /api/v1, /healthz, /openapi.json. Every error leaves as JSON
// with a stable code; unexpected ones are logged with their stack and answered without it.
import { cautionMiddleware } from './caution.ts';
import { OpenAPIHono } from '@hono/zod-openapi';
import { bodyLimit } from 'hono/body-limit';
import { HTTPException } from 'hono/http-exception';
import { ZodError } from 'zod';
import { ping, type Database } from '../db/connection.ts';
import type { Logger } from '../logger.ts';
import { ApiError, databaseUnavailableResponse, errorResponse, isDatabaseUnavailable, loggableError, problemsOf, valueRefusedByDatabase } from './errors.ts';
import { HardenabilityInputError } from '../hardenability/errors.ts';
import type { AppEnv } from './context.ts';
import { catalogRoutes } from './routes/catalog.ts';
import { ingestRoutes } from './routes/ingest.ts';
import { analysisRoutes } from './routes/analysis.ts';
import { alertRoutes } from './routes/alerts.ts';
import { monitoringRoutes } from './routes/monitoring.ts';
import { webhookRoutes } from './routes/webhooks.ts';
import { partRequirementRoutes } from './routes/partRequirement.ts';
import { curveFigureRoutes } from './routes/curveFigures.ts';
import { receivingRoutes } from './routes/receiving.ts';
import { accessControl, type AfterWriteHook } from '../auth/middleware.ts';
import { annotateRoles } from '../auth/openapiRoles.ts';
import { webRoutes } from '../web/routes.ts';

export interface AppDependencies {
  database: Database;
  logger: Logger;
  version?: string;
  /** Access control: serve every caller as admin while no token exists (ENDQUENCH_ALLOW_OPEN), and the hooks an ingest runs in its transaction (alert rules). */
  access?: { allowOpen?: boolean; afterWrite?: readonly AfterWriteHook[] };
}

/** Largest document accepted in one request (a 10^5-row certificate file is about 30 MB of CSV). */
export const MAX_UPLOAD_BYTES = 200 * 1024 * 1024;

export function createApp({ database, logger, version = '0.1.0', access = {} }: AppDependencies) {
  const app = new OpenAPIHono<AppEnv>({
    defaultHook: (result, c) => {
      if (!result.success) {
        return errorResponse(c, 400, 'invalid_request', 'The request is not valid; see details.', problemsOf(result.error as ZodError));
      }
    },
  });

  // Who is calling and whether the role may (src/auth/policy.ts); public routes pass untouched.
  app.use('*', accessControl({ db: database.db, ...access }));
  app.use('/api/*', bodyLimit({ maxSize: MAX_UPLOAD_BYTES, onError: (c) => errorResponse(c, 413, 'too_large', `The document is larger than ${MAX_UPLOAD_BYTES / 2 ** 20} MiB.`) }));
  // Verdicts and predictions carry the usual caution in their JSON answers (src/api/caution.ts).
  app.use('/api/*', cautionMiddleware());

  app.get('/healthz', async (c) => {
    try {
      await ping(database.db);
      return c.json({ status: 'ok', database: database.kind });
    } catch (error) {
      logger.error({ err: loggableError(error) }, 'health check: database unreachable');
      return databaseUnavailableResponse(c);
    }
  });

  catalogRoutes(app, database.db);
  ingestRoutes(app, database.db);
  analysisRoutes(app, database.db);
  alertRoutes(app, database.db);
  monitoringRoutes(app, database.db);
  webhookRoutes(app, database.db);
  partRequirementRoutes(app, database.db);
  receivingRoutes(app, database.db);
  curveFigureRoutes(app, database.db);
  webRoutes(app, database.db);

  // Every operation's role comes from the access policy (x-required-role, x-roles, security).
  app.get('/openapi.json', (c) => c.json(annotateRoles(app.getOpenAPI31Document({
    openapi: '3.1.0',
    info: {
      title: 'endquench API',
      version,
      description:
        'Hardenability records of bar steel bought from mills: certificates, end-quench tests, bands, and their analysis. Predictions and statistics support decisions; acceptance follows the purchase specification and qualified personnel.',
    },
  }))));

  app.notFound((c) => errorResponse(c, 404, 'not_found', `Nothing at ${c.req.method} ${c.req.path}.`));
  app.onError((error, c) => {
    if (error instanceof ApiError) return errorResponse(c, error.status, error.code, error.message, error.details);
    if (error instanceof ZodError) return errorResponse(c, 400, 'invalid_request', 'The request is not valid; see details.', problemsOf(error));
    if (error instanceof HTTPException) return errorResponse(c, error.status, 'http_error', error.message);
    if (error instanceof SyntaxError) return errorResponse(c, 400, 'invalid_json', `The body is not valid JSON: ${error.message}`);
    if (error instanceof HardenabilityInputError) return errorResponse(c, 400, 'invalid_request', error.message);
    if (isDatabaseUnavailable(error)) {
      logger.warn({ err: loggableError(error), path: c.req.path }, 'database unreachable: answered 503');
      return databaseUnavailableResponse(c);
    }
    const refused = valueRefusedByDatabase(error);
    if (refused) {
      logger.warn({ err: loggableError(error), path: c.req.path }, 'a value the database refused: answered 400');
      return errorResponse(c, 400, 'invalid_value', refused);
    }
    logger.error({ err: loggableError(error), path: c.req.path }, 'unexpected error');
    return errorResponse(c, 500, 'internal_error', 'Something went wrong on our side; it has been logged.');
  });
  return app;
}

export type App = ReturnType<typeof createApp>;
