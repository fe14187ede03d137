// The catalogue page sets up mills, grades and bands with the API's validation; the heat list's first
// page holds the newest heats; the alerts page names rules in words.
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { createTestApp, type TestApp } from '../helpers/testApp.ts';
import { importCertificates, syntheticHistory } from '../fixtures/analysisHistory.ts';
import { raiseAlert } from '../../src/db/alerts.ts';
import { alertRuleName } from '../../src/alerts/ruleNames.ts';

let t: TestApp;
beforeAll(async () => {
  t = await createTestApp();
}, 120_000);
afterAll(async () => t?.close());

const post = (path: string, fields: Record<string, string>) =>
  t.request('POST', path, new URLSearchParams(fields).toString(), { 'content-type': 'application/x-www-form-urlencoded', origin: 'http://localhost' });
const doneOf = (r: { headers: Headers }) => new URL(r.headers.get('location') ?? '', 'http://localhost').searchParams.get('done') ?? '';

describe('the catalogue page', () => {
  test('adds a mill, a grade with limits and a band version, and edits the mill', async () => {
    expect(doneOf(await post('/catalogue/mills', { code: 'ORW', name: 'Orwell Bar Mill (invented)', country: 'GB' }))).toMatch(/Mill ORW .* is on file/);
    expect(doneOf(await post('/catalogue/mills', { code: 'ORW', name: 'Orwell Bar Mill Ltd (invented)' }))).toMatch(/is on file/);
    // EN 10084 20MnCr5 limits, from memory (the values only need to be valid here).
    const grade = await post('/catalogue/grades', { code: '20MnCr5', distanceSystem: 'mm', limits: 'C=0.17-0.22\nSi=-0.40\nMn=1.10-1.40' });
    expect(grade.status).toBe(303);
    expect(doneOf(grade)).toMatch(/20MnCr5 is on file with 3 chemistry limit/);
    const band = await post('/catalogue/bands', { grade: '20MnCr5', effectiveFrom: '2024-01-01', kind: 'standard', status: 'active', points: '1.5=41-49\n25=-35', reason: 'example' });
    expect(doneOf(band)).toMatch(/Band version 1 of 20MnCr5 is on file \(2 points/);

    const mills = await t.request('GET', '/api/v1/mills');
    expect(mills.body).toEqual([expect.objectContaining({ code: 'ORW', name: 'Orwell Bar Mill Ltd (invented)' })]);
    const bands = await t.request('GET', '/api/v1/grades/20MnCr5/bands');
    expect(bands.body[0].points.map((p: { label: string; minHrc: number | null; maxHrc: number | null }) => [p.label, p.minHrc, p.maxHrc])).toEqual([
      ['1.5 mm', 41, 49],
      ['25 mm', null, 35],
    ]);
    const html = String((await t.request('GET', '/catalogue')).body);
    expect(html).toContain('Orwell Bar Mill Ltd (invented)');
    expect(html).toMatch(/C 0.17–0.22/);
    expect(html).toMatch(/1.5 mm 41–49/);
  });

  test('refuses what the API refuses, saying why, and changes nothing', async () => {
    expect(doneOf(await post('/catalogue/mills', { code: 'X', name: ' ' }))).toMatch(/Nothing changed: the mill is not valid: name: is required/);
    expect(doneOf(await post('/catalogue/grades', { code: '16MnCr5', limits: 'C=0.19-0.14' }))).toMatch(/min is above max/);
    expect(doneOf(await post('/catalogue/grades', { code: '16MnCr5', limits: 'carbon about 0.16' }))).toMatch(/is not a chemistry limit/);
    expect(doneOf(await post('/catalogue/bands', { grade: '20MnCr5', effectiveFrom: '2025-01-01', points: '1.5=49-41' }))).toMatch(/min HRC is above max HRC/);
    expect(doneOf(await post('/catalogue/bands', { grade: '20MnCr5', effectiveFrom: '2025-01-01', points: '120=20-30' }))).toMatch(/longer than the end-quench specimen/);
    expect(doneOf(await post('/catalogue/bands', { grade: 'NOPE', effectiveFrom: '2025-01-01', points: '1.5=41-49' }))).toMatch(/grade NOPE is not on file/);
    expect((await t.request('GET', '/api/v1/grades')).body.map((g: { code: string }) => g.code)).toEqual(['20MnCr5']);
    expect((await t.request('GET', '/api/v1/grades/20MnCr5/bands')).body).toHaveLength(1);
  });
});

describe('lists', () => {
  test('the heat list starts with the newest heats; older ones are a page away', async () => {
    // 205 synthetic heats cast every 2 days (test/fixtures/analysisHistory.ts): one more page than the 200 shown.
    const history = syntheticHistory({ seed: 41, mill: 'LISTMILL', count: 205, start: '2022-01-03', everyDays: 2, prefix: 'LM' });
    await importCertificates(t.database.db, history.certificates);
    const html = String((await t.request('GET', '/heats?mill=LISTMILL')).body);
    const numbers = [...html.matchAll(/>(LM-\d{4})</g)].map((m) => m[1]);
    expect(numbers[0]).toBe('LM-0205');
    expect(numbers).toHaveLength(200);
    expect(numbers).not.toContain('LM-0001');
    expect(html).toContain('Older heats');
    const older = String((await t.request('GET', '/heats?mill=LISTMILL&offset=200')).body);
    expect([...older.matchAll(/>(LM-\d{4})</g)].map((m) => m[1])).toEqual(['LM-0005', 'LM-0004', 'LM-0003', 'LM-0002', 'LM-0001']);
  });

  test('the alerts page names rules in words', async () => {
    const heats = (await t.request('GET', '/api/v1/heats?mill=LISTMILL&limit=1')).body.heats;
    await raiseAlert(t.database.db, { rule: 'out_of_band', severity: 'warning', causeKey: 'test:1', title: 'a test alert', millId: null, gradeId: null, heatId: heats[0].id, evidence: {} });
    const html = String((await t.request('GET', '/alerts')).body);
    expect(html).toContain(alertRuleName('out_of_band'));
    expect(html).not.toMatch(/>out_of_band</);
    expect(alertRuleName('nelson_rule_2')).toBe('Chart pattern: nine points in a row on the same side of the centre line (Nelson 2)');
  });
});
