// Every route and method in /openapi.json, and every page, called by each of: no token, viewer,
// engineer, admin, mill A, mill B. The expected answer comes from the role the document states for the
// operation (x-required-role / x-roles) and the role the access guide (docs/access-and-alerts.md) gives
// it: a read needs viewer, a write engineer, webhooks and tokens admin, mills only what is granted to them.
// A route added later is covered without touching this file; one whose documented role departs from the
// guide's rule fails until it is listed in DEPARTURES below with its reason.
// Then: mill tokens never see the other mill's data through any filter, export, chart, report or alert;
// no secret reaches the logs; the sign-in cookie's flags; cross-site form posts with a signed-in cookie.
import { Writable } from 'node:stream';
import pino from 'pino';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { createApp } from '../../src/api/app.ts';
import { createToken } from '../../src/db/tokens.ts';
import { createTestDatabase, type TestDatabase } from '../helpers/testDatabase.ts';
import { certificate } from '../fixtures/certificates.ts';
import { FORM_PATHS, PAGE_PATHS } from '../../src/web/routes.ts';
import { raiseAlert } from '../../src/db/alerts.ts';

type Who = 'none' | 'viewer' | 'engineer' | 'admin' | 'millA' | 'millB';
const WHO: Who[] = ['none', 'viewer', 'engineer', 'admin', 'millA', 'millB'];
const RANK = { viewer: 1, engineer: 2, admin: 3 } as const;

/** Operations whose documented role departs from the guide's general rule, and why. */
const DEPARTURES: Record<string, { role: 'public' | 'viewer' | 'engineer' | 'admin'; why: string }> = {
  'GET /healthz': { role: 'public', why: 'health checks of load balancers carry no token' },
  'GET /openapi.json': { role: 'public', why: 'the contract is public' },
  'POST /api/v1/predict': { role: 'viewer', why: 'computes without storing' },
  'POST /api/v1/band-trials': { role: 'viewer', why: 'computes without storing' },
};
/** Operations the guide opens to mill tokens (their own mill only). */
const MILL_GRANTS = new Set(['GET /api/v1/mills', 'GET /api/v1/grades', 'GET /api/v1/grades/{code}/bands', 'GET /api/v1/heats', 'GET /api/v1/heats/{id}', 'POST /api/v1/certificates', 'POST /api/v1/imports']);

/** The role the guide gives an operation. */
function guideRole(method: string, path: string): 'public' | 'viewer' | 'engineer' | 'admin' {
  const key = `${method.toUpperCase()} ${path}`;
  if (DEPARTURES[key]) return DEPARTURES[key].role;
  if (/^\/api\/v1\/(webhooks|tokens)(\/|$)/.test(path)) return 'admin';
  return method.toUpperCase() === 'GET' ? 'viewer' : 'engineer';
}

const logLines: string[] = [];
const logSink = new Writable({
  write(chunk, _enc, done) {
    logLines.push(chunk.toString());
    done();
  },
});

let database: TestDatabase;
let app: ReturnType<typeof createApp>;
const secrets: Partial<Record<Who, string>> = {};
let heatA = 0;
let heatB = 0;
let doc: any;
const SECRET_HEAT_B = 'OSV-PRIVATE-77';

async function call(method: string, path: string, who: Who, options: { body?: string; headers?: Record<string, string> } = {}) {
  const headers: Record<string, string> = { ...(options.headers ?? {}) };
  if (who !== 'none') headers.authorization = `Bearer ${secrets[who]}`;
  if (options.body !== undefined) headers['content-type'] ??= 'application/json';
  const response = await app.request(path, { method, headers, body: options.body });
  const text = await response.text();
  let code: string | undefined;
  try {
    code = JSON.parse(text)?.error?.code;
  } catch {
    /* a page or CSV */
  }
  return { status: response.status, code, text, headers: response.headers };
}

