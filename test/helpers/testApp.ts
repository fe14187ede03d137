// An app over a fresh test database, called in-process (no socket).
import { createApp } from '../../src/api/app.ts';
import { createLogger } from '../../src/logger.ts';
import { createTestDatabase, type TestDatabase } from './testDatabase.ts';

export interface TestApp {
  database: TestDatabase;
  app: ReturnType<typeof createApp>;
  request(method: string, path: string, body?: unknown, headers?: Record<string, string>): Promise<{ status: number; body: any; headers: Headers }>;
  close(): Promise<void>;
}

export async function createTestApp(): Promise<TestApp> {
  const database = await createTestDatabase();
  const app = createApp({ database, logger: createLogger('silent') });
  return {
    database,
    app,
    async request(method, path, body, headers = {}) {
      const init: RequestInit = { method, headers: { ...headers } };
      if (body instanceof Uint8Array || typeof body === 'string') init.body = body as BodyInit;
      else if (body instanceof FormData) init.body = body;
      else if (body !== undefined) {
        init.body = JSON.stringify(body);
        (init.headers as Record<string, string>)['content-type'] = 'application/json';
      }
      const response = await app.request(path, init);
      const text = await response.text();
      let parsed: unknown = text;
      try {
        parsed = JSON.parse(text);
      } catch {
        /* not JSON */
      }
      return { status: response.status, body: parsed, headers: response.headers };
    },
    close: () => database.close(),
  };
}
