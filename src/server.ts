// Starts the service: configuration, database (migrated), HTTP server; stops cleanly on SIGINT/SIGTERM.
import { serve, type ServerType } from '@hono/node-server';
import { loadConfig, type Config } from './config.ts';
import { openDatabase, type Database } from './db/connection.ts';
import { createLogger, type Logger } from './logger.ts';
import { createApp } from './api/app.ts';
import { hasActiveTokens } from './db/tokens.ts';
import { isLoopbackHost } from './auth/local.ts';
import { createDispatcher } from './alerts/dispatcher.ts';
import { DEFAULT_RETRY_SCHEDULE, MIN_RECOMMENDED_SPAN_MS, describeSchedule, retrySpanMs } from './alerts/backoff.ts';
import { INGEST_RULES } from './alerts/rules/index.ts';
import { isDatabaseEmpty, loadDemo } from '../seed/load.ts';

/** Time to receive a request's headers, and the whole request, before Node answers 408. */
export const HEADERS_TIMEOUT_MS = 60_000;
export const REQUEST_TIMEOUT_MS = 600_000;

/** Refusal to serve a non-local address while no API token exists. */
export class OpenBindRefused extends Error {}

export interface RunningService {
  url: string;
  database: Database;
  stop(): Promise<void>;
}

export async function startService(config: Config = loadConfig(), logger: Logger = createLogger(config.logLevel)): Promise<RunningService> {
  // A connection the server dropped is logged once per burst; requests meanwhile get 503 and the pool
  // reconnects on the next request (src/db/connection.ts, src/api/errors.ts).
  let lastDropLog = 0;
  const database = await openDatabase({
    url: config.databaseUrl,
    dataDir: config.dataDir,
    onConnectionError: (error) => {
      if (Date.now() - lastDropLog < 5_000) return;
      lastDropLog = Date.now();
      logger.warn({ err: { message: error.message, code: (error as { code?: string }).code } }, 'a database connection was lost; requests answer 503 until it is back');
    },
  });
  logger.info(
    database.kind === 'pglite' ? { dataDir: config.dataDir } : { database: 'postgres' },
    database.kind === 'pglite' ? 'using the embedded database (set DATABASE_URL to use a PostgreSQL server)' : 'using the PostgreSQL server from DATABASE_URL',
  );
  await database.migrate();
  if (!isLoopbackHost(config.host) && !config.allowOpen && !(await hasActiveTokens(database.db))) {
    await database.close();
    throw new OpenBindRefused(
      `Refusing to serve ${config.host}: no API token exists, so anyone who can reach it would be administrator. Create one first (endquench token create --role admin --name <name>), bind HOST=127.0.0.1, or set ENDQUENCH_ALLOW_OPEN=1 if the network itself is trusted.`,
    );
  }
  if (config.allowOpen && !isLoopbackHost(config.host)) logger.warn({ host: config.host }, 'ENDQUENCH_ALLOW_OPEN: while no API token exists, every caller is administrator');
  const app = createApp({ database, logger, access: { allowOpen: config.allowOpen, afterWrite: INGEST_RULES } });
  const webhooks = config.webhooks;
  const dispatcher =
    webhooks?.enabled === false
      ? null
      : createDispatcher({
          db: database.db,
          logger,
          ...(webhooks ? { maxAttempts: webhooks.maxAttempts, intervalMs: webhooks.intervalMs, timeoutMs: webhooks.timeoutMs, baseDelayMs: webhooks.baseDelayMs, maxDelayMs: webhooks.maxDelayMs } : {}),
        });
  if (dispatcher) {
    const attempts = webhooks?.maxAttempts ?? DEFAULT_RETRY_SCHEDULE.maxAttempts;
    const backoff = { baseMs: webhooks?.baseDelayMs ?? DEFAULT_RETRY_SCHEDULE.baseMs, maxMs: webhooks?.maxDelayMs ?? DEFAULT_RETRY_SCHEDULE.maxMs };
    const schedule = describeSchedule(attempts, backoff);
    if (retrySpanMs(attempts, backoff).minMs < MIN_RECOMMENDED_SPAN_MS) logger.warn({ schedule }, 'webhook retries may end in under 24 h: a receiver down for a night would lose events to dead letters');
    else logger.info({ schedule }, 'webhook delivery');
  }
  dispatcher?.start();
  const server: ServerType = await new Promise((resolve) => {
    // Request time limits (node:http): the headers must arrive within HEADERS_TIMEOUT_MS and the whole
    // request (a 200 MiB upload included) within REQUEST_TIMEOUT_MS, else Node answers 408 and closes the
    // connection, so a slow or stalled sender cannot hold a connection open. Processing time is not
    // capped: a 100,000-row import legitimately takes minutes.
    const s = serve({ fetch: app.fetch, port: config.port, hostname: config.host, serverOptions: { headersTimeout: HEADERS_TIMEOUT_MS, requestTimeout: REQUEST_TIMEOUT_MS } }, () => resolve(s));
  });
  const address = server.address();
  const port = typeof address === 'object' && address ? address.port : config.port;
  const url = `http://${config.host.includes(':') ? `[${config.host}]` : config.host}:${port}`;
  logger.info({ url }, 'serving');
  const demoLoading = config.demo === 'auto' && database.kind === 'pglite' ? loadDemoWhenEmpty(database, logger) : Promise.resolve();
  return {
    url,
    database,
    stop: async () => {
      await demoLoading;
      await dispatcher?.stop();
      await new Promise<void>((resolve) => server.close(() => resolve()));
      await database.close();
    },
  };
}

/**
 * A first start on the embedded database shows something: the invented demo plant is loaded in the
 * background while the service already answers.
 */
async function loadDemoWhenEmpty(database: Database, logger: Logger): Promise<void> {
  try {
    if (!(await isDatabaseEmpty(database.db))) return;
    logger.info('the embedded database is empty: loading the invented demo plant (set ENDQUENCH_DEMO=off to start empty)');
    const summary = await loadDemo(database.db);
    const counts = demoCounts(summary);
    logger.info(counts, `demo plant loaded in ${counts.seconds} s: ${counts.mills} mills, ${counts.grades} grades, ${counts.heats} heats, ${counts.retests} receiving re-tests, ${counts.readings} readings, ${counts.stories} planted stories (seed/README.md)`);
  } catch (error) {
    logger.error({ err: error }, 'loading the demo plant failed; the service runs on without it');
  }
}

/** The start-up line of a demo load: counts, never lists of heats (`endquench demo --json` gives the whole summary). */
export function demoCounts(summary: Awaited<ReturnType<typeof loadDemo>>) {
  return {
    mills: summary.mills,
    grades: summary.grades,
    heats: summary.heatsCreated,
    retests: summary.retests,
    readings: summary.readingsAdded,
    models: summary.models,
    stories: Object.keys(summary.stories).length,
    seconds: Number((summary.elapsedMs / 1000).toFixed(1)),
  };
}
