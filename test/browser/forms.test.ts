// The pages' forms end to end in Debian's chromium on the demo data: freezing a baseline from Trends,
// acknowledging and resolving an alert raised by a real out-of-band certificate, replaying history
// under an edited band, and downloading a chart's data as CSV and its drawing as SVG.
import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { certificate } from '../fixtures/certificates.ts';
import { chartsOf, screenshot, startSite, visit, type Site } from './harness.ts';

let site: Site;

beforeAll(async () => {
  site = await startSite();
});

afterAll(async () => {
  await site?.close();
});

describe('Trends: freezing a baseline', () => {
  it('freezes limits from the chosen window and the charts then use them, with the window shaded', async () => {
    const v = await visit(site, '/trends?grade=20MnCr5-D&mill=QUELLMARK&distance=7');
    try {
      await chartsOf(v.page);
      expect(await v.page.locator('#chart-individuals .origin').textContent()).toContain('phase I');
      // The form proposes the first heats of the series; keep its start, end the window with 2024.
      const from = await v.page.locator('#freeze-baseline input[name="from"]').inputValue();
      expect(from).toMatch(/^2023-/);
      await v.page.fill('#freeze-baseline input[name="to"]', '2024-12-31');
      await v.page.selectOption('#freeze-baseline select[name="scope"]', 'one');
      await v.page.fill('#freeze-baseline input[name="reason"]', 'steady year after the mill audit');
      await Promise.all([v.page.waitForURL(/done=/), v.page.click('#freeze-baseline button[type="submit"]')]);
      expect(await v.page.locator('#done').textContent()).toContain('Baseline frozen for 1 distance');
      const charts = await chartsOf(v.page);
      for (const c of charts) expect(c.rendered, c.id).toBe('true');
      const origin = await v.page.locator('#chart-individuals .origin').textContent();
      expect(origin).toContain('frozen baseline');
      expect(origin).toContain(`${from} to 2024-12-31`);
      // The baseline window is drawn as a shaded rectangle behind the individuals chart.
      expect(await v.page.locator('#chart-individuals svg g.mark-rect.role-mark path').count()).toBeGreaterThan(0);
      expect(await v.page.locator('table', { hasText: 'steady year after the mill audit' }).count()).toBe(1);
      await screenshot(v.page, 'trends-after-baseline-1280');
      expect(v.problems).toEqual([]);
    } finally {
      await v.close();
    }
  });
});

