// Access control over the HTTP API: open to local callers only while no token exists; bearer tokens
// with roles once one does; mill tokens limited to their own mill; every operation's role in OpenAPI.
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { sql } from 'drizzle-orm';
import { createTestApp, type TestApp } from '../helpers/testApp.ts';
import { certificate } from '../fixtures/certificates.ts';
import { createToken, revokeToken } from '../../src/db/tokens.ts';
import { rowsOf } from '../../src/db/connection.ts';

let t: TestApp;
const secrets: Record<string, string> = {};
const as = (who: string) => ({ authorization: `Bearer ${secrets[who]}` });
const remote = (address: string) => ({ incoming: { socket: { remoteAddress: address } } });

async function call(method: string, path: string, who: string | null, body?: unknown, env?: unknown) {
  const headers: Record<string, string> = who ? as(who) : {};
  const init: RequestInit = { method, headers };
  if (typeof body === 'string') init.body = body;
  else if (body !== undefined) {
    init.body = JSON.stringify(body);
    headers['content-type'] = 'application/json';
  }
  const response = await t.app.request(path, init, env as never);
  const text = await response.text();
  let parsed: any = text;
  try {
    parsed = JSON.parse(text);
  } catch {
    /* not JSON */
  }
  return { status: response.status, body: parsed, headers: response.headers };
}

const heatCount = async () => rowsOf<{ n: number }>(await t.database.db.execute(sql`select count(*)::int as n from heats`))[0].n;

beforeAll(async () => {
  t = await createTestApp();
  // While no token exists, in-process (local) calls are the local administrator.
  await call('POST', '/api/v1/mills', null, { code: 'BRENNWALD', name: 'Brennwald Stahl (invented)' });
  await call('POST', '/api/v1/mills', null, { code: 'OSTRAVEK', name: 'Ostravek Ocel (invented)' });
  await call('POST', '/api/v1/grades', null, { code: '8620H', distanceSystem: 'mm' });
  expect((await call('POST', '/api/v1/certificates', null, certificate({ heatNumber: 'B-1' }))).status).toBe(201);
  expect((await call('POST', '/api/v1/certificates', null, certificate({ mill: 'OSTRAVEK', heatNumber: 'O-1', certificateNumber: 'OS-1' }))).status).toBe(201);
});
afterAll(async () => t?.close());

describe('without any token', () => {
  test('a local caller is the administrator "local"', async () => {
    const r = await call('POST', '/api/v1/grades/8620H/bands', null, { effectiveFrom: '2020-01-01', distanceSystem: 'mm', points: [{ at: 1.5, min: 30 }] });
    expect(r.status).toBe(201);
    expect(r.body.author).toBe('local');
  });
  test('a caller from another address is refused, and so is a request a proxy forwarded', async () => {
    const fromLan = await call('GET', '/api/v1/mills', null, undefined, remote('10.1.2.3'));
    expect(fromLan.status).toBe(403);
    expect(fromLan.body.error.code).toBe('local_only');
    expect((await call('GET', '/api/v1/mills', null, undefined, remote('127.0.0.1'))).status).toBe(200);
    expect((await call('GET', '/api/v1/mills', null, undefined, remote('::ffff:127.0.0.1'))).status).toBe(200);
    const app = t.app;
    const forwarded = await app.request('/api/v1/mills', { headers: { 'x-forwarded-for': '203.0.113.9' } }, remote('127.0.0.1') as never);
    expect(forwarded.status).toBe(403);
  });
  test('health and the OpenAPI document stay public from anywhere', async () => {
    expect((await call('GET', '/healthz', null, undefined, remote('10.1.2.3'))).status).toBe(200);
    expect((await call('GET', '/openapi.json', null, undefined, remote('10.1.2.3'))).status).toBe(200);
  });
});

