// Whether a request comes from this machine: its socket's peer is a loopback address and no proxy
// header says it was forwarded from elsewhere. A request with no socket at all is one the process made
// to itself (hono's app.request, as the tests do).
import type { Context } from 'hono';
import { isIP } from 'node:net';

/** Loopback: 127.0.0.0/8 (RFC 1122 §3.2.1.3), ::1 (RFC 4291 §2.5.3), and 127/8 mapped into IPv6. */
export function isLoopbackAddress(address: string): boolean {
  const a = address.trim().toLowerCase().replace(/^\[|\]$/g, '');
  if (a === '::1' || a === '0:0:0:0:0:0:0:1') return true;
  const v4 = a.startsWith('::ffff:') ? a.slice(7) : a;
  return isIP(v4) === 4 && v4.startsWith('127.');
}

/** A host name to bind that only this machine can reach. */
export function isLoopbackHost(host: string): boolean {
  return host.trim().toLowerCase() === 'localhost' || isLoopbackAddress(host);
}

// A proxy on the same host that adds none of these makes every caller look local: put a token in place
// before serving through one (README, Access).
const FORWARDING_HEADERS = ['forwarded', 'x-forwarded-for', 'x-real-ip', 'x-forwarded-host', 'x-forwarded-proto', 'via'];

/**
 * Whether a token-less request may be trusted as the local administrator's own, beyond its socket:
 * - for the local administrator, the Host it was addressed to is a loopback name (a page that
 *   re-points its own domain name at 127.0.0.1, "DNS rebinding", sends its own domain as Host);
 * - a request that changes data was not sent by a page of another origin (a browser sends Origin, and
 *   Sec-Fetch-Site, with cross-site requests; OWASP Cross-Site Request Forgery Prevention Cheat Sheet).
 * Returns the reason to refuse, or null.
 */
export function browserAbuseReason(c: Context, options: { loopbackHostOnly: boolean }): string | null {
  const url = new URL(c.req.url);
  if (options.loopbackHostOnly && !isLoopbackHost(url.hostname)) return `requests without a token must be addressed to localhost or a loopback address, not ${url.hostname}`;
  if (['GET', 'HEAD', 'OPTIONS'].includes(c.req.method)) return null;
  const site = c.req.header('sec-fetch-site');
  if (site && site !== 'same-origin' && site !== 'none') return 'a page of another site may not change data here';
  const origin = c.req.header('origin');
  if (origin !== undefined && origin !== url.origin) return `a page of ${origin} may not change data here`;
  return null;
}

export function isLocalRequest(c: Context): boolean {
  if (FORWARDING_HEADERS.some((h) => c.req.header(h) !== undefined)) return false;
  const env = c.env as { incoming?: { socket?: { remoteAddress?: string } } } | undefined;
  if (!env?.incoming) return true;
  const remote = env.incoming.socket?.remoteAddress;
  return typeof remote === 'string' && isLoopbackAddress(remote);
}
