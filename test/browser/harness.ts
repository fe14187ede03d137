// A real service on the demo data and a headless Debian chromium to look at it (never a downloaded
// browser). Requests that leave this machine are refused and recorded, so a page that needs the internet fails.
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { serve, type ServerType } from '@hono/node-server';
import { chromium, type Browser, type Page } from 'playwright-core';
import { createApp } from '../../src/api/app.ts';
import { createLogger } from '../../src/logger.ts';
import { INGEST_RULES } from '../../src/alerts/rules/index.ts';
import { loadDemo, type DemoSummary } from '../../seed/load.ts';
import { createTestDatabase, type TestDatabase } from '../helpers/testDatabase.ts';

export const CHROMIUM = '/usr/lib/chromium/chromium';
export const CHROMIUM_ARGS = ['--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync'];
export const SCREENSHOTS = join(process.cwd(), 'test-output', 'screenshots');

export interface Site {
  url: string;
  database: TestDatabase;
  demo: DemoSummary;
  browser: Browser;
  close(): Promise<void>;
}

export async function startSite(): Promise<Site> {
  const database = await createTestDatabase();
  const demo = await loadDemo(database.db);
  const app = createApp({ database, logger: createLogger('silent'), access: { afterWrite: INGEST_RULES } });
  const server: ServerType = await new Promise((resolve) => {
    const s = serve({ fetch: app.fetch, port: 0, hostname: '127.0.0.1' }, () => resolve(s));
  });
  const address = server.address();
  const port = typeof address === 'object' && address ? address.port : 0;
  const browser = await chromium.launch({ executablePath: CHROMIUM, args: CHROMIUM_ARGS });
  mkdirSync(SCREENSHOTS, { recursive: true });
  return {
    url: `http://127.0.0.1:${port}`,
    database,
    demo,
    browser,
    close: async () => {
      await browser.close();
      await new Promise<void>((resolve) => server.close(() => resolve()));
      await database.close();
    },
  };
}

export interface Visit {
  page: Page;
  /** Console errors, uncaught page errors, failed and refused requests. */
  problems: string[];
  status: number;
  close(): Promise<void>;
}

/** Opens a path at a viewport width, recording every problem the browser reports. */
export async function visit(site: Site, path: string, width = 1280): Promise<Visit> {
  const context = await site.browser.newContext({ viewport: { width, height: width < 600 ? 844 : 900 }, acceptDownloads: true });
  const page = await context.newPage();
  const problems: string[] = [];
  page.on('console', (m) => {
    if (m.type() === 'error') problems.push(`console: ${m.text()}`);
  });
  page.on('pageerror', (e) => problems.push(`page error: ${e.message}`));
  page.on('requestfailed', (r) => problems.push(`request failed: ${r.url()} ${r.failure()?.errorText ?? ''}`));
  await page.route('**/*', (route) => {
    const u = new URL(route.request().url());
    if (u.origin === site.url || u.protocol === 'data:' || u.protocol === 'blob:') return route.continue();
    problems.push(`left the machine: ${u.href}`);
    return route.abort();
  });
  const response = await page.goto(site.url + path, { waitUntil: 'load' });
  return { page, problems, status: response?.status() ?? 0, close: () => context.close() };
}

export interface ChartState {
  id: string;
  rendered: string | null;
  marks: number;
}

/** Waits until every chart on the page has been drawn (or failed), then counts each one's marks. */
export async function chartsOf(page: Page): Promise<ChartState[]> {
  await page.waitForFunction(() => [...document.querySelectorAll('figure[data-chart]')].every((f) => f.getAttribute('data-rendered') !== null), null, { timeout: 30_000 });
  return page.$$eval('figure[data-chart]', (figures) =>
    figures.map((f) => ({ id: f.id, rendered: f.getAttribute('data-rendered'), marks: f.querySelectorAll('svg g.role-mark > *').length })),
  );
}

/** Whether the page is wider than the window (a horizontal scroll bar on the whole page). */
export async function overflowsHorizontally(page: Page): Promise<boolean> {
  return page.evaluate(() => document.documentElement.scrollWidth > window.innerWidth + 1);
}

export async function screenshot(page: Page, name: string): Promise<void> {
  await page.screenshot({ path: join(SCREENSHOTS, `${name}.png`), fullPage: true });
}

/** The elements sticking out past the window's right edge (for a failure message). */
export async function widest(page: Page): Promise<string> {
  return page.evaluate(() =>
    [...document.querySelectorAll('body *')]
      .filter((e) => e.getBoundingClientRect().right > window.innerWidth + 1 && !e.closest('.table-wrap'))
      .slice(0, 5)
      .map((e) => `${e.tagName.toLowerCase()}.${[...e.classList].join('.')} ${Math.round(e.getBoundingClientRect().right)}px`)
      .join(', '),
  );
}