describe('with tokens', () => {
  beforeAll(async () => {
    const db = t.database.db;
    for (const [key, input] of Object.entries({
      viewer: { name: 'vera', role: 'viewer' as const },
      engineer: { name: 'enzo', role: 'engineer' as const },
      admin: { name: 'ada', role: 'admin' as const },
      mill: { name: 'brennwald-portal', role: 'mill' as const, mill: 'BRENNWALD' },
      revoked: { name: 'old', role: 'admin' as const },
    })) {
      secrets[key] = (await createToken(db, input)).secret;
    }
    const { rows } = (await db.execute(sql`select id from api_tokens where name = 'old'`)) as unknown as { rows: Array<{ id: number }> };
    await revokeToken(db, rows[0].id);
  });

  test('only the hash is stored', async () => {
    const stored = rowsOf<{ secret_hash: string }>(await t.database.db.execute(sql`select secret_hash from api_tokens`));
    const all = stored.map((s) => s.secret_hash).join(' ');
    for (const secret of Object.values(secrets)) expect(all).not.toContain(secret);
    expect(stored.every((s) => /^[0-9a-f]{64}$/.test(s.secret_hash))).toBe(true);
  });

  test('no token, an unknown token, a revoked token or a malformed header: 401 with a Bearer challenge', async () => {
    const none = await call('GET', '/api/v1/mills', null);
    expect(none.status).toBe(401);
    expect(none.headers.get('www-authenticate')).toMatch(/^Bearer/);
    expect((await t.app.request('/api/v1/mills', { headers: { authorization: 'Bearer eqt_nothing' } })).status).toBe(401);
    expect((await call('GET', '/api/v1/mills', 'revoked')).status).toBe(401);
    expect((await t.app.request('/api/v1/mills', { headers: { authorization: `Basic ${secrets.admin}` } })).status).toBe(401);
    // Public routes still need nothing.
    expect((await call('GET', '/healthz', null)).status).toBe(200);
    expect((await call('GET', '/openapi.json', null)).status).toBe(200);
  });

  test('viewer reads but cannot post a band; engineer can, and is recorded as its author', async () => {
    expect((await call('GET', '/api/v1/heats', 'viewer')).status).toBe(200);
    const band = { effectiveFrom: '2021-01-01', distanceSystem: 'mm', points: [{ at: 1.5, min: 30 }] };
    const refused = await call('POST', '/api/v1/grades/8620H/bands', 'viewer', band);
    expect(refused.status).toBe(403);
    expect(refused.body.error.code).toBe('forbidden');
    expect(refused.body.error.message).toContain('engineer');
    const posted = await call('POST', '/api/v1/grades/8620H/bands', 'engineer', band);
    expect(posted.status).toBe(201);
    expect(posted.body.author).toBe('enzo');
  });

  test('viewer cannot acknowledge alerts; engineer cannot manage webhooks; admin can', async () => {
    expect((await call('POST', '/api/v1/alerts/1/ack', 'viewer', {})).status).toBe(403);
    expect((await call('POST', '/api/v1/alerts/1/ack', 'engineer', {})).status).toBe(404); // allowed; no such alert
    expect((await call('GET', '/api/v1/webhooks', 'engineer')).status).toBe(403);
    expect((await call('POST', '/api/v1/webhooks', 'engineer', { url: 'http://127.0.0.1:9/x', events: ['alert.raised'] })).status).toBe(403);
    expect((await call('GET', '/api/v1/webhooks', 'admin')).status).toBe(200);
  });

  test('a route nobody listed gets the default: reads need viewer, writes engineer, never mills', async () => {
    // A path no route serves stands for a route added later without a rule: past the access check it
    // answers 404, so 404 means "allowed" and 401/403 mean "stopped".
    const unlisted = '/api/v1/not-yet-written/8620H';
    expect((await call('GET', unlisted, null)).status).toBe(401);
    expect((await call('GET', unlisted, 'viewer')).status).toBe(404);
    expect((await call('GET', unlisted, 'mill')).status).toBe(403);
    expect((await call('POST', unlisted, 'viewer', {})).status).toBe(403);
    expect((await call('POST', unlisted, 'engineer', {})).status).toBe(404);
    expect((await call('DELETE', unlisted, 'mill')).status).toBe(403);
    // Web pages (later, under /) need viewer to read.
    expect((await call('GET', '/mills', null)).status).toBe(401);
  });

  test('the token use is recorded', async () => {
    const [row] = rowsOf<{ last_used_at: Date | null }>(await t.database.db.execute(sql`select last_used_at from api_tokens where name = 'vera'`));
    expect(row.last_used_at).not.toBeNull();
  });
});

