// Markup and formulas in every text field of a certificate, shown by the pages in Debian's chromium:
// nothing runs (no script, no event handler, no injected element), the text appears as typed, and the
// CSV downloads of those pages neutralise formulas (OWASP "CSV Injection": a leading = + - @ tab or CR
// gets a single quote). Invented mill and heats; 8620H is a standard designation.
import { serve, type ServerType } from '@hono/node-server';
import { chromium, type Browser } from 'playwright-core';
import { afterAll, beforeAll, expect, test } from 'vitest';
import { createApp } from '../../src/api/app.ts';
import { createLogger } from '../../src/logger.ts';
import { INGEST_RULES } from '../../src/alerts/rules/index.ts';
import { createTestDatabase, type TestDatabase } from '../helpers/testDatabase.ts';
import { certificate } from '../fixtures/certificates.ts';
import { CHROMIUM, CHROMIUM_ARGS } from './harness.ts';

const PAYLOADS = [
  '<script>window.__pwned=1</script>',
  '"><img src=x onerror="window.__pwned=2">',
  "'><svg onload=window.__pwned=3>",
  '=HYPERLINK("http://x.example","y")',
  '+1+1',
  '@SUM(A1)',
  '-2+3',
  '\u202Eevil\u202C',
];

let database: TestDatabase;
let server: ServerType;
let browser: Browser;
let base = '';
const heatIds: number[] = [];

beforeAll(async () => {
  database = await createTestDatabase();
  const app = createApp({ database, logger: createLogger('silent'), access: { afterWrite: INGEST_RULES } });
  const post = async (path: string, body: unknown) => (await app.request(path, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify(body) })).json();
  await post('/api/v1/mills', { code: 'HOSTILE', name: PAYLOADS[1] });
  await post('/api/v1/grades', { code: '8620H', distanceSystem: 'mm' });
  for (const [i, p] of PAYLOADS.entries()) {
    const r = await post('/api/v1/certificates?createMissing=true', {
      ...certificate({ mill: 'HOSTILE', heatNumber: `${p}#${i}`, certificateNumber: `${p}@c${i}` }),
      lots: [{ lotNumber: `${p}~l${i}`, receivedDate: '2025-04-01', massKg: 1000, barDiameterMm: 40, purchaseOrder: p }],
      tests: [{ ...certificate().tests[0], laboratory: p }],
    });
    expect(r.items?.[0]?.heatId, JSON.stringify(r).slice(0, 300)).toBeGreaterThan(0);
    heatIds.push(r.items[0].heatId);
  }
  server = await new Promise((resolve) => {
    const s = serve({ fetch: app.fetch, port: 0, hostname: '127.0.0.1' }, () => resolve(s));
  });
  base = `http://127.0.0.1:${(server.address() as { port: number }).port}`;
  browser = await chromium.launch({ executablePath: CHROMIUM, args: CHROMIUM_ARGS });
});
afterAll(async () => {
  await browser?.close();
  if (server) await new Promise<void>((resolve) => server.close(() => resolve()));
  await database?.close();
});

test('pages that show heat, certificate, lot, order, laboratory and mill names escape them; their CSV downloads neutralise formulas', async () => {
  const paths = ['/mills', '/heats', '/heats?mill=HOSTILE', ...heatIds.map((id) => `/heats/${id}`), '/alerts', '/receiving'];
  const context = await browser.newContext();
  const problems: string[] = [];
  const csvLinks = new Set<string>();
  let shown = 0;
  for (const path of paths) {
    const page = await context.newPage();
    page.on('dialog', (d) => {
      problems.push(`${path}: a dialog opened (${d.message()})`);
      void d.dismiss();
    });
    const response = await page.goto(base + path, { waitUntil: 'load' });
    expect(response?.status(), path).toBeLessThan(500);
    const state = await page.evaluate(() => ({
      pwned: (window as unknown as { __pwned?: number }).__pwned ?? null,
      injected: document.querySelectorAll('img[src="x"], svg[onload], [onerror]').length,
      text: document.body.innerText,
      links: [...document.querySelectorAll('a[href*="csv="]')].map((a) => (a as HTMLAnchorElement).href),
    }));
    if (state.pwned !== null) problems.push(`${path}: a payload ran (window.__pwned = ${state.pwned})`);
    if (state.injected) problems.push(`${path}: ${state.injected} injected element(s)`);
    // The text is shown as typed (at least one payload appears literally on every heat page).
    if (path.startsWith('/heats/')) {
      const i = heatIds.indexOf(Number(path.split('/')[2]));
      if (!state.text.includes(`${PAYLOADS[i]}#${i}`)) problems.push(`${path}: the heat number is not shown as typed`);
      else shown++;
    }
    for (const l of state.links) csvLinks.add(l);
    await page.close();
  }
  await context.close();
  expect(problems).toEqual([]);
  expect(shown).toBe(PAYLOADS.length);

  // Every CSV table those pages offer: a text cell never starts with a formula trigger.
  let cells = 0;
  const bad: string[] = [];
  for (const link of csvLinks) {
    const text = await (await fetch(link)).text();
    for (const line of text.replace(/^\uFEFF/, '').split('\r\n')) {
      for (const m of line.matchAll(/(?:^|,)"((?:[^"]|"")*)"/g)) {
        cells++;
        if (/^[=+\-@\t\r\n]/.test(m[1])) bad.push(`${link}: ${m[1].slice(0, 60)}`);
      }
    }
  }
  expect(bad).toEqual([]);
  expect(csvLinks.size).toBeGreaterThan(0);
  expect(cells).toBeGreaterThan(0);
  console.info(`[hostile pages] ${paths.length} pages, ${csvLinks.size} CSV tables (${cells} text cells) checked`);
}, 240_000);
