import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { createTestApp, type TestApp } from '../helpers/testApp.ts';
import { certificate } from '../fixtures/certificates.ts';

let t: TestApp;
beforeAll(async () => {
  t = await createTestApp();
  await t.request('POST', '/api/v1/mills', { code: 'BRENNWALD', name: 'Brennwald Stahl (invented)', country: 'DE' });
  // 8620H chemistry limits: SAE J1268 / SAE J404 8620H (C .17–.23, Mn .60–.95).
  await t.request('POST', '/api/v1/grades', {
    code: '8620H',
    distanceSystem: 'mm',
    chemistryLimits: [
      { element: 'C', min: 0.17, max: 0.23 },
      { element: 'Mn', min: 0.6, max: 0.95 },
    ],
  });
});
afterAll(async () => t?.close());

describe('health and documents', () => {
  test('healthz checks the database', async () => {
    const r = await t.request('GET', '/healthz');
    expect(r.status).toBe(200);
    expect(r.body.status).toBe('ok');
  });
  test('openapi.json lists the endpoints', async () => {
    const r = await t.request('GET', '/openapi.json');
    expect(r.status).toBe(200);
    expect(Object.keys(r.body.paths)).toEqual(expect.arrayContaining(['/api/v1/certificates', '/api/v1/imports', '/api/v1/heats/{id}', '/api/v1/grades/{code}/bands']));
  });
  test('unknown path and bad query answer JSON errors with a code', async () => {
    expect((await t.request('GET', '/api/v1/nothing')).body.error.code).toBe('not_found');
    const bad = await t.request('GET', '/api/v1/heats?from=03/04/2025');
    expect(bad.status).toBe(400);
    expect(bad.body.error.code).toBe('invalid_request');
  });
});

describe('catalog', () => {
  test('grades carry their chemistry limits', async () => {
    const r = await t.request('GET', '/api/v1/grades');
    expect(r.body[0].chemistryLimits).toContainEqual({ element: 'Mn', min: 0.6, max: 0.95 });
  });
  test('bands are versioned; distances given in sixteenths are stored in exact mm', async () => {
    const first = await t.request('POST', '/api/v1/grades/8620H/bands', {
      effectiveFrom: '2024-01-01',
      distanceSystem: 'sixteenths',
      points: [
        { at: 1, min: 41, max: 48 },
        { at: 4, min: 27, max: 41 },
        { at: 8, max: 30 },
      ],
    });
    expect(first.status).toBe(201);
    expect(first.body.version).toBe(1);
    // 4/16 in = 6.35 mm exactly (1 in = 25.4 mm, by definition).
    expect(first.body.points[1]).toEqual({ distanceMm: 6.35, label: 'J4', minHrc: 27, maxHrc: 41 });
    const second = await t.request('POST', '/api/v1/grades/8620H/bands', {
      effectiveFrom: '2025-06-01',
      kind: 'restricted',
      reason: 'tighter J4 for a gear programme',
      distanceSystem: 'sixteenths',
      points: [{ at: 4, min: 30, max: 38 }],
    });
    expect(second.body.version).toBe(2);
    const list = await t.request('GET', '/api/v1/grades/8620H/bands');
    expect(list.body.map((b: { version: number }) => b.version)).toEqual([2, 1]);
    // Readings meet the limits after ASTM E29 rounding unless the band says otherwise.
    expect(list.body.map((b: { rounding: string }) => b.rounding)).toEqual(['astm_e29', 'astm_e29']);
    const asReported = await t.request('POST', '/api/v1/grades/8620H/bands', {
      effectiveFrom: '2026-01-01', status: 'draft', rounding: 'as_reported', distanceSystem: 'mm', points: [{ at: 9, min: 30 }],
    });
    expect(asReported.body).toMatchObject({ version: 3, rounding: 'as_reported' });
    expect((await t.request('POST', '/api/v1/grades/8620H/bands', { effectiveFrom: '2026-01-01', rounding: 'nearest', distanceSystem: 'mm', points: [{ at: 9, min: 30 }] })).status).toBe(400);
  });
  test('a band point with min above max is refused', async () => {
    const r = await t.request('POST', '/api/v1/grades/8620H/bands', { effectiveFrom: '2025-01-01', distanceSystem: 'mm', points: [{ at: 5, min: 40, max: 30 }] });
    expect(r.status).toBe(400);
    expect(JSON.stringify(r.body.error.details)).toMatch(/min HRC is above max HRC/);
  });
});