describe('a mill token', () => {
  test("reads its own mill's heats and gets 403 for another mill's", async () => {
    const list = await call('GET', '/api/v1/heats', 'mill');
    expect(list.status).toBe(200);
    expect(list.body.heats.map((h: { mill: string }) => h.mill)).toEqual(['BRENNWALD']);
    expect((await call('GET', '/api/v1/heats?mill=OSTRAVEK', 'mill')).status).toBe(403);
    const all = await call('GET', '/api/v1/heats', 'viewer');
    const other = all.body.heats.find((h: { mill: string }) => h.mill === 'OSTRAVEK');
    const own = all.body.heats.find((h: { mill: string }) => h.mill === 'BRENNWALD');
    const forbidden = await call('GET', `/api/v1/heats/${other.id}`, 'mill');
    expect(forbidden.status).toBe(403);
    expect(forbidden.body.error.code).toBe('forbidden_mill');
    expect((await call('GET', `/api/v1/heats/${own.id}`, 'mill')).status).toBe(200);
    const mills = await call('GET', '/api/v1/mills', 'mill');
    expect(mills.body.map((m: { code: string }) => m.code)).toEqual(['BRENNWALD']);
  });

  test("posts its own certificate but not another mill's", async () => {
    const own = await call('POST', '/api/v1/certificates', 'mill', certificate({ heatNumber: 'B-2', certificateNumber: 'BW-2' }));
    expect(own.status).toBe(201);
    const before = await heatCount();
    const foreign = await call('POST', '/api/v1/certificates', 'mill', certificate({ mill: 'OSTRAVEK', heatNumber: 'O-2', certificateNumber: 'OS-2' }));
    expect(foreign.status).toBe(403);
    expect(await heatCount()).toBe(before);
  });

  test("an import file naming another mill's heat is refused whole, inside the ingest transaction", async () => {
    const before = await heatCount();
    const doc = JSON.stringify([
      certificate({ heatNumber: 'B-3', certificateNumber: 'BW-3' }),
      certificate({ mill: 'OSTRAVEK', heatNumber: 'O-3', certificateNumber: 'OS-3' }),
    ]);
    const r = await call('POST', '/api/v1/imports?format=json', 'mill', doc);
    expect(r.status).toBe(403);
    expect(r.body.error.code).toBe('forbidden_mill');
    expect(await heatCount()).toBe(before);
    const ownOnly = await call('POST', '/api/v1/imports?format=json', 'mill', JSON.stringify([certificate({ heatNumber: 'B-3', certificateNumber: 'BW-3' })]));
    expect(ownOnly.status).toBe(201);
    expect(await heatCount()).toBe(before + 1);
  });

  test('cannot read alerts, imports or change the catalog', async () => {
    expect((await call('GET', '/api/v1/alerts', 'mill')).status).toBe(403);
    expect((await call('GET', '/api/v1/imports/1', 'mill')).status).toBe(403);
    expect((await call('POST', '/api/v1/mills', 'mill', { code: 'X', name: 'X' })).status).toBe(403);
    expect((await call('POST', '/api/v1/grades/8620H/bands', 'mill', { effectiveFrom: '2021-01-01', distanceSystem: 'mm', points: [{ at: 1.5, min: 30 }] })).status).toBe(403);
  });
});

describe('OpenAPI document', () => {
  test('every operation carries its role, from the same policy the middleware enforces', async () => {
    const doc = (await call('GET', '/openapi.json', null)).body;
    const ops: Array<[string, string, any]> = [];
    for (const [path, item] of Object.entries<any>(doc.paths)) for (const [method, op] of Object.entries<any>(item)) ops.push([method, path, op]);
    expect(ops.length).toBeGreaterThan(10);
    for (const [method, path, op] of ops) {
      expect(['viewer', 'engineer', 'admin', 'public'], `${method} ${path}`).toContain(op['x-required-role']);
      expect(op.description, `${method} ${path}`).toMatch(/Role:/);
    }
    const role = (method: string, path: string) => doc.paths[path][method]['x-required-role'];
    expect(role('post', '/api/v1/grades/{code}/bands')).toBe('engineer');
    expect(role('get', '/api/v1/heats/{id}')).toBe('viewer');
    expect(doc.paths['/api/v1/heats/{id}'].get['x-roles']).toEqual(['viewer', 'engineer', 'admin', 'mill']);
    expect(doc.paths['/api/v1/certificates'].post['x-roles']).toEqual(['engineer', 'admin', 'mill']);
    expect(role('post', '/api/v1/alerts/{id}/ack')).toBe('engineer');
    expect(role('post', '/api/v1/webhooks')).toBe('admin');
    expect(role('delete', '/api/v1/webhooks/{id}')).toBe('admin');
    expect(doc.components.securitySchemes.bearerToken).toMatchObject({ type: 'http', scheme: 'bearer' });
  });
});

describe('a mill token and dry runs', () => {
  test("a dry run naming another mill's heat is refused before anything about that heat is reported", async () => {
    const doc = JSON.stringify([certificate({ mill: 'OSTRAVEK', heatNumber: 'O-1', certificateNumber: 'OS-1' })]);
    const r = await call('POST', '/api/v1/imports?format=json&dryRun=true', 'mill', doc);
    expect(r.status).toBe(403);
    expect(r.body.error.code).toBe('forbidden_mill');
    expect(JSON.stringify(r.body)).not.toMatch(/differences|heatId/);
  });
});

