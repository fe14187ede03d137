// `endquench demo`: loads the invented demo plant (seed/) into the configured database.
import { Command } from 'commander';
import cliProgress from 'cli-progress';
import { loadConfig } from '../config.ts';
import { openDatabase, type Db } from '../db/connection.ts';
import { isDatabaseEmpty, loadDemo, type DemoStage, type DemoSummary } from '../../seed/load.ts';

export class DemoRefusedError extends Error {
  override name = 'DemoRefusedError';
}

export interface RunDemoOptions {
  /** Load even when heats are already on file (demo heats already there are left unchanged). */
  force?: boolean;
  onProgress?: (stage: DemoStage, done: number, total: number) => void;
}

/** Loads the demo unless the database already holds heats (then refuses, unless forced). */
export async function runDemo(db: Db, options: RunDemoOptions = {}): Promise<DemoSummary> {
  if (!options.force && !(await isDatabaseEmpty(db))) {
    throw new DemoRefusedError('the database already holds heats; the demo is meant for an empty database (use --force to load it anyway)');
  }
  return loadDemo(db, { onProgress: options.onProgress });
}

export function formatDemoSummary(s: DemoSummary): string {
  const st = s.stories;
  return [
    `Demo loaded (seed ${s.seed}) in ${(s.elapsedMs / 1000).toFixed(1)} s: ${s.mills} mills, ${s.grades} grades, ${s.bandsAdded} band version(s) added,`,
    `  ${s.heatsCreated} new heat(s) of ${s.certificates} certificates, ${s.retests} receiving re-tests; ${s.testsAdded} test(s), ${s.readingsAdded} reading(s) written; ${s.models} chemistry model(s) fitted.`,
    'Planted stories:',
    `  1. ${st.manganeseCreep.title}: ${st.manganeseCreep.mill}, ${st.manganeseCreep.grade}, ${st.manganeseCreep.from} to ${st.manganeseCreep.to} (Mn aim ${st.manganeseCreep.mnAimBefore} -> ${st.manganeseCreep.mnAimAtEnd} %).`,
    `  2. ${st.copiedCertificate.title}: ${st.copiedCertificate.mill} heat ${st.copiedCertificate.copyHeat} (${st.copiedCertificate.copyCastDate}) repeats heat ${st.copiedCertificate.sourceHeat} (${st.copiedCertificate.sourceCastDate}), ${st.copiedCertificate.grade}.`,
    `  3. ${st.smoothReporting.title}: ${st.smoothReporting.mill} from ${st.smoothReporting.from} (${st.smoothReporting.heatNumbers.length} heats).`,
    `  4. ${st.failedOnReceipt.title}: ${st.failedOnReceipt.mill} heat ${st.failedOnReceipt.heatNumber} lot ${st.failedOnReceipt.lotNumber}, ${st.failedOnReceipt.grade}, received ${st.failedOnReceipt.receivedDate}.`,
    `  5. ${st.bandTightening.title}: ${st.bandTightening.grade} draft band v${st.bandTightening.proposedVersion}; ${st.bandTightening.comfortableMill} holds it, ${st.bandTightening.strugglingMill} does not.`,
  ].join('\n');
}

export function register(program: Command): void {
  program
    .command('demo')
    .description('load the invented demo plant (three mills, four grades, three years of heats) into the configured database')
    .option('--force', 'load even when heats are already on file')
    .option('--json', 'print the summary as JSON')
    .action(async (opts: { force?: boolean; json?: boolean }) => {
      const config = loadConfig();
      const database = await openDatabase({ url: config.databaseUrl, dataDir: config.dataDir });
      await database.migrate();
      const bar = process.stderr.isTTY
        ? new cliProgress.SingleBar({ format: ' {stage} [{bar}] {value}/{total}', hideCursor: true }, cliProgress.Presets.shades_classic)
        : null;
      let stage: DemoStage | null = null;
      try {
        const summary = await runDemo(database.db, {
          force: opts.force,
          onProgress: (s, done, total) => {
            if (!bar) return;
            if (s !== stage) {
              if (stage) bar.stop();
              bar.start(total, 0, { stage: s });
              stage = s;
            }
            bar.update(done);
          },
        });
        bar?.stop();
        console.log(opts.json ? JSON.stringify(summary, null, 2) : formatDemoSummary(summary));
      } catch (error) {
        bar?.stop();
        if (error instanceof DemoRefusedError) {
          console.error(`endquench demo: ${error.message}`);
          process.exitCode = 1;
          return;
        }
        throw error;
      } finally {
        await database.close();
      }
    });
}