/** A concrete path for a pattern: ids of mill B's heat (the one a mill A token must not reach), the grade's code. */
function concrete(pattern: string, heat: number): string {
  return pattern
    .replace(/\{code\}/g, '8620H')
    .replace(/\{kind\}/g, 'individuals')
    .replace(/\{[^}]*\}/g, String(heat))
    .replace(/\/\*$/, pattern.startsWith('/grades') ? '/8620H' : pattern.startsWith('/heats') ? `/${heat}` : '/nothing-here');
}

const denied = (r: { status: number; code?: string }) => r.status === 401 || (r.status === 403 && (r.code === 'forbidden' || r.code === undefined)) || r.status === 303;

beforeAll(async () => {
  database = await createTestDatabase();
  const logger = pino({ level: 'trace', base: { service: 'endquench' } }, logSink);
  app = createApp({ database, logger });
  // While no token exists the in-process caller is the local administrator: set up two mills' data.
  for (const [code, name] of [['BRENNWALD', 'Brennwald Stahl (invented)'], ['OSTRAVEK', 'Ostravek Ocel (invented)']]) {
    expect((await app.request('/api/v1/mills', { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ code, name }) })).status).toBeLessThan(300);
  }
  await app.request('/api/v1/grades', { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ code: '8620H', distanceSystem: 'mm' }) });
  const post = async (c: unknown) => (await app.request('/api/v1/certificates', { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify(c) })).json();
  heatA = (await post(certificate({ heatNumber: 'BW-OWN-1' }))).items[0].heatId;
  heatB = (await post(certificate({ mill: 'OSTRAVEK', heatNumber: SECRET_HEAT_B, certificateNumber: 'OS-77' }))).items[0].heatId;
  expect(heatA).toBeGreaterThan(0);
  expect(heatB).toBeGreaterThan(0);
  await database.db.transaction((tx) =>
    raiseAlert(tx, { rule: 'route_roles_test', severity: 'warning', causeKey: 'rr-1', title: `about heat ${SECRET_HEAT_B}`, refs: { heatId: heatB }, evidence: { heat: SECRET_HEAT_B } } as never),
  );
  doc = await (await app.request('/openapi.json')).json();
  for (const [who, input] of Object.entries({
    viewer: { name: 'rr-viewer', role: 'viewer' as const },
    engineer: { name: 'rr-engineer', role: 'engineer' as const },
    admin: { name: 'rr-admin', role: 'admin' as const },
    millA: { name: 'rr-mill-a', role: 'mill' as const, mill: 'BRENNWALD' },
    millB: { name: 'rr-mill-b', role: 'mill' as const, mill: 'OSTRAVEK' },
  })) {
    secrets[who as Who] = (await createToken(database.db, input)).secret;
  }
}, 60_000);
afterAll(async () => database?.close());

function operations(): Array<{ method: string; path: string; op: any }> {
  const out = [];
  for (const [path, item] of Object.entries<any>(doc.paths)) for (const method of ['get', 'post', 'put', 'patch', 'delete']) if (item[method]) out.push({ method, path, op: item[method] });
  return out;
}

