// The pure parts of access control: the route policy, loopback detection, token secrets.
import { describe, expect, test } from 'vitest';
import { createHash } from 'node:crypto';
import { ACCESS_RULES, allows, pathMatches, requiredAccess, rolesAllowed } from '../../src/auth/policy.ts';
import { isLoopbackAddress, isLoopbackHost } from '../../src/auth/local.ts';
import { bearerToken, generateTokenSecret, hashTokenSecret, AuthorizationHeaderError, TOKEN_PREFIX } from '../../src/auth/tokens.ts';

describe('policy', () => {
  test('patterns match concrete paths segment by segment', () => {
    expect(pathMatches('/api/v1/heats/{id}', '/api/v1/heats/12')).toBe(true);
    expect(pathMatches('/api/v1/heats/{id}', '/api/v1/heats/{id}')).toBe(true);
    expect(pathMatches('/api/v1/heats/{id}', '/api/v1/heats')).toBe(false);
    expect(pathMatches('/api/v1/heats/{id}', '/api/v1/heats/12/tests')).toBe(false);
    expect(pathMatches('/api/v1/webhooks/*', '/api/v1/webhooks/3/deliveries/9/retry')).toBe(true);
    expect(pathMatches('/api/v1/webhooks/*', '/api/v1/webhooks')).toBe(false);
    expect(pathMatches('/api/v1/heats', '/api/v1/heats/')).toBe(true);
  });
  test('roles form a ladder; mills only where a rule names them', () => {
    const band = requiredAccess('POST', '/api/v1/grades/8620H/bands');
    expect(band).toEqual({ minRole: 'engineer', mill: false });
    expect(allows({ role: 'viewer' }, band)).toBe(false);
    expect(allows({ role: 'engineer' }, band)).toBe(true);
    expect(allows({ role: 'admin' }, band)).toBe(true);
    expect(allows({ role: 'mill' }, band)).toBe(false);
    expect(allows(undefined, band)).toBe(false);
    const cert = requiredAccess('POST', '/api/v1/certificates');
    expect(allows({ role: 'mill' }, cert)).toBe(true);
    expect(allows({ role: 'viewer' }, cert)).toBe(false);
    expect(allows(undefined, requiredAccess('GET', '/healthz'))).toBe(true);
    expect(requiredAccess('HEAD', '/api/v1/heats')).toEqual(requiredAccess('GET', '/api/v1/heats'));
  });
  test('unlisted routes default to viewer for reads and engineer for writes, never mills', () => {
    for (const path of ['/api/v1/capability', '/api/v1/charts/8620H/BRENNWALD', '/api/v1/models/3/predictions', '/', '/heats/5']) {
      expect(requiredAccess('GET', path)).toEqual({ minRole: 'viewer', mill: false });
      expect(requiredAccess('POST', path)).toEqual({ minRole: 'engineer', mill: false });
      expect(requiredAccess('DELETE', path)).toEqual({ minRole: 'engineer', mill: false });
    }
  });
  test('predictions and band trials compute without storing, so a viewer may post them; baselines and fits need engineer', () => {
    expect(requiredAccess('POST', '/api/v1/predict')).toEqual({ minRole: 'viewer', mill: false });
    expect(requiredAccess('POST', '/api/v1/band-trials')).toEqual({ minRole: 'viewer', mill: false });
    expect(requiredAccess('POST', '/api/v1/baselines').minRole).toBe('engineer');
    expect(requiredAccess('POST', '/api/v1/models/fit').minRole).toBe('engineer');
  });
  test('webhooks and tokens are admin whatever the method', () => {
    for (const m of ['GET', 'POST', 'DELETE']) expect(requiredAccess(m, '/api/v1/webhooks/4/deliveries').minRole).toBe('admin');
    expect(rolesAllowed(requiredAccess('GET', '/api/v1/webhooks'))).toEqual(['admin']);
  });
  test('no rule is shadowed by an earlier one', () => {
    ACCESS_RULES.forEach((rule, i) => {
      const earlier = ACCESS_RULES.slice(0, i).find((r) => (r.method === '*' || r.method === rule.method) && pathMatches(r.path, rule.path));
      expect(earlier, `${rule.method} ${rule.path}`).toBeUndefined();
    });
  });
});

describe('loopback', () => {
  // 127.0.0.0/8 is loopback (RFC 1122 §3.2.1.3); ::1 is the IPv6 loopback (RFC 4291 §2.5.3);
  // ::ffff:a.b.c.d is an IPv4-mapped address (RFC 4291 §2.5.5.2).
  test.each([
    ['127.0.0.1', true],
    ['127.8.9.10', true],
    ['::1', true],
    ['::ffff:127.0.0.1', true],
    ['10.0.0.1', false],
    ['0.0.0.0', false],
    ['::', false],
    ['::ffff:10.0.0.1', false],
    ['128.0.0.1', false],
  ])('%s -> %s', (address, expected) => expect(isLoopbackAddress(address)).toBe(expected));
  test('hosts', () => {
    expect(isLoopbackHost('localhost')).toBe(true);
    expect(isLoopbackHost('[::1]')).toBe(true);
    expect(isLoopbackHost('0.0.0.0')).toBe(false);
    expect(isLoopbackHost('example.internal')).toBe(false);
  });
});

describe('token secrets', () => {
  test('32 random bytes, base64url, with a recognisable prefix; never the same twice', () => {
    const a = generateTokenSecret();
    const b = generateTokenSecret();
    expect(a.startsWith(TOKEN_PREFIX)).toBe(true);
    // 32 bytes in unpadded base64url are ceil(32 * 4 / 3) = 43 characters (RFC 4648 §5).
    expect(a.slice(TOKEN_PREFIX.length)).toMatch(/^[A-Za-z0-9_-]{43}$/);
    expect(a).not.toBe(b);
  });
  test('the stored digest is SHA-256 hex: FIPS 180-4 example "abc"', () => {
    // SHA-256("abc") from the FIPS 180-4 examples (NIST CSRC, SHA256.pdf).
    expect(hashTokenSecret('abc')).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
    expect(hashTokenSecret('abc')).toBe(createHash('sha256').update('abc').digest('hex'));
  });
  test('bearer header parsing (RFC 6750 §2.1)', () => {
    expect(bearerToken(undefined)).toBeNull();
    expect(bearerToken('Bearer eqt_abc-_1')).toBe('eqt_abc-_1');
    expect(bearerToken('bearer   eqt_x')).toBe('eqt_x');
    expect(() => bearerToken('Basic dXNlcjpwYXNz')).toThrow(AuthorizationHeaderError);
    expect(() => bearerToken('Bearer a b')).toThrow(AuthorizationHeaderError);
  });
});
