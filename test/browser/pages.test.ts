// Every page on the demo data in Debian's chromium: it loads with status 200 and no console error or
// outside request, every chart is drawn with marks, the page does not scroll sideways at 1280 px or
// 390 px, and a screenshot of each is written to test-output/screenshots/.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { listHeats } from '../../src/db/heats.ts';
import { chartsOf, overflowsHorizontally, screenshot, startSite, visit, widest, type Site } from './harness.ts';

let site: Site;
let heatId: number;

beforeAll(async () => {
  site = await startSite();
  // A heat of the demo's "failed on receipt" story: it has a receiving re-test beside its certificate.
  const story = site.demo.stories.failedOnReceipt;
  const heats = await listHeats(site.database.db, { mill: story.mill, grade: story.grade, limit: 5000 });
  const planted = heats.heats.find((h) => h.heatNumber === story.heatNumber);
  if (!planted) throw new Error(`the demo heat ${story.heatNumber} is not on file`);
  heatId = planted.id;
});

afterAll(async () => {
  await site?.close();
});

interface PageCase {
  name: string;
  path: () => string;
  /** Charts the page must draw on the demo data. */
  minCharts: number;
  /** The page supports a decision and must say so. */
  caution: boolean;
}

const PAGES: PageCase[] = [
  { name: 'mills', path: () => '/mills', minCharts: 1, caution: true },
  { name: 'heats', path: () => '/heats?grade=20MnCr5-D', minCharts: 0, caution: false },
  { name: 'heat-sheet', path: () => `/heats/${heatId}`, minCharts: 2, caution: true },
  { name: 'alerts', path: () => '/alerts', minCharts: 0, caution: true },
  { name: 'grade', path: () => '/grades/20MnCr5-D', minCharts: 2, caution: true },
  { name: 'trends', path: () => '/trends?grade=20MnCr5-D&mill=QUELLMARK&distance=7', minCharts: 4, caution: true },
  { name: 'capability', path: () => '/capability?grade=4140-D&mill=VARNHOLT', minCharts: 3, caution: true },
  { name: 'chemistry', path: () => '/chemistry?grade=20MnCr5-D', minCharts: 4, caution: true },
  { name: 'band-trial', path: () => '/band-trial?grade=20MnCr5-D&run=1&at=1.5&min=41&max=48&at=7&min=30&max=40', minCharts: 2, caution: true },
  { name: 'receiving', path: () => '/receiving?grade=18CrNiMo7-D&mill=QUELLMARK', minCharts: 2, caution: true },
];

describe('pages on the demo data', () => {
  for (const p of PAGES) {
    for (const width of [1280, 390]) {
      it(`${p.name} at ${width} px: loads cleanly and draws every chart`, async () => {
        const v = await visit(site, p.path(), width);
        try {
          expect(v.status).toBe(200);
          const charts = await chartsOf(v.page);
          expect(charts.length).toBeGreaterThanOrEqual(p.minCharts);
          for (const c of charts) {
            expect(c.rendered, `${c.id} drawn`).toBe('true');
            expect(c.marks, `${c.id} has marks`).toBeGreaterThan(0);
          }
          await screenshot(v.page, `${p.name}-${width}`);
          if (p.caution) expect(await v.page.locator('p.caution').count(), 'a caution where a decision is made').toBeGreaterThan(0);
          expect(await overflowsHorizontally(v.page), `no sideways scrolling of the whole page; widest: ${await widest(v.page)}`).toBe(false);
          expect(v.problems).toEqual([]);
        } finally {
          await v.close();
        }
      });
    }
  }
});