describe('every operation in /openapi.json x every caller', () => {
  test('the documented role is the guide\'s, and the service enforces it', async () => {
    const ops = operations();
    expect(ops.length).toBeGreaterThan(20);
    const table: string[] = [];
    const wrong: string[] = [];
    for (const { method, path, op } of ops) {
      const key = `${method.toUpperCase()} ${path}`;
      const documented = op['x-required-role'];
      // The document states the guide's role; mills exactly where the guide grants them.
      if (documented !== guideRole(method, path)) wrong.push(`${key}: documented ${documented}, guide ${guideRole(method, path)}`);
      const millAllowed = (op['x-roles'] as string[]).includes('mill');
      if (millAllowed !== MILL_GRANTS.has(key)) wrong.push(`${key}: mill ${millAllowed ? 'allowed' : 'refused'} by the document, ${MILL_GRANTS.has(key) ? 'granted' : 'not granted'} by the guide`);
      const row: string[] = [];
      for (const who of WHO) {
        // Mill A aims at mill B's heat and mill B at mill A's; staff at mill B's.
        const path1 = concrete(path, who === 'millB' ? heatA : heatB);
        const r = await call(method.toUpperCase(), path1, who, method === 'get' || method === 'delete' ? {} : { body: '{}' });
        const expectAllowed =
          documented === 'public' ? true : who === 'none' ? false : who === 'millA' || who === 'millB' ? millAllowed : RANK[who] >= RANK[documented as keyof typeof RANK];
        row.push(`${who}:${r.status}`);
        if (r.status >= 500) wrong.push(`${key} as ${who}: ${r.status} ${r.text.slice(0, 200)}`);
        if (expectAllowed === denied(r)) wrong.push(`${key} as ${who}: ${r.status} ${r.code ?? ''} but ${documented} ${expectAllowed ? 'allows' : 'refuses'} it`);
        if (!expectAllowed && who === 'none' && r.status !== 401) wrong.push(`${key} without a token: ${r.status}, not 401`);
      }
      table.push(`${key.padEnd(55)} ${documented.padEnd(8)} ${row.join(' ')}`);
    }
    expect(wrong, table.join('\n')).toEqual([]);
    console.info(`[route x role] ${ops.length} operations x ${WHO.length} callers\n${table.join('\n')}`);
  }, 120_000);

  test('every page x every caller: staff roles read them, mills and anonymous callers do not', async () => {
    const pages = ['/', ...PAGE_PATHS.filter((p) => !p.startsWith('/assets'))];
    const wrong: string[] = [];
    for (const page of pages) {
      const path = concrete(page, heatB);
      for (const who of WHO) {
        const r = await call('GET', path, who, { headers: { accept: 'text/html' } });
        if (r.status >= 500) wrong.push(`${path} as ${who}: ${r.status}`);
        const allowed = who === 'viewer' || who === 'engineer' || who === 'admin';
        if (who === 'none') {
          // A person without a token is sent to sign in.
          if (!(r.status === 303 && (r.headers.get('location') ?? '').startsWith('/sign-in'))) wrong.push(`${path} without a token: ${r.status}, not a redirect to /sign-in`);
        } else if (allowed === denied(r)) wrong.push(`${path} as ${who}: ${r.status} ${r.code ?? ''}`);
        if ((who === 'millA' || who === 'millB') && r.text.includes(SECRET_HEAT_B)) wrong.push(`${path} as ${who} shows mill B's heat`);
      }
    }
    expect(wrong).toEqual([]);
  }, 120_000);
});

describe('mill scope', () => {
  test("mill A never sees mill B's data through any filter, export, chart, report or alert it may call", async () => {
    const leaks: string[] = [];
    let calls = 0;
    for (const { method, path, op } of operations()) {
      if (method !== 'get' || !(op['x-roles'] as string[]).includes('mill')) continue;
      const params = ((op.parameters ?? []) as Array<{ name: string; in: string }>).filter((p) => p.in === 'query').map((p) => p.name);
      const variants: Array<Record<string, string>> = [{}];
      for (const name of params) {
        if (/mill/i.test(name)) variants.push({ [name]: 'OSTRAVEK' });
        if (/heat/i.test(name)) variants.push({ [name]: String(heatB) }, { [name]: SECRET_HEAT_B });
        if (/format|export/i.test(name)) variants.push({ [name]: 'csv' });
        if (/limit/i.test(name)) variants.push({ [name]: '1000' });
      }
      for (const heat of [heatB, heatA]) {
        for (const v of variants) {
          const query = new URLSearchParams(v).toString();
          const r = await call('GET', `${concrete(path, heat)}${query ? `?${query}` : ''}`, 'millA');
          calls++;
          if (r.status >= 500) leaks.push(`${path}?${query}: ${r.status}`);
          if (r.text.includes(SECRET_HEAT_B)) leaks.push(`${path}?${query} (${r.status}) shows mill B's heat ${SECRET_HEAT_B}`);
        }
      }
    }
    // And everything a mill may not call at all (alerts, charts, reports, exports) is refused outright.
    for (const { method, path, op } of operations()) {
      if (method !== 'get' || (op['x-roles'] as string[]).includes('mill') || op['x-required-role'] === 'public') continue;
      const r = await call('GET', concrete(path, heatB), 'millA');
      calls++;
      if (r.status !== 403) leaks.push(`${path}: ${r.status} for a mill token`);
      if (r.text.includes(SECRET_HEAT_B)) leaks.push(`${path} shows mill B's heat`);
    }
    expect(leaks).toEqual([]);
    expect(calls).toBeGreaterThan(10);
  });
});

