// Writes each operation's access rule into the OpenAPI document, from the same policy the middleware
// enforces: `x-required-role` (the lowest role), `x-roles` (every role that may call it), a bearer
// security requirement, and a "Role: ..." sentence in the description when the route has none.
import { ACCESS_RULES, describeAccess, requiredAccess, rolesAllowed, type AccessRule } from './policy.ts';

const METHODS = ['get', 'put', 'post', 'delete', 'patch', 'head', 'options'] as const;

type Operation = { description?: string; security?: unknown; [key: string]: unknown };
type OpenApiDocument = { paths?: object; components?: object };

export const BEARER_SCHEME = 'bearerToken';

export function annotateRoles<T extends OpenApiDocument>(doc: T, rules: readonly AccessRule[] = ACCESS_RULES): T {
  const components = (doc.components ??= {}) as { securitySchemes?: Record<string, unknown> };
  const paths = (doc.paths ?? {}) as Record<string, Record<string, unknown>>;
  components.securitySchemes = {
    ...(components.securitySchemes ?? {}),
    [BEARER_SCHEME]: {
      type: 'http',
      scheme: 'bearer',
      description: 'An API token made with `endquench token create`. While no token exists, only requests from the machine itself are served.',
    },
  };
  for (const [path, item] of Object.entries(paths)) {
    for (const method of METHODS) {
      const op = item[method] as Operation | undefined;
      if (!op) continue;
      const access = requiredAccess(method, path, rules);
      op['x-required-role'] = access.minRole;
      op['x-roles'] = rolesAllowed(access);
      op.security = access.minRole === 'public' ? [] : [{ [BEARER_SCHEME]: [] }];
      if (!/\bRole:/.test(op.description ?? '')) op.description = [op.description, describeAccess(access)].filter(Boolean).join(' ');
    }
  }
  return doc;
}
