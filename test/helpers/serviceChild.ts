// Child process that runs the whole service on loopback over the database named on the command line
// (a PostgreSQL URL or a PGlite directory), announces "URL <address>" on stdout and serves until killed.
// Tests that measure the service from outside (its memory, whether /healthz answers) use it.
import { startService } from '../../src/server.ts';
import { createLogger } from '../../src/logger.ts';
import type { Config } from '../../src/config.ts';

const [target] = process.argv.slice(2);
const service = await startService(
  {
    port: 0,
    host: '127.0.0.1',
    databaseUrl: target.startsWith('postgres') ? target : undefined,
    dataDir: target.startsWith('postgres') ? '' : target,
    logLevel: 'silent',
    allowOpen: false,
    demo: 'off',
    webhooks: { enabled: false } as Config['webhooks'],
  },
  createLogger('silent'),
);
console.log(`URL ${service.url}`);
process.on('SIGTERM', () => {
  void service.stop().then(() => process.exit(0));
});
