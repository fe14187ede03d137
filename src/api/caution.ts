// The usual caution, carried in the JSON answers that give verdicts or predictions, so a system that
// acts on them automatically receives it too. Answers that already carry their own caution keep it.
import type { MiddlewareHandler } from 'hono';
import { pathMatches } from '../auth/policy.ts';
import { DECISION_CAUTION } from '../caution.ts';

export const API_CAUTION = DECISION_CAUTION;

/** Answers that judge a heat, a supply or a band, or predict a curve or a part's hardness. */
export const CAUTION_PATHS: readonly string[] = [
  '/api/v1/heats/{id}/review',
  '/api/v1/predict',
  '/api/v1/capability',
  '/api/v1/band-trials',
  '/api/v1/part-requirement',
  '/api/v1/charts/{kind}',
  '/api/v1/data-quality',
  '/api/v1/quench/equivalence',
  '/api/v1/alerts',
  '/api/v1/alerts/{id}',
  '/api/v1/models/fit',
  '/api/v1/models/{id}',
  '/api/v1/monitoring/{grade}/series',
  '/api/v1/receiving/agreement',
  '/api/v1/receiving/plan',
  '/api/v1/curve-figures',
];

export function cautionFor(path: string): boolean {
  return CAUTION_PATHS.some((p) => pathMatches(p, path));
}

/** Adds `caution` to a successful JSON object answer of a path above (unless it has one). */
export function cautionMiddleware(): MiddlewareHandler {
  return async (c, next) => {
    await next();
    const res = c.res;
    if (res.status < 200 || res.status >= 300 || !cautionFor(c.req.path)) return;
    if (!(res.headers.get('content-type') ?? '').includes('application/json')) return;
    const body: unknown = await res.clone().json().catch(() => undefined);
    if (body === null || typeof body !== 'object' || Array.isArray(body) || 'caution' in body) return;
    const headers = new Headers(res.headers);
    headers.delete('content-length');
    c.res = new Response(JSON.stringify({ ...body, caution: API_CAUTION }), { status: res.status, headers });
  };
}
