// `endquench refit`: fit a new version of the chemistry-to-hardness model for every grade (grade-wide)
// and every mill of it with enough history, or for the grade and mill named. Old versions are kept.
import { Command } from 'commander';
import { loadConfig } from '../config.ts';
import { openDatabase } from '../db/connection.ts';
import { refitModels } from '../analysis/refit.ts';


export function register(program: Command): void {
  program
    .command('refit')
    .description('fit new versions of the chemistry-to-hardness models (per grade, and per mill with enough history)')
    .option('--grade <code>', 'only this grade')
    .option('--mill <code>', 'only this mill')
    .option('--from <date>', 'training window start (cast date, YYYY-MM-DD)')
    .option('--to <date>', 'training window end (cast date, YYYY-MM-DD)')
    .option('--no-per-mill', 'grade-wide models only')
    .option('--hold-out-from <date>', 'hold heats cast on or after this date out of training and score them (coverage of the 95 % prediction intervals)')
    .option('--json', 'print the outcome as JSON')
    .action(async (opts: { grade?: string; mill?: string; from?: string; to?: string; perMill: boolean; holdOutFrom?: string; json?: boolean }) => {
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
            const held = o.heldOut
              ? `; held out ${o.heldOut.heats} heat(s): ${o.heldOut.coverage95 === null ? 'no readings to score' : `${(100 * o.heldOut.coverage95).toFixed(1)} % of ${o.heldOut.readings} readings inside their 95 % prediction interval, RMSE ${o.heldOut.rmse?.toFixed(2)} HRC (cross-validated ${o.heldOut.cvRmse?.toFixed(2)})`}`
              : '';
            console.log(o.problem ? `${what}: not refitted: ${o.problem}` : `${what}: model ${o.modelId} (version ${o.version}), ${o.distances} distance(s)${held}`);
          }
        process.exitCode = outcomes.some((o) => o.problem) ? 1 : 0;
      } finally {
        await database.close();
      }
    });
}