describe('secrets', () => {
  test('no token or webhook secret reaches the logs, whatever the request', async () => {
    const made = await call('POST', '/api/v1/webhooks', 'admin', { body: JSON.stringify({ url: 'http://127.0.0.1:9/hook', events: ['*'] }) });
    expect(made.status).toBe(201);
    const webhookSecret = JSON.parse(made.text).secret as string;
    await call('GET', '/api/v1/mills', 'none', { headers: { authorization: `Bearer ${secrets.admin}x` } });
    await call('GET', '/api/v1/heats/not-a-number', 'engineer');
    await call('POST', '/api/v1/imports?format=json', 'engineer', { body: '[{"broken": ' });
    await call('GET', '/mills', 'none', { headers: { cookie: `endquench_token=${secrets.viewer}`, accept: 'text/html' } });
    // A failure while a secret is being stored: the failed insert's parameters hold the new webhook
    // secret, and the error is logged. (A second database whose subscription table is gone.)
    const other = await createTestDatabase();
    const otherLines: string[] = [];
    const otherApp = createApp({ database: other, logger: pino({ level: 'trace' }, new Writable({ write: (c, _e, done) => (otherLines.push(c.toString()), done()) })) });
    try {
      const { sql } = await import('drizzle-orm');
      await other.db.execute(sql`drop table outbox`);
      await other.db.execute(sql`drop table webhook_subscriptions`);
      const failed = await otherApp.request('/api/v1/webhooks', { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ url: 'http://127.0.0.1:9/hook', events: ['*'] }) });
      expect(failed.status).toBe(500);
    } finally {
      await other.close();
    }
    const theirs = otherLines.join('');
    expect(theirs).toMatch(/webhook_subscriptions/); // the failure was logged, with its query
    expect(theirs).not.toMatch(/eqwh_/); // but not the secret among its parameters
    const all = logLines.join('');
    for (const secret of [...Object.values(secrets), webhookSecret]) expect(all).not.toContain(secret!);
  });

  test('the sign-in cookie is HttpOnly, SameSite=Strict, path /, and Secure behind https', async () => {
    const form = (origin: string) => ({ body: new URLSearchParams({ token: secrets.viewer!, next: '/mills' }).toString(), headers: { 'content-type': 'application/x-www-form-urlencoded', origin } });
    const plain = await app.request('http://localhost/sign-in', { method: 'POST', ...form('http://localhost') });
    const cookie = plain.headers.get('set-cookie') ?? '';
    expect(cookie).toMatch(/endquench_token=/);
    expect(cookie).toMatch(/HttpOnly/i);
    expect(cookie).toMatch(/SameSite=Strict/i);
    expect(cookie).toMatch(/Path=\//i);
    const tls = await app.request('https://quality.example/sign-in', { method: 'POST', ...form('https://quality.example') });
    expect(tls.headers.get('set-cookie') ?? '').toMatch(/Secure/i);
  });

  test('with a signed-in cookie, a form post from another site is refused on every form path', async () => {
    const cookie = `endquench_token=${secrets.admin}`;
    const refused: string[] = [];
    for (const pattern of FORM_PATHS) {
      const path = concrete(pattern, heatA).replace('/nothing-here', '/1');
      const r = await app.request(`http://localhost${path}`, {
        method: 'POST',
        headers: { cookie, origin: 'https://elsewhere.example', 'content-type': 'application/x-www-form-urlencoded' },
        body: 'note=x',
      });
      if (r.status !== 403) refused.push(`${path}: ${r.status}`);
    }
    expect(refused).toEqual([]);
  });
});
