// Errors the API returns: always JSON with a stable code and a message a person can act on; never a
// stack trace.
import type { Context } from 'hono';
import type { ContentfulStatusCode } from 'hono/utils/http-status';
import { z } from 'zod';

export class ApiError extends Error {
  constructor(
    readonly status: ContentfulStatusCode,
    readonly code: string,
    message: string,
    readonly details?: unknown,
  ) {
    super(message);
  }
}

export const errorBodySchema = z.object({
  error: z.object({
    code: z.string(),
    message: z.string(),
    details: z.unknown().optional(),
  }),
});

export function errorResponse(c: Context, status: ContentfulStatusCode, code: string, message: string, details?: unknown) {
  return c.json({ error: { code, message, ...(details === undefined ? {} : { details }) } }, status);
}

export function problemsOf(error: z.ZodError) {
  return error.issues.map((i) => ({ path: i.path.map(String).join('.'), message: i.message }));
}

// SQLSTATE codes (PostgreSQL manual, Appendix A "PostgreSQL Error Codes") that mean the database is not
// reachable right now rather than that the request was wrong: class 08 (connection exception),
// 57P01 admin_shutdown (pg_terminate_backend, a server shutdown), 57P02 crash_shutdown, 57P03
// cannot_connect_now (starting up), 3D000 invalid_catalog_name (the database was dropped), 53300
// too_many_connections.
const UNAVAILABLE_SQLSTATES = new Set(['57P01', '57P02', '57P03', '3D000', '53300']);
// Socket errors of node:net and the messages of node-postgres / pg-pool / PGlite for a lost connection.
const UNAVAILABLE_SOCKET_CODES = new Set(['ECONNREFUSED', 'ECONNRESET', 'EPIPE', 'ETIMEDOUT', 'EHOSTUNREACH', 'ENETUNREACH', 'EAI_AGAIN']);
const UNAVAILABLE_MESSAGES = /Connection terminated|terminating connection due to administrator command|timeout exceeded when trying to connect|Client has encountered a connection error|Connection ended|Cannot use a pool after calling end|Client was closed and is not queryable|PGlite is closed|database "[^"]*" does not exist/i;

/**
 * True when an error (or one of its causes: drizzle wraps driver errors in `cause`) says the database
 * cannot be reached: the API then answers 503 with Retry-After, not 500.
 */
export function isDatabaseUnavailable(error: unknown): boolean {
  for (let e = error as { code?: unknown; message?: unknown; cause?: unknown } | undefined, depth = 0; e && depth < 8; e = e.cause as typeof e, depth++) {
    const code = typeof e.code === 'string' ? e.code : '';
    if (code.startsWith('08') || UNAVAILABLE_SQLSTATES.has(code) || UNAVAILABLE_SOCKET_CODES.has(code)) return true;
    if (typeof e.message === 'string' && UNAVAILABLE_MESSAGES.test(e.message)) return true;
    if (e instanceof AggregateError && e.errors.some(isDatabaseUnavailable)) return true;
  }
  return false;
}

/** Seconds a client is asked to wait after a 503 for an unreachable database. */
export const DATABASE_RETRY_AFTER_SECONDS = 5;

export function databaseUnavailableResponse(c: Context) {
  c.header('Retry-After', String(DATABASE_RETRY_AFTER_SECONDS));
  return errorResponse(c, 503, 'database_unavailable', `The database does not answer at the moment; a write that got this answer may or may not have been stored (an import sent again is recognised and stored once). Try again in ${DATABASE_RETRY_AFTER_SECONDS} s.`);
}

/**
 * An error as it may be logged: name, code, message and stack (causes too), with the bound parameters
 * of a failed query cut out. drizzle puts them in the message ("Failed query: ...\nparams: ..."), and
 * they can hold a webhook secret being stored, a token hash, or megabytes of an imported document.
 */
export function loggableError(error: unknown, depth = 0): Record<string, unknown> {
  const e = error as { name?: string; message?: string; code?: unknown; stack?: string; cause?: unknown } | null;
  if (!e || typeof e !== 'object') return { message: String(error) };
  const scrub = (s: string | undefined) => s?.replace(/\nparams: [\s\S]*?(?=\n\s+at |\ncaused by|$)/g, '\nparams: (not logged)');
  return {
    type: e.name,
    ...(e.code === undefined ? {} : { code: e.code }),
    message: scrub(e.message),
    stack: scrub(e.stack),
    ...(e.cause && depth < 4 ? { cause: loggableError(e.cause, depth + 1) } : {}),
  };
}

/**
 * The database refused a value the request carried: SQLSTATE class 22 "data exception" (a number out of
 * range for its column, text with a NUL byte or invalid encoding, an impossible date) or 54000
 * "program_limit_exceeded" (a text too long for an index entry) (PostgreSQL manual, Appendix A). The
 * API answers 400 with the database's reason (shortened) instead of 500: validation should have caught
 * it, and the request, not the service, is what needs to change.
 */
export function valueRefusedByDatabase(error: unknown): string | null {
  for (let e = error as { code?: unknown; message?: unknown; cause?: unknown } | undefined, depth = 0; e && depth < 8; e = e.cause as typeof e, depth++) {
    const code = typeof e.code === 'string' ? e.code : '';
    if (/^22[0-9A-Z]{3}$/.test(code) || code === '54000') {
      const reason = typeof e.message === 'string' ? e.message.slice(0, 300) : code;
      return `The database refused a value of this request: ${reason}.`;
    }
  }
  return null;
}
