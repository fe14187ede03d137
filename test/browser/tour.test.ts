// The README's five-minute tour, page by page on the demo plant: each page shows its planted story
// (seed/README.md), and a screenshot of it is written for the README (docs/tour/ when
// ENDQUENCH_TOUR_DIR=docs/tour, otherwise test-output/screenshots/tour/).
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { listHeats } from '../../src/db/heats.ts';
import { listBands } from '../../src/db/referenceData.ts';
import { mmToSixteenths } from '../../src/hardenability/distances.ts';
import { chartsOf, SCREENSHOTS, startSite, visit, type Site } from './harness.ts';

const TOUR = process.env.ENDQUENCH_TOUR_DIR ?? join(SCREENSHOTS, 'tour');
let site: Site;

beforeAll(async () => {
  site = await startSite();
  mkdirSync(TOUR, { recursive: true });
});
afterAll(async () => site?.close());

async function heatId(mill: string, heatNumber: string): Promise<number> {
  const { heats } = await listHeats(site.database.db, { mill, limit: 100_000 });
  return heats.find((h) => h.heatNumber === heatNumber)!.id;
}

/**
 * Visits a page, checks it is clean and drawn, returns its text; writes the tour picture: the top of
 * the page, or from the element `from` down (one window high).
 */
async function stop(name: string, path: string, from?: string): Promise<string> {
  const v = await visit(site, path, 1280);
  try {
    expect(v.status).toBe(200);
    for (const c of await chartsOf(v.page)) expect(c.rendered, c.id).toBe('true');
    expect(v.problems).toEqual([]);
    if (from) {
      const box = (await v.page.locator(from).boundingBox())!;
      await v.page.screenshot({ path: join(TOUR, `${name}.png`), fullPage: true, clip: { x: 0, y: box.y - 16, width: 1280, height: 900 } });
    } else {
      await v.page.screenshot({ path: join(TOUR, `${name}.png`) });
    }
    return await v.page.locator('main').innerText();
  } finally {
    await v.close();
  }
}

describe('the five-minute tour', () => {
  it('1. Mills: a rising trend at QUELLMARK 20MnCr5-D, and SERRANIA readings more regular than measured ones (ask for raw data)', async () => {
    const text = await stop('1-mills', '/mills');
    expect(text).toMatch(/QUELLMARK\s+20MnCr5-D[^\n]*(rising|signal up)/);
    expect(text).toMatch(/SERRANIA[^\n]*ask for raw data/);
  });

  it('2. Trends: the manganese creep lifts the whole-curve level past its designed limit at QUELLMARK 20MnCr5-D', async () => {
    const text = await stop('2-trends', '/trends?grade=20MnCr5-D&mill=QUELLMARK&distance=11', 'h2:has-text("Whole curve")');
    expect(text).toMatch(/Whole curve: what the drift alerts judge/);
    expect(text).toMatch(/curve level up/);
    expect(text).toMatch(/Lag-1 autocorrelation of the curve level/);
  });

  it('3. Alerts: the drift and the copied certificate are waiting, one alert each', async () => {
    const text = await stop('3-alerts', '/alerts?status=open');
    const copy = site.demo.stories.copiedCertificate;
    expect(text).toContain(`Heat ${copy.copyHeat} (${copy.mill}, ${copy.grade}) reports the same curve and chemistry as heat ${copy.sourceHeat}`);
    const drift = site.demo.stories.manganeseCreep;
    // The rule in words (src/alerts/ruleNames.ts), then the series.
    expect(text).toMatch(new RegExp(`Curve level drifting\\s+${drift.mill} · ${drift.grade}`));
  });

  it('4. Heat sheet of the copy: the whole certificate repeats an earlier heat', async () => {
    const story = site.demo.stories.copiedCertificate;
    const text = await stop('4-heat-copied', `/heats/${await heatId(story.mill, story.copyHeat)}`, 'h2:has-text("Certificate checks")');
    expect(text).toMatch(new RegExp(`curve exact with heat ${story.sourceHeat}`));
    expect(text).toMatch(new RegExp(`chemistry exact with heat ${story.sourceHeat}`));
  });

  it('5. Heat sheet of the lot that failed on receipt although its certificate passed', async () => {
    const story = site.demo.stories.failedOnReceipt;
    const text = await stop('5-heat-failed-on-receipt', `/heats/${await heatId(story.mill, story.heatNumber)}`, 'h2:has-text("End-quench curves against the band")');
    expect(text).toMatch(/receiving inspection\s+L1\s+fail/);
    expect(text).toMatch(/mill certificate\s+[-–]\s+pass/);
  });

  it('6. Band trial: the draft tighter band for 4140-D, held by one mill and not the other', async () => {
    const story = site.demo.stories.bandTightening;
    const proposal = (await listBands(site.database.db, story.grade)).find((b) => b.version === story.proposedVersion)!;
    const query = new URLSearchParams({ grade: story.grade, run: '1', from: '2023-11-01' });
    for (const p of proposal.points) {
      query.append('at', String(p.label.startsWith('J') ? mmToSixteenths(p.distanceMm) : p.distanceMm));
      query.append('min', p.minHrc === null ? '' : String(p.minHrc));
      query.append('max', p.maxHrc === null ? '' : String(p.maxHrc));
    }
    const text = await stop('6-band-trial', `/band-trial?${query}`, '#trial-results');
    expect(text).toMatch(/What the proposal would have done/);
    expect(text).toContain(story.comfortableMill);
    expect(text).toContain(story.strugglingMill);
  });

  it('7. Receiving: the laboratory that started reading high, its chart, and the re-test plan', async () => {
    const story = site.demo.stories.labReadsHigh;
    const text = await stop('7-receiving', `/receiving?grade=${encodeURIComponent(story.grade)}&mill=${story.mill}`, '#agreement-detail');
    expect(text).toMatch(/reads high since Q26-/);
    expect(text).toMatch(/no longer agrees with ours/);
    expect(text).toContain(`${story.mill} ${story.grade}: agreement with our laboratory`);
    expect(text).toMatch(/Lots due for a re-test \(\d+\)/);
  });

  it('8. Capability: will the supply stay inside the band, and where is it closest to failing', async () => {
    const text = await stop('8-capability', '/capability?grade=4140-D&mill=VARNHOLT', '#answer');
    expect(text).toMatch(/Will it stay inside the band\?/);
    expect(text).toMatch(/Closest to failing at \S+/);
    expect(text).toMatch(/overall SDs from the band (min|max)/);
    expect(text).toMatch(/Where is it closest to failing\?/);
  });
});
