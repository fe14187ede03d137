// Every ingest route with two mill tokens: a mill that sends another mill's document gets one and the
// same refusal whether or not that document was imported before, and no answer carries the other
// mill's import id, counts or status. Duplicates are reported to a mill only for its own imports;
// staff (engineer) hear of any earlier import.
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { createTestApp, type TestApp } from '../helpers/testApp.ts';
import { certificate } from '../fixtures/certificates.ts';
import { createToken } from '../../src/db/tokens.ts';
import { buildWorkbook } from '../../seed/samples/make-xlsx.ts';

let t: TestApp;
const secrets: Record<string, string> = {};

const HEADER = ['mill', 'grade', 'heat_number', 'cast_date', 'certificate_number', 'certificate_date', 'C', 'Mn', 'lot_number', 'source', 'test_date', 'J 1.5 mm', 'J 3 mm', 'J 5 mm'];
const row = (mill: string, heat: string) => [mill, '8620H', heat, '2025-03-04', `${heat}-C`, '2025-03-10', '0.21', '0.82', 'L1', 'mill_certificate', '2025-03-06', '45', '43', '38'];
const csvOf = (mill: string, heat: string) => new TextEncoder().encode([HEADER, row(mill, heat)].map((r) => r.join(',')).join('\n'));
const xlsxOf = async (mill: string, heat: string) => new Uint8Array(await buildWorkbook([HEADER, row(mill, heat)]).xlsx.writeBuffer());
const jsonOf = (mill: string, heat: string) => new TextEncoder().encode(JSON.stringify(certificate({ mill, heatNumber: heat, certificateNumber: `${heat}-C` })));

interface Route {
  name: string;
  /** Sends the document as the given caller; returns the status and the parsed body. */
  send(bytes: Uint8Array, who: string, query?: string): Promise<{ status: number; body: any }>;
  make(mill: string, heat: string): Promise<Uint8Array> | Uint8Array;
}

async function call(method: string, path: string, who: string | null, body?: BodyInit, headers: Record<string, string> = {}) {
  const response = await t.app.request(path, { method, body, headers: { ...(who ? { authorization: `Bearer ${secrets[who]}` } : {}), ...headers } });
  const text = await response.text();
  let parsed: any = text;
  try {
    parsed = JSON.parse(text);
  } catch {
    /* not JSON */
  }
  return { status: response.status, body: parsed };
}

const raw = (format: string, type: string) => (bytes: Uint8Array, who: string, query = '') => call('POST', `/api/v1/imports?format=${format}${query}`, who, Buffer.from(bytes), { 'content-type': type });
const multipart = (name: string) => (bytes: Uint8Array, who: string, query = '') => {
  const form = new FormData();
  form.set('file', new File([Buffer.from(bytes)], name));
  return call('POST', `/api/v1/imports?x=1${query}`, who, form);
};

const ROUTES: Route[] = [
  { name: 'POST /api/v1/certificates (JSON)', make: jsonOf, send: (b, who, q = '') => call('POST', `/api/v1/certificates?x=1${q.replace(/&(dryRun|acceptValid)=true/g, '')}`, who, Buffer.from(b), { 'content-type': 'application/json' }) },
  { name: 'POST /api/v1/imports, JSON body', make: jsonOf, send: raw('json', 'application/json') },
  { name: 'POST /api/v1/imports, CSV body', make: csvOf, send: raw('csv', 'text/csv') },
  { name: 'POST /api/v1/imports, XLSX body', make: xlsxOf, send: raw('xlsx', 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet') },
  { name: 'POST /api/v1/imports, multipart CSV', make: csvOf, send: multipart('certificates.csv') },
  { name: 'POST /api/v1/imports, multipart XLSX', make: xlsxOf, send: multipart('certificates.xlsx') },
];

/** The refusal without the caller's own archive id, to compare two refusals. */
const shape = (body: any) => JSON.stringify({ ...body, error: { ...body.error, details: { ...body.error?.details, importId: undefined } } });

beforeAll(async () => {
  t = await createTestApp();
  await call('POST', '/api/v1/mills', null, JSON.stringify({ code: 'BRENNWALD', name: 'Brennwald Stahl (invented)' }), { 'content-type': 'application/json' });
  await call('POST', '/api/v1/mills', null, JSON.stringify({ code: 'OSTRAVEK', name: 'Ostravek Ocel (invented)' }), { 'content-type': 'application/json' });
  await call('POST', '/api/v1/grades', null, JSON.stringify({ code: '8620H', distanceSystem: 'mm' }), { 'content-type': 'application/json' });
  const db = t.database.db;
  secrets.engineer = (await createToken(db, { name: 'enzo', role: 'engineer' })).secret;
  secrets.millA = (await createToken(db, { name: 'brennwald-portal', role: 'mill', mill: 'BRENNWALD' })).secret;
  secrets.millB = (await createToken(db, { name: 'ostravek-portal', role: 'mill', mill: 'OSTRAVEK' })).secret;
});
afterAll(async () => t?.close());

describe.each(ROUTES)('$name with two mill tokens', (route) => {
  const tag = route.name.replace(/\W+/g, '').slice(-14).toUpperCase();
  let bImport: number;
  let document: Uint8Array;

  beforeAll(async () => {
    document = await route.make('OSTRAVEK', `O-${tag}`);
    const sent = await route.send(document, 'millB');
    expect(sent.status).toBe(201);
    bImport = sent.body.importId;
  });

  test('mill B re-sending its own document hears it is a duplicate of its own import', async () => {
    const again = await route.send(document, 'millB');
    expect(again.status).toBe(200);
    expect(again.body.status).toBe('duplicate');
    expect(again.body.duplicateOf).toBe(bImport);
  });

  test('staff re-sending it hear of the earlier import', async () => {
    const again = await route.send(document, 'engineer');
    expect(again.status).toBe(200);
    expect(again.body.duplicateOf).toBe(bImport);
  });

  for (const query of ['', '&dryRun=true', '&acceptValid=true']) {
    test(`mill A sending mill B's document${query ? ` (${query.slice(1)})` : ''}: the same 403 as for a document never seen, nothing of B's import`, async () => {
      const seen = await route.send(document, 'millA', query);
      const unseen = await route.send(await route.make('OSTRAVEK', `O-${tag}-NEW${query.length}`), 'millA', query);
      for (const r of [seen, unseen]) {
        expect(r.status).toBe(403);
        expect(r.body.error.code).toBe('forbidden_mill');
        expect(r.body.duplicateOf).toBeUndefined();
        expect(r.body.error.details?.importId).not.toBe(bImport);
        expect(JSON.stringify(r.body)).not.toMatch(/duplicate/i);
      }
      // Same words, same fields: only the heat key named in the document differs.
      expect(shape(unseen.body).replaceAll(`O-${tag}-NEW${query.length}`, 'KEY')).toBe(shape(seen.body).replaceAll(`O-${tag}`, 'KEY'));
    });
  }

  test("neither mill can read an import back, its own or the other's", async () => {
    for (const who of ['millA', 'millB']) expect((await call('GET', `/api/v1/imports/${bImport}`, who)).status).toBe(403);
  });
});
