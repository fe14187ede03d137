// Starts the service: configuration, database (migrated), HTTP server; stops cleanly on SIGINT/SIGTERM.
import { serve, type ServerType } from '@hono/node-server';
import { loadConfig, type Config } from './config.ts';
import { openDatabase, type Database } from './db/connection.ts';
import { createLogger, type Logger } from './logger.ts';
import { createApp } from './api/app.ts';

export interface RunningService {
  url: string;
  database: Database;
  stop(): Promise<void>;
}

export async function startService(config: Config = loadConfig(), logger: Logger = createLogger(config.logLevel)): Promise<RunningService> {
  const database = await openDatabase({ url: config.databaseUrl, dataDir: config.dataDir });
  logger.info(
    database.kind === 'pglite' ? { dataDir: config.dataDir } : { database: 'postgres' },
    database.kind === 'pglite' ? 'using the embedded database (set DATABASE_URL to use a PostgreSQL server)' : 'using the PostgreSQL server from DATABASE_URL',
  );
  await database.migrate();
  const app = createApp({ database, logger });
  const server: ServerType = await new Promise((resolve) => {
    const s = serve({ fetch: app.fetch, port: config.port, hostname: config.host }, () => resolve(s));
  });
  const address = server.address();
  const port = typeof address === 'object' && address ? address.port : config.port;
  const url = `http://${config.host.includes(':') ? `[${config.host}]` : config.host}:${port}`;
  logger.info({ url }, 'serving');
  return {
    url,
    database,
    stop: async () => {
      await new Promise<void>((resolve) => server.close(() => resolve()));
      await database.close();
    },
  };
}
