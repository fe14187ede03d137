// Configuration from the environment, read once and validated, so a typo fails at start with a clear message.
import { resolve } from 'node:path';
import { z } from 'zod';

const schema = z.object({
  PORT: z.coerce.number().int().min(1).max(65535).default(8080),
  HOST: z.string().min(1).default('127.0.0.1'),
  DATABASE_URL: z.string().url().optional(),
  ENDQUENCH_DATA_DIR: z.string().min(1).default('./data'),
  LOG_LEVEL: z.enum(['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent']).default('info'),
  /** Serve a non-local HOST although no API token exists (everyone is then administrator). */
  ENDQUENCH_ALLOW_OPEN: z.enum(['0', '1', 'true', 'false']).default('0'),
  /** Webhook dispatcher: off to run it elsewhere; attempts before dead; pause between rounds; answer timeout; first back-off. */
  ENDQUENCH_WEBHOOKS: z.enum(['on', 'off']).default('on'),
  /** Load the invented demo plant when the embedded database is empty (auto), or start empty (off). */
  ENDQUENCH_DEMO: z.enum(['auto', 'off']).default('auto'),
  /** Default schedule: 20 attempts, first back-off 60 s, ceiling 4 h = 24.1-48.3 h before a dead letter (src/alerts/backoff.ts). */
  ENDQUENCH_WEBHOOK_MAX_ATTEMPTS: z.coerce.number().int().min(1).max(100).default(20),
  ENDQUENCH_WEBHOOK_INTERVAL_MS: z.coerce.number().int().min(50).default(2000),
  ENDQUENCH_WEBHOOK_TIMEOUT_MS: z.coerce.number().int().min(100).default(10_000),
  ENDQUENCH_WEBHOOK_BACKOFF_MS: z.coerce.number().int().min(1).default(60_000),
  ENDQUENCH_WEBHOOK_BACKOFF_MAX_MS: z.coerce.number().int().min(1).default(4 * 3_600_000),
});

export interface Config {
  port: number;
  host: string;
  databaseUrl?: string;
  dataDir: string;
  logLevel: z.infer<typeof schema>['LOG_LEVEL'];
  /** See ENDQUENCH_ALLOW_OPEN. */
  allowOpen?: boolean;
  /** See ENDQUENCH_DEMO. */
  demo?: 'auto' | 'off';
  /** Webhook dispatcher settings; absent means the defaults of createDispatcher. */
  webhooks?: { enabled: boolean; maxAttempts: number; intervalMs: number; timeoutMs: number; baseDelayMs: number; maxDelayMs?: number };
}

export class ConfigError extends Error {}

export function loadConfig(env: NodeJS.ProcessEnv = process.env): Config {
  const cleaned = Object.fromEntries(Object.entries(env).filter(([, v]) => v !== undefined && v !== ''));
  const parsed = schema.safeParse(cleaned);
  if (!parsed.success) {
    const problems = parsed.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`).join('; ');
    throw new ConfigError(`Invalid configuration: ${problems}`);
  }
  const c = parsed.data;
  return {
    port: c.PORT,
    host: c.HOST,
    databaseUrl: c.DATABASE_URL,
    dataDir: resolve(c.ENDQUENCH_DATA_DIR),
    logLevel: c.LOG_LEVEL,
    allowOpen: c.ENDQUENCH_ALLOW_OPEN === '1' || c.ENDQUENCH_ALLOW_OPEN === 'true',
    demo: c.ENDQUENCH_DEMO,
    webhooks: {
      enabled: c.ENDQUENCH_WEBHOOKS === 'on',
      maxAttempts: c.ENDQUENCH_WEBHOOK_MAX_ATTEMPTS,
      intervalMs: c.ENDQUENCH_WEBHOOK_INTERVAL_MS,
      timeoutMs: c.ENDQUENCH_WEBHOOK_TIMEOUT_MS,
      baseDelayMs: c.ENDQUENCH_WEBHOOK_BACKOFF_MS,
      maxDelayMs: Math.max(c.ENDQUENCH_WEBHOOK_BACKOFF_MAX_MS, c.ENDQUENCH_WEBHOOK_BACKOFF_MS),
    },
  };
}
