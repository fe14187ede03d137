// What a request carries through the middleware: who is calling, and what runs after an ingest writes.
import type { Executor } from '../db/connection.ts';
import type { ApplyResult } from '../db/certificateStore.ts';

export type Role = 'viewer' | 'engineer' | 'admin' | 'mill';

export interface AuthInfo {
  /** Token name, or "local" when no tokens are configured and the caller is on this machine. */
  name: string;
  role: Role;
  /** Mill code a mill token is limited to. */
  millScope?: string;
}

export type AppEnv = {
  Variables: {
    auth?: AuthInfo;
    afterWrite?: (tx: Executor, written: ApplyResult) => Promise<void>;
  };
};
