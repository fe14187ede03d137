// Bulk import of 10^5 certificates (8 readings each) through the import pipeline, against PostgreSQL's own
// COPY of the same rows into the same tables (the floor for loading data into PostgreSQL).
// Needs a PostgreSQL server: BENCH_DATABASE_URL or TEST_DATABASE_URL (an admin URL; fresh databases are
// created and dropped). Without one it measures the pipeline on PGlite at a smaller size only.
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import pg from 'pg';
import { sql } from 'drizzle-orm';
import { openDatabase, rowsOf } from '../src/db/connection.ts';
import { runImport } from '../src/ingest/importPipeline.ts';
import { prepareCertificate } from '../src/ingest/prepare.ts';
import type { CertificateInput } from '../src/ingest/certificateSchema.ts';
import { createRng } from '../src/stats/random.ts';

const serverUrl = process.env.BENCH_DATABASE_URL ?? process.env.TEST_DATABASE_URL;
const N = serverUrl ? 100_000 : 10_000;
const DISTANCES = [1.5, 3, 5, 7, 9, 11, 13, 15];

function certificates(n: number): CertificateInput[] {
  const rng = createRng(20261202);
  return Array.from({ length: n }, (_, i) => {
    const c = 0.18 + 0.04 * rng.next();
    const top = 44 + 3 * rng.next();
    return {
      mill: 'BENCHMILL',
      grade: '8620H',
      heatNumber: `H${String(i).padStart(7, '0')}`,
      castDate: '2025-01-15',
      certificateNumber: `C${i}`,
      grainSize: 7,
      chemistry: { C: Number(c.toFixed(3)), Mn: 0.8, Si: 0.25, Cr: 0.5, Ni: 0.45, Mo: 0.18 },
      lots: [],
      tests: [
        {
          source: 'mill_certificate' as const,
          basis: 'measured' as const,
          distanceSystem: 'mm' as const,
          readings: DISTANCES.map((at, k) => ({ at, hrc: Math.max(20, Math.round(top - 2.6 * k)) })),
        },
      ],
    };
  });
}

async function withFreshDatabase<T>(fn: (url: string) => Promise<T>): Promise<T> {
  const name = `endquench_bench_${process.pid}_${Math.floor(Math.random() * 1e6)}`;
  const admin = new pg.Client({ connectionString: serverUrl });
  await admin.connect();
  await admin.query(`create database ${name}`);
  await admin.end();
  const url = new URL(serverUrl!);
  url.pathname = `/${name}`;
  try {
    return await fn(url.toString());
  } finally {
    const dropper = new pg.Client({ connectionString: serverUrl });
    await dropper.connect();
    await dropper.query(`drop database if exists ${name} with (force)`);
    await dropper.end();
  }
}

async function timePipeline(url: string | null, certs: CertificateInput[]): Promise<number> {
  const database = await openDatabase(url ? { url } : { dataDir: null });
  await database.migrate();
  await database.db.execute(sql`insert into mills (code, name) values ('BENCHMILL', 'Bench mill')`);
  await database.db.execute(sql`insert into grades (code) values ('8620H')`);
  const bytes = new TextEncoder().encode(JSON.stringify(certs));
  const start = process.hrtime.bigint();
  const report = await runImport(database.db, { bytes, format: 'json' });
  const ms = Number(process.hrtime.bigint() - start) / 1e6;
  const [{ n }] = rowsOf<{ n: number }>(await database.db.execute(sql`select count(*)::int as n from end_quench_readings`));
  if (report.status !== 'accepted' || n !== certs.length * DISTANCES.length) throw new Error(`import incomplete: ${report.status}, ${n} readings`);
  await database.close();
  return ms;
}

/** The same rows written as CSV and loaded with COPY (psql \copy), table by table. */
async function timeCopy(url: string, certs: CertificateInput[]): Promise<number> {
  const database = await openDatabase({ url });
  await database.migrate();
  await database.close();
  const dir = mkdtempSync(join(tmpdir(), 'endquench-copy-'));
  try {
    const prepared = certs.map(prepareCertificate);
    const csv = (rows: unknown[][]) => rows.map((r) => r.map((v) => (v === null ? '' : typeof v === 'string' && /[",\n]/.test(v) ? `"${v.replace(/"/g, '""')}"` : String(v))).join(',')).join('\n') + '\n';
    writeFileSync(join(dir, 'heats.csv'), csv(prepared.map((c, i) => [i + 1, 1, c.heatNumber, 1, c.castDate])));
    writeFileSync(
      join(dir, 'certificates.csv'),
      csv(prepared.map((c, i) => [i + 1, i + 1, 1, c.certificateNumber, c.grainSize, c.chemistry.c, c.chemistry.mn, JSON.stringify(c.document), c.contentHash])),
    );
    writeFileSync(join(dir, 'tests.csv'), csv(prepared.map((c, i) => [i + 1, i + 1, i + 1, 'mill_certificate', 'measured', 'mm', c.certificateTests[0].contentHash])));
    writeFileSync(join(dir, 'readings.csv'), csv(prepared.flatMap((c, i) => c.certificateTests[0].readings.map((r) => [i + 1, r.distanceMm, r.label, r.hrc]))));
    const script = [
      "insert into mills (id, code, name) values (1, 'BENCHMILL', 'Bench mill');",
      "insert into grades (id, code) values (1, '8620H');",
      'begin;',
      `\\copy heats (id, mill_id, heat_number, grade_id, cast_date) from '${join(dir, 'heats.csv')}' csv`,
      `\\copy certificates (id, heat_id, revision, certificate_number, grain_size, c, mn, document, content_hash) from '${join(dir, 'certificates.csv')}' csv`,
      `\\copy end_quench_tests (id, heat_id, certificate_id, source, basis, distance_system, content_hash) from '${join(dir, 'tests.csv')}' csv`,
      `\\copy end_quench_readings (test_id, distance_mm, label, hrc) from '${join(dir, 'readings.csv')}' csv`,
      'commit;',
    ].join('\n');
    writeFileSync(join(dir, 'load.sql'), script);
    const start = process.hrtime.bigint();
    execFileSync('psql', ['-q', '-X', '-v', 'ON_ERROR_STOP=1', '-f', join(dir, 'load.sql'), url], { stdio: 'inherit' });
    return Number(process.hrtime.bigint() - start) / 1e6;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

const certs = certificates(N);
console.log(`certificates: ${N} (x ${DISTANCES.length} readings)`);
if (serverUrl) {
  const pipelineMs = await withFreshDatabase((url) => timePipeline(url, certs));
  const copyMs = await withFreshDatabase((url) => timeCopy(url, certs));
  console.log(`import pipeline (parse, validate, plan, set-based insert, one transaction): ${(pipelineMs / 1000).toFixed(2)} s`);
  console.log(`COPY of the same rows (CSV already written; no validation): ${(copyMs / 1000).toFixed(2)} s`);
  console.log(`ratio pipeline / COPY: ${(pipelineMs / copyMs).toFixed(1)}`);
} else {
  console.log('no PostgreSQL server (set BENCH_DATABASE_URL): pipeline on in-memory PGlite only');
  const pipelineMs = await timePipeline(null, certs);
  console.log(`import pipeline on PGlite: ${(pipelineMs / 1000).toFixed(2)} s`);
}
