// The access middleware: who is calling (bearer token, or the local administrator when no token
// exists yet), whether that role may use the route (policy.ts), and the hooks an ingest runs inside its
// transaction for this caller (mill scope check, then the alert rules).
import type { Context, MiddlewareHandler } from 'hono';
import type { Db, Executor } from '../db/connection.ts';
import type { ApplyResult } from '../db/certificateStore.ts';
import { findActiveToken, hasActiveTokens, heatsOutsideMill, touchToken } from '../db/tokens.ts';
import type { AppEnv, AuthInfo } from '../api/context.ts';
import { ApiError, errorResponse } from '../api/errors.ts';
import { ACCESS_RULES, allows, requiredAccess, type AccessRule } from './policy.ts';
import { AuthorizationHeaderError, bearerToken, hashTokenSecret } from './tokens.ts';
import { browserAbuseReason, isLocalRequest } from './local.ts';
import { getCookie } from 'hono/cookie';

/** The cookie a signed-in browser carries its token in (HttpOnly, SameSite=Strict). */
export const TOKEN_COOKIE = 'endquench_token';

export type AfterWriteHook = (tx: Executor, written: ApplyResult) => Promise<void>;

export interface AccessControlOptions {
  db: Db;
  /** Without tokens, serve every caller as administrator, not only local ones (ENDQUENCH_ALLOW_OPEN). */
  allowOpen?: boolean;
  /** Run in the ingest transaction after rows are written, in order (alert rules). */
  afterWrite?: readonly AfterWriteHook[];
  rules?: readonly AccessRule[];
}

/** The caller every request is when no token exists and the request comes from this machine. */
export const LOCAL_ADMIN: AuthInfo = Object.freeze({ name: 'local', role: 'admin' });

export function accessControl(options: AccessControlOptions): MiddlewareHandler<AppEnv> {
  const { db, allowOpen = false, afterWrite = [], rules = ACCESS_RULES } = options;
  return async (c, next) => {
    const access = requiredAccess(c.req.method, c.req.path, rules);
    if (access.minRole === 'public') return next();

    let token: string | null;
    try {
      // A browser signs in once (src/web/pages/signIn.tsx) and then carries the token in a cookie.
      token = bearerToken(c.req.header('authorization')) ?? getCookie(c, TOKEN_COOKIE) ?? null;
    } catch (error) {
      if (error instanceof AuthorizationHeaderError) return unauthorized(c, error.message);
      throw error;
    }
    let auth: AuthInfo;
    if (token) {
      const found = await findActiveToken(db, hashTokenSecret(token));
      if (!found) return unauthorized(c, 'The token is not valid: unknown or revoked.');
      await touchToken(db, found.id);
      auth = { name: found.name, role: found.role, ...(found.mill ? { millScope: found.mill } : {}) };
    } else {
      if (await hasActiveTokens(db)) {
        // A person opening a page is sent to the sign-in page; a program gets the 401.
        if (c.req.method === 'GET' && !c.req.path.startsWith('/api/') && (c.req.header('accept') ?? '').includes('text/html')) {
          return c.redirect(`/sign-in?next=${encodeURIComponent(c.req.path)}`, 303);
        }
        return unauthorized(c, 'This service needs a token: send "Authorization: Bearer <token>".');
      }
      const local = isLocalRequest(c);
      if (local || allowOpen) {
        const abuse = browserAbuseReason(c, { loopbackHostOnly: local && !allowOpen });
        if (abuse) return errorResponse(c, 403, 'cross_site_refused', `Refused without a token: ${abuse}. Create a token, or use the service from its own pages.`);
      }
      if (local) auth = LOCAL_ADMIN;
      else if (allowOpen) auth = { name: 'open', role: 'admin' };
      else {
        return errorResponse(
          c,
          403,
          'local_only',
          'No API token exists yet, so this service answers only requests made on its own machine. Create one with `endquench token create --role admin --name <name>`.',
        );
      }
    }
    if (!allows(auth, access)) {
      const needed = `the ${access.minRole} role`;
      const reason = auth.role === 'mill' ? 'a mill token may not use it' : `the token "${auth.name}" has the ${auth.role} role`;
      return errorResponse(c, 403, 'forbidden', `${c.req.method} ${c.req.path} needs ${needed}; ${reason}.`);
    }
    c.set('auth', auth);
    c.set('afterWrite', afterWriteFor(auth, afterWrite));
    return next();
  };
}

/** The hooks an ingest runs for this caller: a mill may only write its own mill's heats, then the rules. */
export function afterWriteFor(auth: AuthInfo, hooks: readonly AfterWriteHook[]): AfterWriteHook {
  return async (tx, written) => {
    if (auth.millScope) {
      const foreign = await heatsOutsideMill(tx, [...written.heatIds.values()], auth.millScope);
      // Thrown inside the ingest transaction: nothing of the document is written.
      if (foreign.length) {
        throw new ApiError(403, 'forbidden_mill', `This token may only send data of mill ${auth.millScope}; the document names heats of other mills.`, {
          heats: foreign,
        });
      }
    }
    for (const hook of hooks) await hook(tx, written);
  };
}

function unauthorized(c: Context, message: string) {
  // RFC 6750 §3: a protected resource answers 401 with a WWW-Authenticate: Bearer challenge.
  c.header('WWW-Authenticate', 'Bearer realm="endquench"');
  return errorResponse(c, 401, 'unauthorized', message);
}