describe('POST /certificates', () => {
  test('twice gives one heat; a changed one gives 409 with the differences, or a revision when asked', async () => {
    const first = await t.request('POST', '/api/v1/certificates', certificate());
    expect(first.status).toBe(201);
    const sameBytes = await t.request('POST', '/api/v1/certificates', certificate());
    expect(sameBytes.status).toBe(200);
    expect(sameBytes.body).toMatchObject({ status: 'duplicate', duplicateOf: first.body.importId });
    // The same content written differently (key order, spacing) is recognised as well.
    const { chemistry, ...rest } = certificate();
    const again = await t.request('POST', '/api/v1/certificates', JSON.stringify({ chemistry, ...rest }, null, 1), { 'content-type': 'application/json' });
    expect(again.status).toBe(200);
    expect(again.body.items[0].status).toBe('unchanged');
    const heats = await t.request('GET', '/api/v1/heats?grade=8620H');
    expect(heats.body.total).toBe(1);

    const changed = certificate({ grainSize: 8 });
    const conflict = await t.request('POST', '/api/v1/certificates', changed);
    expect(conflict.status).toBe(409);
    expect(conflict.body.error.code).toBe('certificate_conflict');
    expect(conflict.body.error.details.differences).toEqual([{ field: 'grainSize', stored: 7, received: 8 }]);

    const revised = await t.request('POST', '/api/v1/certificates?revision=true', changed);
    expect(revised.status).toBe(201);
    const heat = await t.request('GET', `/api/v1/heats/${heats.body.heats[0].id}`);
    expect(heat.body.revision).toBe(2);
    expect(heat.body.revisions.map((r: { grainSize: number }) => r.grainSize)).toEqual([8, 7]);
    // The old revision's curve is kept but no longer current.
    expect(heat.body.tests.map((x: { current: boolean }) => x.current).sort()).toEqual([false, true]);
  });

  test('an invalid certificate is answered 422 with each problem', async () => {
    const r = await t.request('POST', '/api/v1/certificates', certificate({ heatNumber: 'B24-0999', castDate: '2999-01-01' }));
    expect(r.status).toBe(422);
    expect(r.body.error.details.problems).toContainEqual(expect.objectContaining({ path: 'castDate', message: 'castDate lies in the future' }));
    const archived = await t.request('GET', `/api/v1/imports/${r.body.error.details.importId}`);
    expect(archived.body.status).toBe('rejected');
  });

  test('the archived document can be downloaded byte for byte', async () => {
    const body = JSON.stringify(certificate({ heatNumber: 'B24-0500' }));
    const r = await t.request('POST', '/api/v1/certificates', body, { 'content-type': 'application/json' });
    const download = await t.app.request(`/api/v1/imports/${r.body.importId}?download=true`);
    expect(await download.text()).toBe(body);
  });
});

describe('band points beyond the specimen', () => {
  test('a band distance past the end of the end-quench specimen (ISO 642: 100 mm; ASTM A255: 4 in) is refused with 400', async () => {
    const r = await t.request('POST', '/api/v1/grades/8620H/bands', { effectiveFrom: '2025-01-01', distanceSystem: 'mm', points: [{ at: 120, max: 30 }] });
    expect(r.status).toBe(400);
    expect(r.body.error.message).toMatch(/longer than the end-quench specimen/);
  });
});

describe('one certificate per request, and archived names', () => {
  test('POST /certificates takes one object; an array is sent to /imports instead', async () => {
    const r = await t.request('POST', '/api/v1/certificates', [certificate({ heatNumber: 'ARR-1' })]);
    expect(r.status).toBe(400);
    expect(r.body.error.code).toBe('one_certificate_only');
  });

  test('an archived file with a non-ASCII name downloads with an RFC 6266 filename*', async () => {
    const form = new FormData();
    form.append('file', new File([JSON.stringify(certificate({ heatNumber: 'NAME-1' }))], 'Třinec-certifikát.json', { type: 'application/json' }));
    const up = await t.request('POST', '/api/v1/imports', form);
    expect(up.status).toBe(201);
    const download = await t.app.request(`/api/v1/imports/${up.body.importId}?download=true`);
    expect(download.status).toBe(200);
    expect(download.headers.get('content-disposition')).toContain(`filename*=UTF-8''${encodeURIComponent('Třinec-certifikát.json')}`);
  });
});
