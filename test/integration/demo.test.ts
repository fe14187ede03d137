// Loading the demo into a test database: every heat, test and band is written, a second load is
// refused unless forced, and a forced one changes nothing.
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { sql } from 'drizzle-orm';
import { createTestDatabase, type TestDatabase } from '../helpers/testDatabase.ts';
import { rowsOf } from '../../src/db/connection.ts';
import { listBands } from '../../src/db/referenceData.ts';
import { DemoRefusedError, runDemo } from '../../src/cliCommands/demo.ts';
import { isDatabaseEmpty } from '../../seed/load.ts';
import { DEFAULT_DEMO_SEED, generateDemo, type DemoData } from '../../seed/generate.ts';
import type { DemoSummary } from '../../seed/load.ts';

let database: TestDatabase;
let data: DemoData;
let summary: DemoSummary;
const stages = new Set<string>();

beforeAll(async () => {
  database = await createTestDatabase();
  data = generateDemo(DEFAULT_DEMO_SEED);
  expect(await isDatabaseEmpty(database.db)).toBe(true);
  summary = await runDemo(database.db, { onProgress: (stage) => stages.add(stage) });
}, 300_000);
afterAll(async () => database?.close());

const count = async (query: ReturnType<typeof sql>) => rowsOf<{ n: number }>(await database.db.execute(query))[0].n;

describe(`demo load (${process.env.TEST_DATABASE_URL ? 'postgres' : 'test database'})`, () => {
  test('every generated heat, certificate, lot and test is on file', async () => {
    const lots = data.certificates.reduce((n, c) => n + c.lots.length, 0);
    const readings =
      data.certificates.reduce((n, c) => n + c.tests[0].readings.length, 0) + data.retests.reduce((n, r) => n + r.test.readings.length, 0);
    expect(summary.heatsCreated).toBe(data.certificates.length);
    expect(await count(sql`select count(*)::int as n from heats`)).toBe(data.certificates.length);
    expect(await count(sql`select count(*)::int as n from certificates`)).toBe(data.certificates.length);
    expect(await count(sql`select count(*)::int as n from lots`)).toBe(lots);
    expect(await count(sql`select count(*)::int as n from end_quench_tests where source = 'mill_certificate'`)).toBe(data.certificates.length);
    expect(await count(sql`select count(*)::int as n from end_quench_tests where source = 'receiving_inspection'`)).toBe(data.retests.length);
    expect(await count(sql`select count(*)::int as n from end_quench_readings`)).toBe(readings);
    expect(summary.readingsAdded).toBe(readings);
    expect(await isDatabaseEmpty(database.db)).toBe(false);
    expect([...stages].sort()).toEqual(['certificates', 'models', 'reference', 'retests']);
  });

  test('the plant chemistry models are fitted after the load, so heat sheets predict from history', async () => {
    const grades = await count(sql`select count(distinct grade_id)::int as n from models where mill_id is null`);
    expect(grades).toBe(data.grades.length);
    expect(summary.models).toBe(await count(sql`select count(*)::int as n from models`));
  });

  test('few import batches, all accepted', async () => {
    const imports = rowsOf<{ status: string; created_by: string }>(await database.db.execute(sql`select status, created_by from imports order by id`));
    expect(imports.length).toBe(summary.importIds.length);
    expect(imports.length).toBeLessThanOrEqual(4);
    for (const i of imports) expect(i).toEqual({ status: 'accepted', created_by: 'demo' });
  });

  test('mills, grades with their limits, and bands (with the draft proposal) are on file', async () => {
    expect(await count(sql`select count(*)::int as n from mills`)).toBe(data.mills.length);
    expect(await count(sql`select count(*)::int as n from grades`)).toBe(data.grades.length);
    expect(await count(sql`select count(*)::int as n from grade_chemistry_limits`)).toBe(
      data.grades.reduce((n, g) => n + g.chemistryLimits.length, 0),
    );
    const story = summary.stories.bandTightening;
    const bands = await listBands(database.db, story.grade);
    expect(bands.map((b) => [b.version, b.status, b.kind])).toEqual([
      [story.proposedVersion, 'draft', 'restricted'],
      [1, 'active', 'standard'],
    ]);
  });

  test('the planted copy is on file as two heats with the same chemistry', async () => {
    const s = summary.stories.copiedCertificate;
    const rows = rowsOf<{ heat_number: string; c: number; mn: number; cr: number; ni: number; mo: number }>(
      await database.db.execute(sql`
        select h.heat_number, c.c, c.mn, c.cr, c.ni, c.mo from heats h
        join mills m on m.id = h.mill_id join certificates c on c.heat_id = h.id
        where m.code = ${s.mill} and h.heat_number in (${s.sourceHeat}, ${s.copyHeat}) order by h.cast_date`),
    );
    expect(rows.map((r) => r.heat_number)).toEqual([s.sourceHeat, s.copyHeat]);
    const { heat_number: _a, ...first } = rows[0];
    const { heat_number: _b, ...second } = rows[1];
    expect(second).toEqual(first);
  });

  test('a second load is refused; a forced one writes nothing new', async () => {
    await expect(runDemo(database.db)).rejects.toBeInstanceOf(DemoRefusedError);
    const again = await runDemo(database.db, { force: true });
    expect(again.heatsCreated).toBe(0);
    expect(again.bandsAdded).toBe(0);
    expect(again.testsAdded).toBe(0);
    expect(await count(sql`select count(*)::int as n from heats`)).toBe(data.certificates.length);
    expect(await count(sql`select count(*)::int as n from bands`)).toBe(data.bands.length);
  }, 300_000);
});
