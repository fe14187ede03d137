// Generated hostile input over the HTTP surface as a whole (fast-check, seeded): mutated JSON
// certificates, mutated CSV and XLSX files (truncated, bytes flipped, invalid UTF-8 / UTF-16, zip bomb),
// hostile query strings and path parameters on every GET of /openapi.json, hostile bodies on every
// POST/PUT, deep JSON, long URLs, bad limits and offsets. For every case: no server error (5xx), a
// rejected document writes nothing (the heat and reading counts do not move), a rejected import names
// its problems (with a row, column or path), and an accepted one wrote exactly what it reports.
// About 10,400 cases by default (~2-4 min on a 2-core machine); HOSTILE_SCALE=10 runs ten times as many
// (the nightly-style run; see docs/access-and-alerts.md, "Limits").
import { readFileSync } from 'node:fs';
import { crc32, deflateRawSync } from 'node:zlib';
import fc from 'fast-check';
import { afterAll, beforeAll, beforeEach, describe, expect, test } from 'vitest';
import { sql } from 'drizzle-orm';
import { rowsOf } from '../../src/db/connection.ts';
import { createTestApp, type TestApp } from '../helpers/testApp.ts';
import { certificate } from '../fixtures/certificates.ts';

const SCALE = Number(process.env.HOSTILE_SCALE ?? 1);
const runs = (n: number) => Math.max(1, Math.round(n * SCALE));

let t: TestApp;
let cases = 0;
const serverErrors: string[] = [];

async function counts() {
  const [row] = rowsOf<{ heats: number; readings: number; tests: number; lots: number }>(
    await t.database.db.execute(sql`select (select count(*)::int from heats) as heats, (select count(*)::int from end_quench_readings) as readings,
      (select count(*)::int from end_quench_tests) as tests, (select count(*)::int from lots) as lots`),
  );
  return row;
}

/** Distinct server errors: route pattern and error, with the first input that caused it. */
const serverErrorKinds = new Map<string, string>();

async function send(method: string, path: string, body?: BodyInit, headers: Record<string, string> = {}, label = '') {
  cases++;
  const response = await t.app.request(path, { method, headers, body });
  const text = await response.text();
  let json: any = null;
  try {
    json = JSON.parse(text);
  } catch {
    /* a page */
  }
  if (response.status >= 500) {
    serverErrors.push(`${method} ${path.slice(0, 200)} -> ${response.status}`);
    const kind = `${method} ${path.split('?')[0].replace(/\/[^/]*\d[^/]*$/, '/{id}').slice(0, 60)} ${label.split(' ')[0]}`;
    if (!serverErrorKinds.has(kind)) serverErrorKinds.set(kind, `${path.slice(0, 160)} ${label.slice(0, 300)} ${typeof body === 'string' ? body.slice(0, 120) : ''}`);
  }
  return { status: response.status, json, text };
}

// ---- hostile values -------------------------------------------------------------------------
const hostileString = fc.oneof(
  fc.constantFrom(
    'NaN', 'Infinity', '-Infinity', '1e309', '-1e309', '0x1F', '1,5', '١٢٣', '', ' ', '\u0000', '\uD800', '\uDFFF', '\uFEFF',
    '=1+1', '=HYPERLINK("http://x.example","y")', '+SUM(A1:A9)', '-2+3', '@cmd', '\t=1', '\r=1',
    '<script>window.__pwned=1</script>', '"><img src=x onerror="window.__pwned=1">', "'; drop table heats; --", '{{7*7}}', '${7*7}',
    '\u202Eevil\u202C', 'מספר-היתוך', 'مصهر', '熔炼号', '🔥🧪', 'e\u0301', '../../etc/passwd', '%00', '%2e%2e%2f',
  ),
  fc.string({ maxLength: 40 }),
  fc.string({ unit: 'grapheme', maxLength: 20 }),
  fc.nat({ max: 20_000 }).map((n) => 'x'.repeat(n)),
);
const hostileNumber = fc.oneof(
  fc.constantFrom(1e308, -1e308, Number.MAX_SAFE_INTEGER * 10, -0, 5e-324, 1e21, -1, 0, 101, 1e6),
  fc.double(),
  fc.integer(),
);
const hostileValue: fc.Arbitrary<unknown> = fc.oneof(
  hostileString,
  hostileNumber,
  fc.constantFrom(null, true, false, [], {}, [1, 2], { a: 1 }),
  fc.constant(undefined),
  fc.nat({ max: 64 }).map((depth) => nest(depth)),
);
/** encodeURIComponent, or for a lone surrogate (which it refuses) the raw bytes of its UTF-8-like form: invalid UTF-8 in the URL. */
function encodeSegment(text: string): string {
  try {
    return encodeURIComponent(text);
  } catch {
    return '%ED%BF%BF';
  }
}

