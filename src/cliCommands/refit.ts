// `endquench refit`: fit a new version of the chemistry-to-hardness model for every grade (grade-wide)
// and every mill of it with enough history, or for the grade and mill named. Old versions are kept.
import { Command } from 'commander';
import { loadConfig } from '../config.ts';
import { openDatabase, type Db } from '../db/connection.ts';
import { seriesWithHistory } from '../db/models.ts';
import { fitAndStoreModel, minHeatsFor, DEFAULT_PREDICTORS } from '../analysis/chemistryModel.ts';

export interface RefitOptions {
  grade?: string;
  mill?: string;
  from?: string;
  to?: string;
  /** Also fit one model per mill (default true). */
  perMill?: boolean;
  createdBy?: string;
}

export interface RefitOutcome {
  grade: string;
  mill: string | null;
  modelId: number | null;
  version: number | null;
  distances: number;
  problem: string | null;
}

/** Refits the models asked for; a failure on one series is reported and the others go on. */
export async function refitModels(db: Db, options: RefitOptions = {}): Promise<RefitOutcome[]> {
  const minHeats = minHeatsFor(DEFAULT_PREDICTORS.length);
  const series = (await seriesWithHistory(db, 1)).filter((s) => (!options.grade || s.grade === options.grade) && (!options.mill || s.mill === options.mill));
  const targets: Array<{ grade: string; mill: string | null }> = [];
  const grades = [...new Set(series.map((s) => s.grade))];
  for (const grade of grades) {
    const own = series.filter((s) => s.grade === grade);
    if (!options.mill && own.reduce((a, s) => a + s.heats, 0) >= minHeats) targets.push({ grade, mill: null });
    if (options.perMill !== false) for (const s of own) if (s.heats >= minHeats) targets.push({ grade, mill: s.mill });
  }
  const outcomes: RefitOutcome[] = [];
  for (const t of targets) {
    try {
      const m = await fitAndStoreModel(db, { grade: t.grade, mill: t.mill ?? undefined, from: options.from, to: options.to, createdBy: options.createdBy ?? 'refit' });
      outcomes.push({ ...t, modelId: m.id, version: m.version, distances: m.fits.distances.length, problem: null });
    } catch (error) {
      outcomes.push({ ...t, modelId: null, version: null, distances: 0, problem: (error as Error).message });
    }
  }
  return outcomes;
}

export function register(program: Command): void {
  program
    .command('refit')
    .description('fit new versions of the chemistry-to-hardness models (per grade, and per mill with enough history)')
    .option('--grade <code>', 'only this grade')
    .option('--mill <code>', 'only this mill')
    .option('--from <date>', 'training window start (cast date, YYYY-MM-DD)')
    .option('--to <date>', 'training window end (cast date, YYYY-MM-DD)')
    .option('--no-per-mill', 'grade-wide models only')
    .option('--json', 'print the outcome as JSON')
    .action(async (opts: { grade?: string; mill?: string; from?: string; to?: string; perMill: boolean; json?: boolean }) => {
      const config = loadConfig();
      const database = await openDatabase({ url: config.databaseUrl, dataDir: config.dataDir });
      try {
        await database.migrate();
        const outcomes = await refitModels(database.db, { ...opts, createdBy: 'cli refit' });
        if (opts.json) console.log(JSON.stringify(outcomes, null, 2));
        else if (outcomes.length === 0) console.log('Nothing to refit: no grade has enough history for a model.');
        else
          for (const o of outcomes) {
            const what = `${o.grade}${o.mill ? ` / ${o.mill}` : ' (all mills)'}`;
            console.log(o.problem ? `${what}: not refitted: ${o.problem}` : `${what}: model ${o.modelId} (version ${o.version}), ${o.distances} distance(s)`);
          }
        process.exitCode = outcomes.some((o) => o.problem) ? 1 : 0;
      } finally {
        await database.close();
      }
    });
}