describe('without tokens: pages of other sites cannot act as the local administrator', () => {
  // OWASP Cross-Site Request Forgery Prevention Cheat Sheet: check Origin / Sec-Fetch-Site on requests that change data.
  test('a cross-site POST is refused, a same-origin one is served, reads stay open', async () => {
    const open = await createTestApp();
    try {
      const body = JSON.stringify({ code: 'X1', name: 'X one' });
      const foreign = await open.request('POST', 'http://localhost/api/v1/mills', body, { 'content-type': 'text/plain', origin: 'https://pages.example' });
      expect(foreign.status).toBe(403);
      expect(foreign.body.error.code).toBe('cross_site_refused');
      const fetchMeta = await open.request('POST', 'http://localhost/api/v1/mills', body, { 'content-type': 'application/json', 'sec-fetch-site': 'cross-site' });
      expect(fetchMeta.status).toBe(403);
      const own = await open.request('POST', 'http://localhost/api/v1/mills', body, { 'content-type': 'application/json', origin: 'http://localhost' });
      expect(own.status).toBe(200);
      expect((await open.request('GET', 'http://localhost/api/v1/mills', undefined, { origin: 'https://pages.example' })).status).toBe(200);
    } finally {
      await open.close();
    }
  });

  test('a request addressed to another host name (DNS rebinding) is refused', async () => {
    const open = await createTestApp();
    try {
      const r = await open.request('GET', 'http://rebound.example:8080/api/v1/mills');
      expect(r.status).toBe(403);
      expect(r.body.error.message).toMatch(/addressed to localhost/);
    } finally {
      await open.close();
    }
  });
});

describe('a mill token cannot slip data past its scope', () => {
  test("accept-valid does not let a mill write its own rows from a document that names another mill's heat", async () => {
    const before = await heatCount();
    const doc = JSON.stringify([
      certificate({ heatNumber: 'B-AV-1', certificateNumber: 'BW-AV-1' }),
      certificate({ mill: 'OSTRAVEK', heatNumber: 'O-AV-1', certificateNumber: 'OS-AV-1' }),
    ]);
    const r = await call('POST', '/api/v1/imports?format=json&acceptValid=true', 'mill', doc);
    expect(r.status).toBe(403);
    expect(await heatCount()).toBe(before);
  });

  test('create-missing is ignored for a mill token: it cannot add a grade to the catalogue', async () => {
    const r = await call('POST', '/api/v1/certificates?createMissing=true', 'mill', certificate({ heatNumber: 'B-NG-1', certificateNumber: 'BW-NG-1', grade: 'NEW-GRADE-BY-MILL' }));
    expect(r.status).toBe(422);
    expect(JSON.stringify(r.body), JSON.stringify(r.body)).toMatch(/grade \\"NEW-GRADE-BY-MILL\\" is not on file/);
    const grades = await call('GET', '/api/v1/grades', 'viewer');
    expect(grades.body.map((g: { code: string }) => g.code)).not.toContain('NEW-GRADE-BY-MILL');
  });
});

describe('signing a browser in', () => {
  // Runs after tokens exist (earlier describe blocks create them).
  test('a page without a token sends a person to the sign-in page; the API still answers 401', async () => {
    const page = await t.app.request('/mills', { headers: { accept: 'text/html' } });
    expect(page.status).toBe(303);
    expect(page.headers.get('location')).toBe('/sign-in?next=%2Fmills');
    expect((await t.app.request('/api/v1/mills', { headers: { accept: 'text/html' } })).status).toBe(401);
  });

  test('a valid token sets an HttpOnly, SameSite=Strict cookie that then opens pages and the API; a wrong one does not', async () => {
    const form = (token: string) => new URLSearchParams({ token, next: '/alerts' });
    const wrong = await t.app.request('/sign-in', { method: 'POST', body: form('eqt_not-a-token'), headers: { origin: 'http://localhost' } });
    expect(wrong.status).toBe(401);
    const right = await t.app.request('/sign-in', { method: 'POST', body: form(secrets.viewer), headers: { origin: 'http://localhost' } });
    expect(right.status).toBe(303);
    expect(right.headers.get('location')).toBe('/alerts');
    const cookie = right.headers.get('set-cookie')!;
    expect(cookie).toMatch(/HttpOnly/);
    expect(cookie).toMatch(/SameSite=Strict/);
    const jar = cookie.split(';')[0];
    expect((await t.app.request('/api/v1/mills', { headers: { cookie: jar } })).status).toBe(200);
    // The viewer role still applies: it cannot post a band.
    const band = await t.app.request('/api/v1/grades/8620H/bands', {
      method: 'POST',
      headers: { cookie: jar, 'content-type': 'application/json' },
      body: JSON.stringify({ effectiveFrom: '2021-01-01', distanceSystem: 'mm', points: [{ at: 1.5, min: 30 }] }),
    });
    expect(band.status).toBe(403);
  });

  test('the place to return to must be a path of this site', async () => {
    const r = await t.app.request('/sign-in', { method: 'POST', body: new URLSearchParams({ token: secrets.viewer, next: '//evil.example/x' }), headers: { origin: 'http://localhost' } });
    expect(r.headers.get('location')).toBe('/mills');
  });
});
