// Receiving inspection on the demo plant: the planted laboratory that starts reading high
// (seed/README.md, story 6) is found by the lab_agreement alert and by nobody else's series; the re-test
// plan returns the mill whose lot failed on receipt to re-testing every lot; the API answers.
// The demo's numbers are invented; the expectations come from the planted stories.
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { listAlerts, type AlertView } from '../../src/db/alerts.ts';
import { loadDemo, type DemoSummary } from '../../seed/load.ts';
import { receivingAgreement } from '../../src/analysis/receivingAgreement.ts';
import { receivingPlans } from '../../src/analysis/receivingPlan.ts';
import { plantRepeatability } from '../../src/analysis/receivingRepeatability.ts';
import { SCENARIO } from '../../seed/scenario.ts';
import { buildPeriodReport, renderReportCsv, renderReportHtml } from '../../src/analysis/report.ts';
import { createTestApp, type TestApp } from '../helpers/testApp.ts';

let t: TestApp;
let summary: DemoSummary;
let alerts: AlertView[];

beforeAll(async () => {
  t = await createTestApp();
  summary = await loadDemo(t.database.db);
  alerts = (await listAlerts(t.database.db, { rule: 'lab_agreement', limit: 1000 })).alerts;
}, 300_000);
afterAll(async () => t?.close());

