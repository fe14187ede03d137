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

const FORWARDING_HEADERS = ['forwarded', 'x-forwarded-for', 'x-real-ip'];

export function isLocalRequest(c: Context): boolean {
  if (FORWARDING_HEADERS.some((h) => c.req.header(h) !== undefined)) return false;
  const env = c.env as { incoming?: { socket?: { remoteAddress?: string } } } | undefined;
  if (!env?.incoming) return true;
  const remote = env.incoming.socket?.remoteAddress;
  return typeof remote === 'string' && isLoopbackAddress(remote);
}
