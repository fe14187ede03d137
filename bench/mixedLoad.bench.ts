// A bounded mixed load over HTTP: the service runs as its own process (`endquench serve`) and this one
// sends a seeded mix of ingest (one new certificate per POST, alert rules included) and reads (API lists
// and details, heat review, capability, pages) at concurrency 1, 8 and 32, a fixed number of requests
// per level. Reported per level: requests, errors (any answer other than the one expected), throughput,
// and p50 / p95 / p99 latency of reads and of writes. Fails (exit 1) if any request erred.
// Database: PostgreSQL when TEST_DATABASE_URL is set (a fresh database), otherwise PGlite in a temporary directory.
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createTestDatabase, type TestDatabase } from '../test/helpers/testDatabase.ts';
import { startServiceProcess, stopAllServices } from '../test/helpers/serviceProcess.ts';
import { variedCertificates } from '../test/fixtures/variedCertificates.ts';
import { createRng } from '../src/stats/random.ts';

const LEVELS = [1, 8, 32];
const REQUESTS_PER_LEVEL = Number(process.env.MIXED_LOAD_REQUESTS ?? 240);
const WRITE_SHARE = 0.1;
const PRELOAD = 600;

let server: TestDatabase | null = null;
let dir: string | null = null;
let env: Record<string, string>;
if (process.env.TEST_DATABASE_URL) {
  server = await createTestDatabase();
  env = { DATABASE_URL: server.url! };
} else {
  dir = mkdtempSync(join(tmpdir(), 'endquench-load-'));
  env = { ENDQUENCH_DATA_DIR: dir };
}

const quantile = (sorted: number[], q: number) => (sorted.length ? sorted[Math.min(sorted.length - 1, Math.ceil(q * sorted.length) - 1)] : NaN);
const fmt = (values: number[]) => {
  const s = [...values].sort((a, b) => a - b);
  return s.length ? `p50 ${quantile(s, 0.5).toFixed(0)} / p95 ${quantile(s, 0.95).toFixed(0)} / p99 ${quantile(s, 0.99).toFixed(0)} ms (n ${s.length})` : 'none';
};

let failed = false;
try {
  const service = await startServiceProcess({ ...env, ENDQUENCH_WEBHOOKS: 'off', LOG_LEVEL: 'error' });
  const preload = await fetch(`${service.url}/api/v1/imports?format=json&createMissing=true`, {
    method: 'POST',
    headers: { 'content-type': 'application/json' },
    body: JSON.stringify(variedCertificates(PRELOAD, { prefix: 'P' })),
  });
  if (preload.status !== 201) throw new Error(`preload answered ${preload.status}: ${(await preload.text()).slice(0, 300)}`);
  const { items } = (await preload.json()) as { items: Array<{ heatId: number }> };
  // A band for the grade, so that capability has limits (invented limits, in the range of 8620H curves).
  const band = await fetch(`${service.url}/api/v1/grades/8620H/bands`, {
    method: 'POST',
    headers: { 'content-type': 'application/json' },
    body: JSON.stringify({ effectiveFrom: '2020-01-01', distanceSystem: 'mm', points: [{ at: 1.5, min: 40, max: 50 }, { at: 5, min: 32, max: 44 }, { at: 9, min: 24, max: 36 }, { at: 15, min: 18, max: 30 }] }),
  });
  if (band.status !== 201) throw new Error(`band answered ${band.status}: ${(await band.text()).slice(0, 300)}`);
  const heatIds = items.map((i) => i.heatId);
  const fresh = variedCertificates(LEVELS.length * REQUESTS_PER_LEVEL, { prefix: 'W', seed: 1616 }).map((c, i) => ({ ...c, castDate: '2025-06-01', certificateDate: '2025-06-05', certificateNumber: `W-${i}` }));
  let nextWrite = 0;
  const rng = createRng(16);
  const reads = (id: number) => [
    '/api/v1/heats?limit=50',
    `/api/v1/heats/${id}`,
    `/api/v1/heats/${id}/review`,
    '/api/v1/alerts?limit=50',
    '/api/v1/mills',
    '/api/v1/capability?grade=8620H&mill=BRENNWALD',
    '/heats',
    `/heats/${id}`,
  ];
  console.log(`database: ${server ? 'postgres' : 'pglite'}; ${PRELOAD} heats preloaded; ${REQUESTS_PER_LEVEL} requests per level, ${WRITE_SHARE * 100} % writes`);
  for (const level of LEVELS) {
    const plan = Array.from({ length: REQUESTS_PER_LEVEL }, () => (rng.next() < WRITE_SHARE ? ({ kind: 'write' } as const) : ({ kind: 'read', path: reads(heatIds[rng.int(heatIds.length)])[rng.int(8)] } as const)));
    const readMs: number[] = [];
    const byPath = new Map<string, number[]>();
    const writeMs: number[] = [];
    const errors: string[] = [];
    let cursor = 0;
    const started = performance.now();
    await Promise.all(
      Array.from({ length: level }, async () => {
        for (let i = cursor++; i < plan.length; i = cursor++) {
          const step = plan[i];
          const t0 = performance.now();
          try {
            if (step.kind === 'write') {
              const r = await fetch(`${service.url}/api/v1/certificates?createMissing=true`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify(fresh[nextWrite++]) });
              await r.arrayBuffer();
              writeMs.push(performance.now() - t0);
              if (r.status !== 201) errors.push(`POST certificate: ${r.status}`);
            } else {
              const r = await fetch(`${service.url}${step.path}`);
              await r.arrayBuffer();
              readMs.push(performance.now() - t0);
              const kind = step.path.replace(/\/\d+/g, '/{id}');
              byPath.set(kind, [...(byPath.get(kind) ?? []), performance.now() - t0]);
              if (r.status !== 200) errors.push(`GET ${step.path}: ${r.status}`);
            }
          } catch (error) {
            errors.push(`${step.kind}: ${(error as Error).message}`);
          }
        }
      }),
    );
    const seconds = (performance.now() - started) / 1000;
    console.log(`concurrency ${String(level).padStart(2)}: ${plan.length} requests in ${seconds.toFixed(1)} s (${(plan.length / seconds).toFixed(1)}/s), ${errors.length} errors; reads ${fmt(readMs)}; writes ${fmt(writeMs)}`);
    const slowest = [...byPath].map(([k, v]) => [k, quantile([...v].sort((a, b) => a - b), 0.95)] as const).sort((a, b) => b[1] - a[1]).slice(0, 3);
    console.log(`  slowest reads (p95): ${slowest.map(([k, v]) => `${k} ${v.toFixed(0)} ms`).join('; ')}`);
    if (errors.length) {
      failed = true;
      console.log(`  first errors: ${errors.slice(0, 5).join('; ')}`);
    }
  }
  if (!service.alive()) throw new Error('the service died during the run');
} finally {
  await stopAllServices();
  await server?.close();
  if (dir) rmSync(dir, { recursive: true, force: true });
}
process.exit(failed ? 1 : 0);