describe('Alerts: acknowledge and resolve', () => {
  it('an out-of-band certificate raises an alert that the page acknowledges and resolves with notes', async () => {
    const heatNumber = 'Q26-WEBTEST';
    const cert = certificate({
      mill: 'QUELLMARK',
      grade: '20MnCr5-D',
      heatNumber,
      castDate: '2026-11-20',
      certificateNumber: 'QM-WEB-1',
      certificateDate: '2026-11-25',
      tests: [{ source: 'mill_certificate', basis: 'measured', distanceSystem: 'mm', readings: [1.5, 3, 5, 7, 9, 11, 13, 15, 20, 25].map((at) => ({ at, hrc: 18 })) }],
    });
    const sent = await fetch(`${site.url}/api/v1/certificates`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify(cert) });
    expect(sent.status).toBe(201);
    const listed = (await (await fetch(`${site.url}/api/v1/alerts?status=open`)).json()) as { alerts: Array<{ id: number; heat: { heatNumber: string } | null }> };
    const alert = listed.alerts.find((a) => a.heat?.heatNumber === heatNumber);
    expect(alert, 'the out_of_band rule raised an alert').toBeDefined();
    const id = alert!.id;

    const v = await visit(site, '/alerts?status=open');
    try {
      const row = v.page.locator('tr', { has: v.page.locator(`#alert-${id}`) });
      await row.locator('form[action$="/ack"] input[name="note"]').fill('asked the mill for the retained sample');
      await Promise.all([v.page.waitForURL(/done=/), row.locator('form[action$="/ack"] button').click()]);
      expect(await v.page.locator('#done').textContent()).toContain(`Alert #${id} acknowledged`);
      // The list kept its filter (open only): the acknowledged alert has left it.
      expect(await v.page.locator(`#alert-${id}`).count()).toBe(0);
      let body = (await (await fetch(`${site.url}/api/v1/alerts/${id}`)).json()) as { status: string; acknowledged: { by: string; note: string } | null };
      expect(body.status).toBe('acknowledged');
      expect(body.acknowledged).toMatchObject({ by: 'local', note: 'asked the mill for the retained sample' });

      await v.page.goto(`${site.url}/alerts?status=acknowledged`);
      const again = v.page.locator('tr', { has: v.page.locator(`#alert-${id}`) });
      expect(await again.locator('.status').textContent()).toBe('acknowledged');
      expect(await again.textContent()).toContain('asked the mill for the retained sample');
      await again.locator('form[action$="/resolve"] input[name="note"]').fill('re-test passed; lot released by QA');
      await Promise.all([v.page.waitForURL(/done=/), again.locator('form[action$="/resolve"] button').click()]);
      expect(await v.page.locator('#done').textContent()).toContain(`Alert #${id} resolved`);
      body = (await (await fetch(`${site.url}/api/v1/alerts/${id}`)).json()) as typeof body & { resolved: { by: string; note: string } | null };
      expect(body.status).toBe('resolved');
      expect((body as unknown as { resolved: unknown }).resolved).toMatchObject({ by: 'local', note: 're-test passed; lot released by QA' });
      await screenshot(v.page, 'alerts-after-resolve-1280');
      expect(v.problems).toEqual([]);
    } finally {
      await v.close();
    }
  });

  it('a form posted from another site is refused', async () => {
    const response = await fetch(`${site.url}/alerts/1/ack`, { method: 'POST', headers: { 'content-type': 'application/x-www-form-urlencoded', origin: 'http://elsewhere.example' }, body: 'note=x' });
    expect(response.status).toBe(403);
  });
});

describe('Band trial', () => {
  it('replays history under an edited band and shows the results as tables and charts', async () => {
    const v = await visit(site, '/band-trial?grade=20MnCr5-D');
    try {
      const firstMin = v.page.locator('#trial-form input[name="min"]').first();
      const before = Number(await firstMin.inputValue());
      expect(Number.isFinite(before)).toBe(true);
      await firstMin.fill(String(before + 3));
      await Promise.all([v.page.waitForURL(/run=1/), v.page.click('#trial-form button[type="submit"]')]);
      await v.page.waitForSelector('#trial-results');
      const charts = await chartsOf(v.page);
      expect(charts.length).toBe(2);
      for (const c of charts) {
        expect(c.rendered, c.id).toBe('true');
        expect(c.marks, c.id).toBeGreaterThan(0);
      }
      const summary = v.page.locator('#trial-results table').first();
      expect(await summary.locator('tbody tr').count()).toBeGreaterThanOrEqual(2);
      // The edited limit is the one replayed.
      expect(await v.page.locator('#trial-form input[name="min"]').first().inputValue()).toBe(String(before + 3));
      await screenshot(v.page, 'band-trial-results-1280');
      expect(v.problems).toEqual([]);
    } finally {
      await v.close();
    }
  });
});

describe('Downloads', () => {
  it('a chart saves as SVG and its data as CSV with formula-looking text neutralised', async () => {
    const v = await visit(site, '/mills');
    try {
      await chartsOf(v.page);
      const [svg] = await Promise.all([v.page.waitForEvent('download'), v.page.click('#chart-ppk button[data-export="svg"]')]);
      const svgText = readFileSync((await svg.path())!, 'utf8');
      expect(svgText.trimStart().startsWith('<svg')).toBe(true);
      const [csv] = await Promise.all([v.page.waitForEvent('download'), v.page.click('#chart-ppk a.button[download]')]);
      const csvText = readFileSync((await csv.path())!, 'utf8');
      expect(csvText.charCodeAt(0)).toBe(0xfeff);
      expect(csvText.split('\r\n')[0]).toBe('\uFEFF"Mill · grade","At","Ppk","95% low","95% high"');
      expect(csvText.split('\r\n').length).toBeGreaterThan(2);
      expect(v.problems).toEqual([]);
    } finally {
      await v.close();
    }
  });
});
