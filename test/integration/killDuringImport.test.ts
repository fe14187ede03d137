// A process killed (SIGKILL) in the middle of a 20,000-certificate import leaves all of it or none:
// the whole write is one transaction, and the archived document records only what committed.
import { spawn } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, expect, test } from 'vitest';
import { sql } from 'drizzle-orm';
import { createTestDatabase, type TestDatabase } from '../helpers/testDatabase.ts';
import { openDatabase, rowsOf, type Database } from '../../src/db/connection.ts';

const N = 20_000;
let server: TestDatabase | null = null;
let tempDir: string | null = null;
afterAll(async () => {
  await server?.close();
  if (tempDir) rmSync(tempDir, { recursive: true, force: true });
});

/** Starts the child, kills it as soon as it reports the first stored chunk (before commit). */
function importAndKill(target: string): Promise<{ killedMidway: boolean; output: string }> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, ['--import', 'tsx', 'test/helpers/importChild.ts', target, String(N)], { stdio: ['ignore', 'pipe', 'pipe'] });
    let output = '';
    let killedMidway = false;
    child.stdout.on('data', (chunk: Buffer) => {
      output += chunk.toString();
      if (!killedMidway && /STORED \d+\/\d+/.test(output) && !output.includes('DONE')) {
        killedMidway = true;
        child.kill('SIGKILL');
      }
    });
    child.stderr.on('data', (chunk: Buffer) => (output += chunk.toString()));
    child.on('error', reject);
    child.on('exit', () => resolve({ killedMidway, output }));
  });
}

async function counts(database: Database) {
  const [row] = rowsOf<{ heats: number; readings: number; received: number }>(
    await database.db.execute(sql`select (select count(*)::int from heats) as heats, (select count(*)::int from end_quench_readings) as readings,
      (select count(*)::int from imports where status = 'received') as received`),
  );
  return row;
}

test('all or nothing after SIGKILL mid-import', async () => {
  let target: string;
  if (process.env.TEST_DATABASE_URL) {
    server = await createTestDatabase();
    target = server.url!;
  } else {
    tempDir = mkdtempSync(join(tmpdir(), 'endquench-kill-'));
    target = tempDir;
  }
  const { killedMidway, output } = await importAndKill(target);
  expect(killedMidway, output).toBe(true);

  const database = server ?? (await openDatabase({ dataDir: tempDir }));
  try {
    const after = await counts(database);
    // Killed before the commit: nothing of the data; the archived document stays, marked unfinished.
    expect(after.readings).toBe(after.heats * 8);
    expect(after.heats).toBe(0);
    expect(after.received).toBe(1);
  } finally {
    if (!server) await database.close();
  }
});
