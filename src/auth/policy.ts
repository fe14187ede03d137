// Who may call what: one table of rules keyed by method and path pattern, the single source of truth
// for the access middleware and for the role printed beside every operation in the OpenAPI document.
//
// Roles: viewer reads; engineer also writes bands, grades, mills, baselines, models and acknowledges
// alerts; admin also manages webhooks and tokens. A mill token is outside that ladder: it may only do
// what a rule explicitly grants to mills (send its own certificates and imports, read its own heats).
// A route no rule names gets the safest sensible default: under /api a read needs viewer and a write
// needs engineer, and mills are refused; web pages (GET outside /api) need viewer.
import type { Role } from '../api/context.ts';

export type { Role };
export type StaffRole = Exclude<Role, 'mill'>;

export interface Access {
  /** 'public' needs no token at all. */
  minRole: StaffRole | 'public';
  /** Whether a mill token may call it (its routes then restrict it to its own mill). */
  mill: boolean;
}

export interface AccessRule extends Access {
  method: string;
  /** Path in OpenAPI form: {name} matches one segment; a trailing /* matches the rest. */
  path: string;
  why?: string;
}

const RANK: Record<StaffRole, number> = { viewer: 1, engineer: 2, admin: 3 };

const rule = (method: string, path: string, minRole: Access['minRole'], mill = false): AccessRule => ({ method, path, minRole, mill });

/** Listed rules; the first match wins. */
export const ACCESS_RULES: readonly AccessRule[] = [
  rule('GET', '/healthz', 'public'),
  rule('GET', '/openapi.json', 'public'),
  // Signing in a browser (the token is checked by the page itself).
  rule('*', '/sign-in', 'public'),
  rule('POST', '/sign-out', 'public'),
  // Catalog and heats: mills read the catalog and their own heats.
  rule('GET', '/api/v1/mills', 'viewer', true),
  rule('POST', '/api/v1/mills', 'engineer'),
  rule('GET', '/api/v1/grades', 'viewer', true),
  rule('POST', '/api/v1/grades', 'engineer'),
  rule('GET', '/api/v1/grades/{code}/bands', 'viewer', true),
  rule('POST', '/api/v1/grades/{code}/bands', 'engineer'),
  rule('GET', '/api/v1/heats', 'viewer', true),
  rule('GET', '/api/v1/heats/{id}', 'viewer', true),
  // Ingest: mills send their own certificates and files.
  rule('POST', '/api/v1/certificates', 'engineer', true),
  rule('POST', '/api/v1/imports', 'engineer', true),
  rule('GET', '/api/v1/imports/{id}', 'viewer'),
  // Analysis: predictions and band trials compute without storing anything, so reading is enough;
  // baselines and model fits change what charts and predictions use (engineer, by the default for writes).
  rule('POST', '/api/v1/predict', 'viewer'),
  rule('POST', '/api/v1/band-trials', 'viewer'),
  // Alerts.
  rule('GET', '/api/v1/alerts', 'viewer'),
  rule('GET', '/api/v1/alerts/{id}', 'viewer'),
  rule('POST', '/api/v1/alerts/{id}/ack', 'engineer'),
  rule('POST', '/api/v1/alerts/{id}/resolve', 'engineer'),
  // Webhooks and tokens are administration.
  rule('*', '/api/v1/webhooks', 'admin'),
  rule('*', '/api/v1/webhooks/*', 'admin'),
  // Reserved for a token API; tokens are managed with `endquench token` today.
  rule('*', '/api/v1/tokens', 'admin'),
  rule('*', '/api/v1/tokens/*', 'admin'),
];

const READ_METHODS = new Set(['GET', 'HEAD', 'OPTIONS']);

/** The access a request needs. `path` may be concrete (/api/v1/heats/12) or a pattern (/api/v1/heats/{id}). */
export function requiredAccess(method: string, path: string, rules: readonly AccessRule[] = ACCESS_RULES): Access {
  const m = method.toUpperCase();
  const lookup = m === 'HEAD' ? 'GET' : m;
  const found = rules.find((r) => (r.method === '*' || r.method === lookup) && pathMatches(r.path, path));
  if (found) return { minRole: found.minRole, mill: found.mill };
  return defaultAccess(m, path);
}

/** The default for a route no rule names. */
export function defaultAccess(method: string, path: string): Access {
  // The same for the API and for web pages: a read needs viewer, anything else engineer; never mills.
  void path;
  return { minRole: READ_METHODS.has(method.toUpperCase()) ? 'viewer' : 'engineer', mill: false };
}

export function pathMatches(pattern: string, path: string): boolean {
  const p = split(pattern);
  const s = split(path);
  const wildcard = p[p.length - 1] === '*';
  if (wildcard) {
    if (s.length < p.length) return false;
  } else if (p.length !== s.length) return false;
  for (let i = 0; i < p.length; i++) {
    if (wildcard && i === p.length - 1) return true;
    if (isParam(p[i])) continue;
    if (p[i] !== s[i]) return false;
  }
  return true;
}

const split = (path: string) => path.replace(/\/+$/, '').split('/').filter((x, i) => i === 0 || x !== '');
const isParam = (segment: string) => /^\{[^}]+\}$/.test(segment) || segment.startsWith(':');

export interface Caller {
  role: Role;
}

/** Whether a caller (or nobody, for undefined) may use a route with this access. */
export function allows(caller: Caller | undefined, access: Access): boolean {
  if (access.minRole === 'public') return true;
  if (!caller) return false;
  if (caller.role === 'mill') return access.mill;
  return RANK[caller.role] >= RANK[access.minRole];
}

/** The roles that may call a route, lowest first, for documentation. */
export function rolesAllowed(access: Access): Role[] {
  if (access.minRole === 'public') return [];
  const staff = (Object.keys(RANK) as StaffRole[]).filter((r) => RANK[r] >= RANK[access.minRole as StaffRole]);
  return access.mill ? [...staff, 'mill'] : staff;
}

/** One line for an OpenAPI description. */
export function describeAccess(access: Access): string {
  if (access.minRole === 'public') return 'Role: public (no token needed).';
  return `Role: ${access.minRole}${access.mill ? ' (mill tokens too, limited to their own mill)' : ''}.`;
}

export const isRole = (value: string): value is Role => value === 'viewer' || value === 'engineer' || value === 'admin' || value === 'mill';
