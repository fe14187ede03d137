import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { sql } from 'drizzle-orm';
import { createTestDatabase, type TestDatabase } from '../helpers/testDatabase.ts';
import { runImport } from '../../src/ingest/importPipeline.ts';
import { rowsOf } from '../../src/db/connection.ts';
import { certificate } from '../fixtures/certificates.ts';

let database: TestDatabase;
beforeAll(async () => {
  database = await createTestDatabase();
  await database.db.execute(sql`insert into mills (code, name) values ('BRENNWALD', 'Brennwald Stahl (invented)')`);
  await database.db.execute(sql`insert into grades (code) values ('8620H')`);
});
afterAll(async () => database?.close());

const json = (value: unknown) => new TextEncoder().encode(JSON.stringify(value));
const count = async (table: string) =>
  rowsOf<{ n: number }>(await database.db.execute(sql`select count(*)::int as n from ${sql.identifier(table)}`))[0].n;

describe('JSON certificate import', () => {
  test('the same certificate twice gives one heat, one revision', async () => {
    const first = await runImport(database.db, { bytes: json(certificate()), format: 'json' });
    expect(first.status).toBe('accepted');
    expect(first.items[0].status).toBe('created');
    // Same content, different bytes (key order): still recognised as the same certificate.
    const reordered = JSON.parse(JSON.stringify(certificate()));
    const second = await runImport(database.db, { bytes: json({ ...reordered, chemistry: { ...reordered.chemistry } }) , format: 'json', filename: 'again.json' });
    expect(['accepted', 'duplicate']).toContain(second.status);
    expect(await count('heats')).toBe(1);
    expect(await count('certificates')).toBe(1);
    expect(await count('end_quench_readings')).toBe(8);
  });

  test('changed content is refused with a readable difference, and kept as a revision when asked', async () => {
    const changed = certificate({ chemistry: { ...certificate().chemistry, Mn: 0.9 } });
    const refused = await runImport(database.db, { bytes: json(changed), format: 'json' });
    expect(refused.status).toBe('rejected');
    expect(refused.items[0].status).toBe('conflict');
    expect(refused.items[0].differences).toEqual([{ field: 'chemistry.Mn', stored: 0.82, received: 0.9 }]);
    expect(await count('certificates')).toBe(1);

    const revised = await runImport(database.db, { bytes: json(changed), format: 'json', options: { revise: true }, filename: 'revised.json' });
    expect(revised.status).toBe('accepted');
    expect(revised.items[0]).toMatchObject({ status: 'revised', revision: 2 });
    const revisions = rowsOf<{ revision: number; mn: number }>(
      await database.db.execute(sql`select revision, mn from certificates order by revision`),
    );
    expect(revisions).toEqual([{ revision: 1, mn: 0.82 }, { revision: 2, mn: 0.9 }]);
  });

  test('an invalid certificate writes nothing but the archive', async () => {
    const before = await count('heats');
    const imports = await count('imports');
    const bad = certificate({ heatNumber: 'B24-0002', chemistry: { C: 2.4 } });
    const report = await runImport(database.db, { bytes: json(bad), format: 'json' });
    expect(report.status).toBe('rejected');
    expect(report.items[0].problems[0].message).toMatch(/carbon above 2 %/);
    expect(await count('heats')).toBe(before);
    expect(await count('imports')).toBe(imports + 1);
  });

  test('unknown mill is refused unless create-missing', async () => {
    const stranger = certificate({ mill: 'NOWHERE', heatNumber: 'N1' });
    const refused = await runImport(database.db, { bytes: json(stranger), format: 'json' });
    expect(refused.status).toBe('rejected');
    expect(refused.items[0].problems[0].message).toMatch(/mill "NOWHERE" is not on file/);
    const created = await runImport(database.db, { bytes: json(stranger), format: 'json', options: { createMissing: true }, filename: 'x' });
    expect(created.status).toBe('accepted');
  });

  test('re-importing an accepted document is reported as a duplicate', async () => {
    const bytes = json(certificate({ heatNumber: 'B24-0100' }));
    const first = await runImport(database.db, { bytes, format: 'json' });
    const again = await runImport(database.db, { bytes, format: 'json' });
    expect(first.status).toBe('accepted');
    expect(again).toMatchObject({ status: 'duplicate', duplicateOf: first.importId });
  });
});

describe('robustness of the import', () => {
  test('an accept-valid import that could write nothing is rejected, and the same file goes in once its mill is on file', async () => {
    const doc = json([certificate({ mill: 'LATECOMER', heatNumber: 'LC-1' }), certificate({ mill: 'LATECOMER', heatNumber: 'LC-2' })]);
    const first = await runImport(database.db, { bytes: doc, format: 'json', options: { acceptValid: true } });
    expect(first.status).toBe('rejected');
    await database.db.execute(sql`insert into mills (code, name) values ('LATECOMER', 'Latecomer Bar (invented)')`);
    const again = await runImport(database.db, { bytes: doc, format: 'json', options: { acceptValid: true } });
    expect(again.status).toBe('accepted');
    expect(again.summary.created).toBe(2);
  });

  test('parallel imports of the same new heat take turns: one creates it, the others find it unchanged, none fails', async () => {
    const bodies = [0, 1, 2, 3].map((i) => json({ ...certificate({ heatNumber: 'PAR-1' }), lots: [{ lotNumber: `P${i}` }] }));
    const reports = await Promise.all(bodies.map((bytes) => runImport(database.db, { bytes, format: 'json' })));
    expect(reports.map((r) => r.items[0].status).sort()).toEqual(['created', 'unchanged', 'unchanged', 'unchanged']);
    const [{ n }] = rowsOf<{ n: number }>(await database.db.execute(sql`select count(*)::int as n from lots l join heats h on h.id = l.heat_id where h.heat_number = 'PAR-1'`));
    expect(n).toBe(4);
    const stuck = rowsOf<{ n: number }>(await database.db.execute(sql`select count(*)::int as n from imports where status = 'received'`))[0].n;
    expect(stuck).toBe(0);
  });

  test('a main element given again under "other" is refused (it would contradict its own column)', async () => {
    const report = await runImport(database.db, { bytes: json(certificate({ heatNumber: 'OT-1', chemistry: { C: 0.21, Mn: 0.82, other: { Mn: 1.5 } } })), format: 'json' });
    expect(report.status).toBe('rejected');
    expect(report.items[0].problems[0].message).toMatch(/main elements/);
  });

  test('a failure inside the transaction leaves nothing written and the archive marked failed', async () => {
    const before = await count('heats');
    const boom = async () => {
      throw new Error('rule crashed');
    };
    await expect(runImport(database.db, { bytes: json(certificate({ heatNumber: 'FAIL-1' })), format: 'json', afterWrite: boom })).rejects.toThrow('rule crashed');
    expect(await count('heats')).toBe(before);
    const [last] = rowsOf<{ status: string }>(await database.db.execute(sql`select status from imports order by id desc limit 1`));
    expect(last.status).toBe('failed');
  });
});
