// Writes the demo data into a database through the same paths as real data: mills, grades and bands
// through the reference-data functions, certificates and re-tests through the import pipeline (JSON,
// a few large batches, so each batch is one transaction of set-based inserts).
import { sql } from 'drizzle-orm';
import { rowsOf, type Db } from '../src/db/connection.ts';
import { addBandVersion, listBands, upsertGrade, upsertMill } from '../src/db/referenceData.ts';
import { runImport, type ImportReport } from '../src/ingest/importPipeline.ts';
import { runIngestRules } from '../src/alerts/rules/index.ts';
import { refitModels } from '../src/analysis/refit.ts';
import { DEFAULT_DEMO_SEED, generateDemo, type DemoData, type DemoStories } from './generate.ts';

/** Certificates per import batch: a few large batches keep the load fast. */
export const DEMO_BATCH_SIZE = 1250;

export type DemoStage = 'reference' | 'certificates' | 'retests' | 'models';

export interface LoadDemoOptions {
  seed?: number;
  batchSize?: number;
  onProgress?: (stage: DemoStage, done: number, total: number) => void;
}

export interface DemoSummary {
  seed: number;
  mills: number;
  grades: number;
  /** Band versions written (none for a grade that already had bands). */
  bandsAdded: number;
  certificates: number;
  heatsCreated: number;
  retests: number;
  testsAdded: number;
  readingsAdded: number;
  importIds: number[];
  /** Chemistry models fitted after the load (per grade, and per mill with enough history). */
  models: number;
  elapsedMs: number;
  stories: DemoStories;
}

export class DemoLoadError extends Error {
  override name = 'DemoLoadError';
}

/** True when no heat is on file. */
export async function isDatabaseEmpty(db: Db): Promise<boolean> {
  const [row] = rowsOf<{ empty: boolean }>(await db.execute(sql`select not exists (select 1 from heats) as empty`));
  return row.empty;
}

async function writeReferenceData(db: Db, data: DemoData, onProgress: LoadDemoOptions['onProgress']): Promise<number> {
  const total = data.mills.length + data.grades.length;
  let done = 0;
  for (const mill of data.mills) {
    await upsertMill(db, mill);
    onProgress?.('reference', ++done, total);
  }
  let bandsAdded = 0;
  for (const grade of data.grades) {
    await upsertGrade(db, grade);
    // Bands are versioned: a grade that already has bands keeps them (a second load adds none).
    if ((await listBands(db, grade.code)).length === 0) {
      for (const b of data.bands.filter((x) => x.grade === grade.code)) {
        await addBandVersion(db, grade.code, b.band);
        bandsAdded++;
      }
    }
    onProgress?.('reference', ++done, total);
  }
  return bandsAdded;
}

function assertWritten(report: ImportReport, what: string): void {
  if (report.status === 'accepted' || report.status === 'duplicate') return;
  const problems = [...report.problems, ...report.items.flatMap((i) => i.problems)].slice(0, 5).map((p) => p.message);
  throw new DemoLoadError(`the demo ${what} were not written (import ${report.importId}, ${report.status}): ${problems.join('; ')}`);
}

const encode = (value: unknown): Uint8Array => new TextEncoder().encode(JSON.stringify(value));

/** Loads the demo scenario. Call on an empty database (see isDatabaseEmpty); re-loading changes nothing. */
export async function loadDemo(db: Db, options: LoadDemoOptions = {}): Promise<DemoSummary> {
  const started = performance.now();
  const seed = options.seed ?? DEFAULT_DEMO_SEED;
  const batchSize = options.batchSize ?? DEMO_BATCH_SIZE;
  if (!Number.isInteger(batchSize) || batchSize < 1) throw new DemoLoadError(`batch size must be a positive integer, got ${batchSize}`);
  const data = generateDemo(seed);
  const bandsAdded = await writeReferenceData(db, data, options.onProgress);

  const summary: DemoSummary = {
    seed,
    mills: data.mills.length,
    grades: data.grades.length,
    bandsAdded,
    certificates: data.certificates.length,
    heatsCreated: 0,
    retests: data.retests.length,
    testsAdded: 0,
    readingsAdded: 0,
    importIds: [],
    models: 0,
    elapsedMs: 0,
    stories: data.stories,
  };
  const tally = (report: ImportReport) => {
    summary.importIds.push(report.importId);
    summary.heatsCreated += report.summary.created;
    summary.testsAdded += report.summary.testsAdded;
    summary.readingsAdded += report.summary.readingsAdded;
  };

  for (let i = 0; i < data.certificates.length; i += batchSize) {
    const batch = data.certificates.slice(i, i + batchSize);
    const report = await runImport(db, {
      bytes: encode({ certificates: batch }),
      format: 'json',
      filename: `demo-certificates-${seed}-${i / batchSize + 1}.json`,
      createdBy: 'demo',
      // The alert rules run in each batch's transaction, as for any import.
      afterWrite: runIngestRules,
    });
    assertWritten(report, 'certificates');
    tally(report);
    options.onProgress?.('certificates', i + batch.length, data.certificates.length);
  }
  if (data.retests.length) {
    const report = await runImport(db, {
      bytes: encode({ tests: data.retests }),
      format: 'json',
      filename: `demo-receiving-tests-${seed}.json`,
      createdBy: 'demo',
      // The alert rules run in each batch's transaction, as for any import.
      afterWrite: runIngestRules,
    });
    assertWritten(report, 'receiving tests');
    tally(report);
    options.onProgress?.('retests', data.retests.length, data.retests.length);
  }
  // The plant's own chemistry models, so heat sheets predict from history rather than from a formula.
  const fits = await refitModels(db, { createdBy: 'demo' });
  summary.models = fits.filter((f) => f.modelId !== null).length;
  options.onProgress?.('models', fits.length, fits.length);
  summary.elapsedMs = Math.round(performance.now() - started);
  return summary;
}
