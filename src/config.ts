// Configuration from the environment, read once and validated, so a typo fails at start with a clear message.
import { resolve } from 'node:path';
import { z } from 'zod';

const schema = z.object({
  PORT: z.coerce.number().int().min(1).max(65535).default(8080),
  HOST: z.string().min(1).default('127.0.0.1'),
  DATABASE_URL: z.string().url().optional(),
  ENDQUENCH_DATA_DIR: z.string().min(1).default('./data'),
  LOG_LEVEL: z.enum(['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent']).default('info'),
});

export interface Config {
  port: number;
  host: string;
  databaseUrl?: string;
  dataDir: string;
  logLevel: z.infer<typeof schema>['LOG_LEVEL'];
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
  };
}
