// Importing files: the default rejects a file with any invalid row (nothing written but the archive),
// --accept-valid writes the rest; the same through the command line, with its exit code.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { sql } from 'drizzle-orm';
import { createTestDatabase, type TestDatabase } from '../helpers/testDatabase.ts';
import { runImport } from '../../src/ingest/importPipeline.ts';
import { rowsOf } from '../../src/db/connection.ts';
import { loadMillLayout } from '../../src/ingest/millLayout.ts';

const HEADER = 'mill,grade,heat_number,cast_date,grain_size,C,Mn,Si,Cr,Ni,Mo,source,J 1.5 mm,J 3 mm,J 5 mm,J 7 mm,J 9 mm';

/** 100 rows, one heat each; row `badRow` (file row numbering, header = 1) gets Mn "0.8x". */
function hundredRowCsv(badRow: number | null): string {
  const lines = [HEADER];
  for (let i = 0; i < 100; i++) {
    const fileRow = i + 2;
    const mn = fileRow === badRow ? '0.8x' : '0.82';
    lines.push(`BRENNWALD,8620H,F${String(i).padStart(4, '0')},2025-02-${String((i % 28) + 1).padStart(2, '0')},7,0.21,${mn},0.25,0.52,0.45,0.18,mill_certificate,45,43,38,33,29`);
  }
  return lines.join('\n') + '\n';
}

let database: TestDatabase;
beforeAll(async () => {
  database = await createTestDatabase();
  await database.db.execute(sql`insert into mills (code, name) values ('BRENNWALD', 'Brennwald Stahl (invented)')`);
  await database.db.execute(sql`insert into grades (code) values ('8620H')`);
});
afterAll(async () => database?.close());

const count = async (table: string) =>
  rowsOf<{ n: number }>(await database.db.execute(sql`select count(*)::int as n from ${sql.identifier(table)}`))[0].n;

describe('a 100-row CSV with one bad row', () => {
  test('is rejected whole by default, naming the row and column; only the document is archived', async () => {
    const bytes = new TextEncoder().encode(hundredRowCsv(37));
    const report = await runImport(database.db, { bytes, format: 'csv', filename: 'hundred.csv' });
    expect(report.status).toBe('rejected');
    const problems = report.items.flatMap((i) => i.problems);
    expect(problems).toHaveLength(1);
    expect(problems[0]).toMatchObject({ row: 37, column: 'Mn' });
    expect(await count('heats')).toBe(0);
    expect(await count('end_quench_readings')).toBe(0);
    const [archived] = rowsOf<{ status: string; size_bytes: number }>(await database.db.execute(sql`select status, size_bytes from imports where id = ${report.importId}`));
    expect(archived).toEqual({ status: 'rejected', size_bytes: bytes.byteLength });
  });

  test('with accept-valid, the 99 valid heats are written and the bad row reported', async () => {
    const bytes = new TextEncoder().encode(hundredRowCsv(37));
    const report = await runImport(database.db, { bytes, format: 'csv', filename: 'hundred.csv', options: { acceptValid: true } });
    expect(report.status).toBe('partially_accepted');
    expect(await count('heats')).toBe(99);
    expect(report.summary).toMatchObject({ items: 100, valid: 99, invalid: 1, created: 99 });
  });

  test('the sample mill file loads through its layout', async () => {
    const bytes = new Uint8Array(readFileSync('seed/samples/kessler-bar-works-hardenability.csv'));
    const layout = loadMillLayout(JSON.parse(readFileSync('seed/samples/layouts/kessler-bar-works.json', 'utf8')));
    const report = await runImport(database.db, { bytes, format: 'csv', layout, options: { createMissing: true } });
    expect(report.items.flatMap((i) => i.problems)).toEqual([]);
    expect(report.status).toBe('accepted');
  });
});

describe('the import command', () => {
  const dir = mkdtempSync(join(tmpdir(), 'endquench-cli-'));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));
  const cli = (...args: string[]) =>
    spawnSync(process.execPath, ['bin/endquench.js', ...args], {
      encoding: 'utf8',
      env: { ...process.env, ENDQUENCH_DATA_DIR: join(dir, 'data'), DATABASE_URL: '', ENDQUENCH_FROM_SOURCE: '1', LOG_LEVEL: 'silent' },
    });

  test('exits non-zero on a rejected file, names the row and column, and writes with --accept-valid', () => {
    const file = join(dir, 'hundred.csv');
    writeFileSync(file, hundredRowCsv(12));
    const rejected = cli('import', file, '--create-missing');
    expect(rejected.status, rejected.stderr).toBe(1);
    expect(rejected.stdout).toMatch(/row 12, column "Mn"/);
    expect(rejected.stdout).toMatch(/Nothing was written/);
    const accepted = cli('import', file, '--create-missing', '--accept-valid');
    expect(accepted.status, accepted.stderr).toBe(0);
    expect(accepted.stdout).toMatch(/99 heat\(s\) new/);
  });

  test('a missing file is one plain line and exit code 1, not a stack trace', () => {
    const r = cli('import', join(dir, 'nowhere.csv'));
    expect(r.status).toBe(1);
    expect(r.stderr.trim()).toBe(`endquench: no such file: ${join(dir, 'nowhere.csv')}`);
  });
});