function nest(depth: number): unknown {
  let v: unknown = 1;
  for (let i = 0; i < depth; i++) v = i % 2 ? { v } : [v];
  return v;
}

const CERT_PATHS = [
  ['mill'], ['grade'], ['heatNumber'], ['castDate'], ['certificateNumber'], ['certificateDate'], ['grainSize'],
  ['chemistry'], ['chemistry', 'C'], ['chemistry', 'Mn'], ['chemistry', 'Cr'], ['chemistry', 'B'], ['chemistry', 'other'],
  ['lots'], ['lots', 0, 'lotNumber'], ['lots', 0, 'receivedDate'], ['lots', 0, 'massKg'], ['lots', 0, 'barDiameterMm'],
  ['tests'], ['tests', 0, 'source'], ['tests', 0, 'basis'], ['tests', 0, 'distanceSystem'], ['tests', 0, 'readings'],
  ['tests', 0, 'readings', 0, 'at'], ['tests', 0, 'readings', 0, 'hrc'], ['tests', 0, 'readings', 3, 'hrc'], ['tests', 0, 'laboratory'],
  ['tests', 0, 'testDate'], ['tests', 0, 'austenitizingC'], ['unknownField'],
] as const;

function setPath(target: any, path: readonly (string | number)[], value: unknown) {
  let node = target;
  for (const key of path.slice(0, -1)) {
    if (node[key] === null || typeof node[key] !== 'object') node[key] = typeof key === 'number' ? [] : {};
    node = node[key];
  }
  const last = path[path.length - 1];
  if (value === undefined) delete node[last];
  else node[last] = value;
}

beforeAll(async () => {
  t = await createTestApp();
  for (const [code, name] of [['BRENNWALD', 'Brennwald Stahl (invented)']]) await t.request('POST', '/api/v1/mills', { code, name });
  await t.request('POST', '/api/v1/grades', { code: '8620H', distanceSystem: 'mm' });
}, 60_000);
afterAll(async () => {
  await t?.close();
});
beforeEach(() => {
  serverErrors.length = 0;
  serverErrorKinds.clear();
  unlocated.length = 0;
});

/** Checks one ingest answer against the counts before and after. */
function checkIngest(label: string, r: { status: number; json: any }, before: Awaited<ReturnType<typeof counts>>, after: Awaited<ReturnType<typeof counts>>) {
  const moved = after.heats !== before.heats || after.readings !== before.readings || after.tests !== before.tests;
  const report = r.json;
  const stored = r.status === 201 && (report?.status === 'accepted' || report?.status === 'partially_accepted');
  if (!stored && moved) throw new Error(`${label}: answered ${r.status} ${report?.status ?? report?.error?.code} but wrote rows (${JSON.stringify(before)} -> ${JSON.stringify(after)})`);
  if (stored) {
    if (after.tests - before.tests !== report.summary.testsAdded) throw new Error(`${label}: reported ${report.summary.testsAdded} tests, wrote ${after.tests - before.tests}`);
    if (after.readings - before.readings !== report.summary.readingsAdded) throw new Error(`${label}: reported ${report.summary.readingsAdded} readings, wrote ${after.readings - before.readings}`);
  }
  if (r.status === 422) {
    const problems = [...(report?.problems ?? []), ...(report?.items ?? []).flatMap((i: any) => i.problems ?? []), ...(report?.error?.details?.problems ?? [])];
    const located = problems.filter((p: any) => p && typeof p.message === 'string' && p.message.length > 0 && (p.row !== undefined || p.column !== undefined || typeof p.path === 'string'));
    if (located.length === 0 && !report?.error?.message) unlocated.push(`${label}: ${JSON.stringify(report).slice(0, 200)}`);
  }
}

