// The part-to-band page on the demo data in Debian's chromium: the form's default question ("45 mm bar,
// oil, centre, 40 HRC") answers with a distance, a band minimum and each mill's share; both charts draw;
// no console error, no sideways scrolling at 1280 px or 390 px.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { chartsOf, overflowsHorizontally, screenshot, startSite, visit, widest, type Site } from './harness.ts';

let site: Site;
beforeAll(async () => {
  site = await startSite();
});
afterAll(async () => {
  await site?.close();
});

describe('part to band on the demo data', () => {
  for (const width of [1280, 390]) {
    it(`at ${width} px: answers the default question and draws the section`, async () => {
      const v = await visit(site, '/part-to-band?grade=4140-D&diameter=45&medium=oil&location=centre&hrc=40&run=1', width);
      try {
        expect(v.status).toBe(200);
        const charts = await chartsOf(v.page);
        expect(charts.length).toBe(2);
        for (const c of charts) {
          expect(c.rendered, `${c.id} drawn`).toBe('true');
          expect(c.marks, `${c.id} has marks`).toBeGreaterThan(0);
        }
        const answer = await v.page.locator('#part-answer').innerText();
        expect(answer).toMatch(/Equivalent end-quench distance: \d+\.\d mm/);
        expect(await v.page.locator('#band-minimum').innerText()).toMatch(/^at least 40 HRC at \d+ mm$/);
        const mills = await v.page.locator('#part-results .table-block table').first().innerText();
        expect(mills).toContain('QUELLMARK');
        expect(mills).toContain('VARNHOLT');
        expect(await v.page.locator('p.caution').count()).toBeGreaterThan(0);
        await screenshot(v.page, `part-to-band-${width}`);
        expect(await overflowsHorizontally(v.page), `no sideways scrolling; widest: ${await widest(v.page)}`).toBe(false);
        expect(v.problems).toEqual([]);
      } finally {
        await v.close();
      }
    }, 120_000);
  }
});