describe(`receiving inspection on the demo plant (${process.env.TEST_DATABASE_URL ? 'postgres' : 'test database'})`, () => {
  test('the laboratory that reads high raises one lab_agreement alert, on the high side, at a heat cast after the planted date', () => {
    const story = summary.stories.labReadsHigh;
    expect(alerts).toHaveLength(1);
    const [a] = alerts;
    expect(a).toMatchObject({ mill: story.mill, grade: story.grade, severity: 'warning' });
    expect(a!.causeKey.endsWith(':high')).toBe(true);
    expect(story.pairedHeatsAfter).toContain(a!.heat?.heatNumber);
    expect(a!.evidence.castDate as string >= story.from).toBe(true);
    // Found within a few pairs of the shift (the story has six pairs after it).
    expect(story.pairedHeatsAfter.indexOf(a!.heat!.heatNumber)).toBeLessThan(4);
  });

  test('the agreement study shows the shift after the date and the plant\'s own small offset everywhere else', async () => {
    const story = SCENARIO.stories.labReadsHigh;
    const [study] = await receivingAgreement(t.database.db, { grade: story.grade, mill: story.mill });
    const before = study!.pairList.filter((p) => p.castDate < story.from);
    const after = study!.pairList.filter((p) => p.castDate >= story.from);
    const mean = (xs: number[]) => xs.reduce((s, x) => s + x, 0) / xs.length;
    // The plant's laboratory reads 0.3 HRC low (scenario.receiving.biasHrc), so mill − plant ≈ +0.3 before.
    expect(Math.abs(mean(before.map((p) => p.bias)) + SCENARIO.receiving.biasHrc)).toBeLessThan(0.5);
    expect(mean(after.map((p) => p.bias)) - mean(before.map((p) => p.bias))).toBeGreaterThan(1);
    expect(study!.chart!.firstSignal?.side).toBe('high');
    // No other series' chart signals.
    for (const grade of ['20MnCr5-D', '18CrNiMo7-D', '4140-D', '8620-D'])
      for (const s of await receivingAgreement(t.database.db, { grade })) {
        if (s.mill === story.mill && grade === story.grade) continue;
        expect(s.chart?.firstSignal ?? null, `${s.mill} ${grade}`).toBeNull();
      }
  });

  test('the plan: the failed lot sends its mill back to re-testing every lot; the drifting laboratory blocks skipping', async () => {
    const { plans, asOf } = await receivingPlans(t.database.db);
    expect(asOf).not.toBeNull();
    const failed = summary.stories.failedOnReceipt;
    const v = plans.find((p) => p.mill === failed.mill && p.grade === failed.grade)!;
    expect(v.decision.state).toBe('full');
    expect(v.decision.lastRejection?.lotKey).toBe(`${failed.heatNumber}/${failed.lotNumber}`);
    const lab = summary.stories.labReadsHigh;
    const q = plans.find((p) => p.mill === lab.mill && p.grade === lab.grade)!;
    expect(q.evidence.agreementSignal).toBe(true);
    expect(q.decision.every).toBe(1);
    expect(q.decision.reasons.join(' ')).toMatch(/no longer agrees/);
    for (const p of plans) for (const d of p.due) expect(d.receivedDate <= asOf!).toBe(true);
  });

  test('repeatability from the heats the receiving laboratory tested twice', async () => {
    const r = await plantRepeatability(t.database.db);
    expect(r.heats).toBeGreaterThanOrEqual(3);
    // Scenario: receiving noise 0.9 HRC per reading, rounded to 0.5 (seed/scenario.ts); two bars of one heat.
    expect(r.sd!).toBeGreaterThan(0.4);
    expect(r.sd!).toBeLessThan(1.5);
  });

  test('API: agreement, plan, repeatability and a gauge study', async () => {
    const agreement = await t.request('GET', '/api/v1/receiving/agreement?grade=18CrNiMo7-D');
    expect(agreement.status).toBe(200);
    expect(agreement.body.mills.map((m: { mill: string }) => m.mill)).toEqual(['QUELLMARK', 'SERRANIA']);
    expect(agreement.body.mills[0].pairList).toBeUndefined();
    expect(agreement.body.caution).toMatch(/do not replace/);
    const plan = await t.request('GET', '/api/v1/receiving/plan?grade=20MnCr5-D');
    expect(plan.status).toBe(200);
    expect(plan.body.plans).toHaveLength(3);
    expect((await t.request('GET', '/api/v1/receiving/agreement?grade=20MnCr5-D&from=2026-13-01')).status).toBe(400);
    expect((await t.request('GET', '/api/v1/receiving/repeatability')).status).toBe(200);
    const readings = [];
    for (const part of ['A', 'B', 'C']) for (const operator of ['x', 'y']) for (const k of [0, 1]) readings.push({ part, operator, value: (part === 'A' ? 40 : part === 'B' ? 45 : 50) + (operator === 'y' ? 0.5 : 0) + k * 0.2 });
    const gauge = await t.request('POST', '/api/v1/gauge-studies', { readings, tolerance: 10 });
    expect(gauge.status).toBe(200);
    expect(gauge.body.parts).toBe(3);
    const unbalanced = await t.request('POST', '/api/v1/gauge-studies', { readings: readings.slice(1) });
    expect(unbalanced.status).toBe(422);
  });

  test('the Receiving page lists the plans and the lots due, shows the moved laboratory, and carries the caution', async () => {
    const started = performance.now();
    const res = await t.request('GET', '/receiving');
    console.log(`GET /receiving took ${Math.round(performance.now() - started)} ms`);
    expect(res.status).toBe(200);
    const html = res.body as string;
    expect(html).toContain('<h1>Receiving</h1>');
    expect(html).toMatch(/Lots due for a re-test \(\d+\)/);
    expect(html).toContain('QUELLMARK 18CrNiMo7-D: agreement with our laboratory');
    expect(html).toMatch(/reads high since Q26-/);
    expect(html).toContain('do not replace it');
    const csv = await t.request('GET', '/receiving?grade=20MnCr5-D&mill=VARNHOLT&csv=plans');
    expect(csv.status).toBe(200);
    expect(String(csv.body).split('\n')[0]).toContain('Mill');
    const entered = await t.request('GET', '/receiving?grade=18CrNiMo7-D&mill=QUELLMARK&repeatability=0.3');
    expect(entered.body as string).toContain('0.30 HRC per reading, as entered');
    expect(entered.body as string).toMatch(/Our own repeatability \(0\.30 HRC per reading\)/);
    // A malformed date is answered on a page that says so (src/web/page.tsx turns ParamError into 422).
    expect((await t.request('GET', '/receiving?asOf=2026-13-01')).status).toBe(422);
  });

  test('the supplier review report carries the agreement and the plan of each grade', async () => {
    const story = summary.stories.labReadsHigh;
    const report = await buildPeriodReport(t.database.db, { mill: story.mill, grade: story.grade, from: '2025-11-01', to: '2026-10-31' });
    const html = await renderReportHtml(report);
    expect(html).toContain('Receiving inspection: laboratory agreement and re-test plan');
    expect(html).toMatch(/reads high since heat Q26-/);
    const csv = renderReportCsv(report);
    expect(csv.split('\n').filter((l) => l.startsWith('receiving,'))).toHaveLength(1);
  });
});