let heatSerial = 0;
/** Rejections that named no problem (a person could not tell what to fix). */
const unlocated: string[] = [];
const report = () => `${serverErrors.length} server errors; kinds:\n${[...serverErrorKinds].map(([k, v]) => `${k}  <=  ${v}`).join('\n')}\n${unlocated.length} rejections naming no problem, e.g. ${unlocated.slice(0, 3).join(' | ')}`;

describe('hostile input, generated', () => {
  test('mutated JSON certificates (POST /api/v1/certificates)', async () => {
    let before = await counts();
    await fc.assert(
      fc.asyncProperty(fc.array(fc.tuple(fc.constantFrom(...CERT_PATHS), hostileValue), { minLength: 1, maxLength: 3 }), async (mutations) => {
        const doc: any = structuredClone(certificate({ heatNumber: `HJ-${++heatSerial}`, certificateNumber: `HJ-C-${heatSerial}` }));
        for (const [path, value] of mutations) setPath(doc, path, value);
        const r = await send('POST', '/api/v1/certificates?createMissing=true', JSON.stringify(doc), { 'content-type': 'application/json' }, `cert ${JSON.stringify(mutations)}`);
        const after = await counts();
        checkIngest(`certificate ${JSON.stringify(mutations).slice(0, 300)}`, r, before, after);
        before = after;
      }),
      { numRuns: runs(3500), seed: 1601 },
    );
    expect(serverErrors.length, report()).toBe(0);
    expect(unlocated, report()).toEqual([]);
  }, 900_000);

  test('mutated CSV files (POST /api/v1/imports?format=csv)', async () => {
    const sample = readFileSync('seed/samples/certificates-example.csv', 'utf8').split(/\r?\n/).filter(Boolean);
    const header = sample[0];
    const rows = sample.slice(1, 4);
    let before = await counts();
    const mutation = fc.oneof(
      fc.record({ kind: fc.constant('cell' as const), row: fc.nat({ max: 2 }), col: fc.nat({ max: 40 }), value: hostileString, quote: fc.boolean() }),
      fc.record({ kind: fc.constant('truncate' as const), at: fc.double({ min: 0, max: 1, noNaN: true }) }),
      fc.record({ kind: fc.constant('bytes' as const), at: fc.double({ min: 0, max: 1, noNaN: true }), bytes: fc.constantFrom([0xc3, 0x28], [0xff], [0xed, 0xa0, 0x80], [0xf4, 0x90, 0x80, 0x80], [0x00], [0xe2, 0x82]) }),
      fc.record({ kind: fc.constant('utf16' as const), bom: fc.boolean() }),
      fc.record({ kind: fc.constant('delimiter' as const), to: fc.constantFrom(';', '\t', '|', '"', '') }),
      fc.record({ kind: fc.constant('header' as const), col: fc.nat({ max: 40 }), value: hostileString }),
      fc.record({ kind: fc.constant('rows' as const), copies: fc.nat({ max: 30 }) }),
    );
    await fc.assert(
      fc.asyncProperty(fc.array(mutation, { minLength: 1, maxLength: 3 }), async (mutations) => {
        const serial = ++heatSerial;
        let cells = rows.map((r) => r.split(',').map((c, i) => (i === 2 ? `${c}-${serial}` : i === 4 ? `${c}-${serial}` : c)));
        let head = header.split(',');
        let bytes: Uint8Array | null = null;
        let delimiter = ',';
        for (const m of mutations) {
          if (m.kind === 'cell') {
            const row = cells[m.row % cells.length];
            row[m.col % row.length] = m.quote ? `"${m.value.replace(/"/g, '""')}"` : m.value;
          } else if (m.kind === 'header') head[m.col % head.length] = m.value;
          else if (m.kind === 'rows') cells = [...cells, ...Array.from({ length: m.copies }, (_, i) => cells[i % cells.length].map((c, j) => (j === 2 ? `${c}-r${i}` : c)))];
          else if (m.kind === 'delimiter') delimiter = m.to;
        }
        const text = [head.join(delimiter), ...cells.map((r) => r.join(delimiter))].join('\r\n') + '\r\n';
        bytes = new TextEncoder().encode(text);
        for (const m of mutations) {
          if (m.kind === 'truncate') bytes = bytes.slice(0, Math.floor(bytes.length * m.at));
          else if (m.kind === 'bytes') {
            const at = Math.floor(bytes.length * m.at);
            bytes = new Uint8Array([...bytes.slice(0, at), ...m.bytes, ...bytes.slice(at)]);
          } else if (m.kind === 'utf16') {
            const units: Buffer = Buffer.from(new TextDecoder().decode(bytes), 'utf16le');
            bytes = new Uint8Array([...(m.bom ? [0xff, 0xfe] : []), ...units]);
          }
        }
        const r = await send('POST', '/api/v1/imports?format=csv&createMissing=true', bytes as BodyInit, { 'content-type': 'text/csv' }, `csv ${JSON.stringify(mutations)}`);
        const after = await counts();
        checkIngest(`csv ${JSON.stringify(mutations).slice(0, 300)}`, r, before, after);
        before = after;
      }),
      { numRuns: runs(2500), seed: 1602 },
    );
    expect(serverErrors.length, report()).toBe(0);
    expect(unlocated, report()).toEqual([]);
  }, 900_000);

  test('mutated, truncated and zip-bomb XLSX files (POST /api/v1/imports?format=xlsx)', async () => {
    const sample = new Uint8Array(readFileSync('seed/samples/certificates-example.xlsx'));
    let before = await counts();
    await fc.assert(
      fc.asyncProperty(
        fc.oneof(
          fc.record({ kind: fc.constant('truncate' as const), at: fc.double({ min: 0, max: 1, noNaN: true }) }),
          fc.record({ kind: fc.constant('flip' as const), at: fc.array(fc.double({ min: 0, max: 1, noNaN: true }), { minLength: 1, maxLength: 8 }), xor: fc.integer({ min: 1, max: 255 }) }),
          fc.record({ kind: fc.constant('bomb' as const), mib: fc.constantFrom(64, 512), part: fc.constantFrom('xl/worksheets/sheet1.xml', 'xl/sharedStrings.xml', '[Content_Types].xml') }),
          fc.record({ kind: fc.constant('sheet' as const), xml: fc.constantFrom(
            '<?xml version="1.0"?><!DOCTYPE x [<!ENTITY a "aaaaaaaaaa"><!ENTITY b "&a;&a;&a;&a;&a;&a;&a;&a;&a;&a;">]><worksheet>&b;</worksheet>',
            '<worksheet><sheetData><row r="1048576"><c r="XFD1048576" t="s"><v>99999999</v></c></row></sheetData></worksheet>',
            '<worksheet><sheetData>' + '<row>'.repeat(5000) + '</sheetData></worksheet>',
            '<worksheet><sheetData><row r="1"><c r="A1" t="inlineStr"><is><t>=1+1</t></is></c></row></sheetData></worksheet>',
            'not xml at all \u0000\uFFFF',
          ) }),
        ),
        async (m) => {
          let bytes: Uint8Array;
          if (m.kind === 'truncate') bytes = sample.slice(0, Math.floor(sample.length * m.at));
          else if (m.kind === 'flip') {
            bytes = sample.slice();
            for (const at of m.at) bytes[Math.min(bytes.length - 1, Math.floor(bytes.length * at))] ^= m.xor;
          } else if (m.kind === 'bomb') bytes = zip([[m.part, Buffer.alloc(m.mib * 1024 * 1024, 0x20)], ['xl/workbook.xml', Buffer.from('<workbook/>')]]);
          else bytes = zip([['[Content_Types].xml', Buffer.from('<Types/>')], ['xl/workbook.xml', Buffer.from('<workbook><sheets><sheet name="a" r:id="rId1"/></sheets></workbook>')], ['xl/worksheets/sheet1.xml', Buffer.from(m.xml)]]);
          const r = await send('POST', '/api/v1/imports?format=xlsx&createMissing=true', bytes as BodyInit, { 'content-type': 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet' }, `xlsx ${JSON.stringify(m).slice(0, 200)}`);
          const after = await counts();
          checkIngest(`xlsx ${JSON.stringify(m).slice(0, 200)}`, r, before, after);
          before = after;
        },
      ),
      { numRuns: runs(400), seed: 1603 },
    );
    expect(serverErrors.length, report()).toBe(0);
    expect(unlocated, report()).toEqual([]);
  }, 900_000);

  test('hostile query strings, path parameters and long URLs on every GET of /openapi.json', async () => {
    const doc = (await t.request('GET', '/openapi.json')).body;
    const gets: Array<{ path: string; params: string[] }> = [];
    for (const [path, item] of Object.entries<any>(doc.paths)) {
      if (item.get) gets.push({ path, params: (item.get.parameters ?? []).filter((p: any) => p.in === 'query').map((p: any) => p.name) });
    }
    const pages = ['/mills', '/heats', '/heats/1', '/grades/8620H', '/trends', '/capability', '/chemistry', '/band-trial', '/part-to-band', '/alerts', '/receiving', '/monitoring'];
    const offsets = fc.oneof(hostileString, fc.constantFrom('-1', '0', '1e309', '99999999999999999999', '1.5', '-0', 'NaN', '10000001', ' 5', '0x10', '5;drop'));
    await fc.assert(
      fc.asyncProperty(
        fc.oneof(fc.constantFrom(...gets), fc.constantFrom(...pages).map((p) => ({ path: p, params: ['mill', 'grade', 'heat', 'limit', 'offset', 'csv', 'from', 'to', 'distance'] }))),
        fc.dictionary(fc.constantFrom('limit', 'offset', 'mill', 'grade', 'heat', 'status', 'from', 'to', 'csv', 'distance', 'kind', 'source', 'x'), offsets, { maxKeys: 4 }),
        hostileString,
        async (route, extra, segment) => {
          const path = route.path.replace(/\{[^}]+\}/g, () => encodeSegment(segment || '1'));
          const query = new URLSearchParams();
          for (const name of route.params.slice(0, 3)) query.set(name, extra[name] ?? segment);
          for (const [k, v] of Object.entries(extra)) query.set(k, v);
          await send('GET', `${path}?${query.toString()}`, undefined, {}, 'get');
        },
      ),
      { numRuns: runs(3000), seed: 1604 },
    );
    // A 64 KiB URL and a 1 MiB query value.
    for (const len of [65_536, 1_048_576]) await send('GET', `/api/v1/heats?mill=${'M'.repeat(len)}&limit=5`);
    expect(serverErrors.length, report()).toBe(0);
    expect(unlocated, report()).toEqual([]);
  }, 900_000);

  test('hostile bodies on every POST and PUT of /openapi.json, deep JSON included', async () => {
    const doc = (await t.request('GET', '/openapi.json')).body;
    const writes: Array<{ method: string; path: string }> = [];
    for (const [path, item] of Object.entries<any>(doc.paths)) for (const method of ['post', 'put', 'patch']) if (item[method]) writes.push({ method: method.toUpperCase(), path });
    const before = await counts();
    await fc.assert(
      fc.asyncProperty(
        fc.constantFrom(...writes.filter((w) => !/webhooks|tokens/.test(w.path))),
        fc.oneof(
          hostileValue.map((v) => (v === undefined ? '' : JSON.stringify(v))),
          fc.dictionary(fc.string({ maxLength: 12 }), hostileValue).map((d) => JSON.stringify(d)),
          fc.constantFrom('[', '{"a":', '{"a":1}}', '\u0000', 'null', '"just a string"', '1e999'),
          fc.integer({ min: 1_000, max: 200_000 }).map((d) => '['.repeat(d) + ']'.repeat(d)),
          fc.integer({ min: 1_000, max: 100_000 }).map((d) => '{"a":'.repeat(d) + '1' + '}'.repeat(d)),
        ),
        hostileString,
        async (route, body, segment) => {
          const path = route.path.replace(/\{[^}]+\}/g, () => encodeSegment(segment || '1'));
          await send(route.method, path, body, { 'content-type': 'application/json' }, 'body');
        },
      ),
      { numRuns: runs(1000), seed: 1605 },
    );
    // Only ingest routes write heats; a hostile body to them may not have left a partial one.
    const after = await counts();
    expect(after.readings - before.readings).toBe((after.tests - before.tests) * 8);
    expect(serverErrors.length, report()).toBe(0);
    expect(unlocated, report()).toEqual([]);
  }, 900_000);

  test('limits: an oversized body is refused with 413 before it is read; a 10 MB cell gives a row error', async () => {
    const big = await t.app.request('/api/v1/imports?format=csv', { method: 'POST', headers: { 'content-type': 'text/csv', 'content-length': String(300 * 1024 * 1024) }, body: 'x' });
    expect(big.status).toBe(413);
    expect((await big.json()).error.code).toBe('too_large');
    const sample = readFileSync('seed/samples/certificates-example.csv', 'utf8').split(/\r?\n/).filter(Boolean);
    const row = sample[1].split(',');
    row[2] = 'H'.repeat(10 * 1024 * 1024);
    const before = await counts();
    const r = await send('POST', '/api/v1/imports?format=csv&createMissing=true', `${sample[0]}\r\n${row.join(',')}\r\n`, { 'content-type': 'text/csv' });
    expect(r.status).toBeLessThan(500);
    expect(await counts()).toEqual(before);
    expect(serverErrors.length, report()).toBe(0);
    expect(unlocated, report()).toEqual([]);
    console.info(`[hostile input] ${cases} generated and hand-made cases, ${serverErrors.length} server errors; a 10 MB heat-number cell answered ${r.status}`);
  }, 300_000);
});

const bombs = new Map<string, Uint8Array>();
/** A workbook whose part inflates to `mib` MiB of spaces (about 1/1000 of that compressed); made once per size. */
function bomb(part: string, mib: number): Uint8Array {
  const key = `${part}:${mib}`;
  if (!bombs.has(key)) bombs.set(key, zip([['[Content_Types].xml', Buffer.from('<Types/>')], [part, Buffer.alloc(mib * 1024 * 1024, 0x20)], ['xl/workbook.xml', Buffer.from('<workbook/>')]]));
  return bombs.get(key)!;
}

/** A minimal ZIP (PKWARE APPNOTE 6.3.x: local headers, central directory, end record), entries deflated. */
function zip(entries: Array<[string, Buffer]>): Uint8Array {
  const locals: Buffer[] = [];
  const centrals: Buffer[] = [];
  let offset = 0;
  for (const [name, data] of entries) {
    const compressed = deflateRawSync(data);
    const nameBytes = Buffer.from(name, 'utf8');
    const crc = crc32(data) >>> 0;
    const local = Buffer.alloc(30);
    local.writeUInt32LE(0x04034b50, 0);
    local.writeUInt16LE(20, 4);
    local.writeUInt16LE(8, 8);
    local.writeUInt32LE(crc, 14);
    local.writeUInt32LE(compressed.length, 18);
    local.writeUInt32LE(data.length, 22);
    local.writeUInt16LE(nameBytes.length, 26);
    const central = Buffer.alloc(46);
    central.writeUInt32LE(0x02014b50, 0);
    central.writeUInt16LE(20, 4);
    central.writeUInt16LE(20, 6);
    central.writeUInt16LE(8, 10);
    central.writeUInt32LE(crc, 16);
    central.writeUInt32LE(compressed.length, 20);
    central.writeUInt32LE(data.length, 24);
    central.writeUInt16LE(nameBytes.length, 28);
    central.writeUInt32LE(offset, 42);
    locals.push(local, nameBytes, compressed);
    centrals.push(central, nameBytes);
    offset += 30 + nameBytes.length + compressed.length;
  }
  const dir = Buffer.concat(centrals);
  const end = Buffer.alloc(22);
  end.writeUInt32LE(0x06054b50, 0);
  end.writeUInt16LE(entries.length, 8);
  end.writeUInt16LE(entries.length, 10);
  end.writeUInt32LE(dir.length, 12);
  end.writeUInt32LE(offset, 16);
  return new Uint8Array(Buffer.concat([...locals, dir, end]));
}
