// The `endquench` command line.
import { readFile, writeFile } from 'node:fs/promises';
import { basename, extname } from 'node:path';
import { Command, InvalidArgumentError } from 'commander';
import cliProgress from 'cli-progress';
import { loadConfig } from './config.ts';
import { openDatabase } from './db/connection.ts';
import { createLogger } from './logger.ts';
import { startService } from './server.ts';
import { runImport, type ImportFormat, type ImportReport } from './ingest/importPipeline.ts';
import { loadMillLayout } from './ingest/millLayout.ts';
import { runIngestRules } from './alerts/rules/index.ts';
import { register as registerTokenCommands } from './cliCommands/token.ts';
import { register as registerDemoCommand } from './cliCommands/demo.ts';
import { register as registerRefitCommand } from './cliCommands/refit.ts';
import { register as registerReportCommand } from './cliCommands/report.ts';
import { register as registerPartBandCommand } from './cliCommands/partBand.ts';
import { register as registerCatalogCommands } from './cliCommands/catalog.ts';

const program = new Command();
program.name('endquench').description('Hardenability records of bar steel from mills: ingest, analysis, alerts.');

program
  .command('serve')
  .description('start the web service (PORT, HOST, DATABASE_URL, ENDQUENCH_DATA_DIR, LOG_LEVEL)')
  .option('--allow-open', 'serve a non-local address although no API token exists (same as ENDQUENCH_ALLOW_OPEN=1)')
  .action(async (opts: { allowOpen?: boolean }) => {
    const config = loadConfig();
    const service = await startService({ ...config, allowOpen: config.allowOpen || Boolean(opts.allowOpen) });
    const stop = async () => {
      await service.stop();
      process.exit(0);
    };
    process.once('SIGINT', stop);
    process.once('SIGTERM', stop);
  });

program
  .command('migrate')
  .description('apply the database migrations and exit')
  .action(async () => {
    const config = loadConfig();
    const database = await openDatabase({ url: config.databaseUrl, dataDir: config.dataDir });
    await database.migrate();
    await database.close();
    console.log(`Migrations applied (${database.kind === 'pglite' ? `embedded database in ${config.dataDir}` : 'PostgreSQL server'}).`);
  });

const formatOption = (value: string): ImportFormat => {
  if (value === 'csv' || value === 'xlsx' || value === 'json') return value;
  throw new InvalidArgumentError('must be csv, xlsx or json');
};

program
  .command('import')
  .description('import a file of certificates and end-quench tests (CSV, XLSX or JSON)')
  .argument('<file>', 'the document to import')
  .option('--mill-layout <file>', "a mill layout (JSON) mapping the mill's own columns to ours")
  .option('--format <format>', 'csv, xlsx or json (default: from the file extension)', formatOption)
  .option('--dry-run', 'validate only; write nothing but the archived document')
  .option('--accept-valid', 'write the valid rows and report the others (default: any invalid row rejects the file)')
  .option('--create-missing', 'create mills and grades not yet on file')
  .option('--revise', 'store changed certificates as new revisions')
  .option('--mill <code>', 'a table without a mill column: the mill that sent it (headers are recognised when no layout is given)')
  .option('--distance-unit <unit>', 'a table without a layout: the unit of whole-number J headers (mm or sixteenths) when their set does not say it')
  .option('--save-layout <file>', 'write the recognised header mapping as a mill layout (JSON) to use with --mill-layout')
  .option('--json', 'print the full report as JSON')
  .action(async (file: string, opts) => {
    if (opts.distanceUnit !== undefined && opts.distanceUnit !== 'mm' && opts.distanceUnit !== 'sixteenths') throw new InvalidArgumentError('--distance-unit must be mm or sixteenths');
    const config = loadConfig();
    const format: ImportFormat = opts.format ?? formatOption(extname(file).slice(1).toLowerCase());
    const bytes = new Uint8Array(await readFile(file));
    let layout;
    if (opts.millLayout) {
      try {
        layout = loadMillLayout(JSON.parse(await readFile(opts.millLayout, 'utf8')));
      } catch (error) {
        if (error instanceof SyntaxError) throw new SyntaxError(`${opts.millLayout}: ${error.message}`);
        throw error;
      }
    }
    const database = await openDatabase({ url: config.databaseUrl, dataDir: config.dataDir });
    await database.migrate();
    const bar = process.stderr.isTTY ? new cliProgress.SingleBar({ format: ' {stage} [{bar}] {value}/{total}', hideCursor: true }, cliProgress.Presets.shades_classic) : null;
    let started = false;
    try {
      const report = await runImport(database.db, {
        bytes,
        format,
        filename: basename(file),
        layout,
        millCode: opts.mill,
        distanceUnit: opts.distanceUnit,
        createdBy: 'cli',
        afterWrite: runIngestRules,
        options: { dryRun: opts.dryRun, acceptValid: opts.acceptValid, createMissing: opts.createMissing, revise: opts.revise },
        onProgress: (stage, done, total) => {
          if (!bar || stage !== 'store') return;
          if (!started) bar.start(total, 0, { stage: 'writing' });
          started = true;
          bar.update(done);
        },
      });
      bar?.stop();
      if (opts.saveLayout) {
        if (!report.mapping?.layout) throw new InvalidArgumentError(`no layout to save: ${report.mapping ? report.mapping.missing.join('; ') : 'a layout was given, or the file is JSON'}`);
        await writeFile(opts.saveLayout, `${JSON.stringify(report.mapping.layout, null, 2)}\n`);
      }
      if (opts.json) console.log(JSON.stringify(report, null, 2));
      else console.log(formatReport(report));
      process.exitCode = report.status === 'rejected' ? 1 : 0;
    } finally {
      await database.close();
    }
  });

export function formatReport(report: ImportReport): string {
  const s = report.summary;
  const lines = [
    `Import ${report.importId}: ${report.status.replace('_', ' ')}.`,
    `  ${s.items} item(s): ${s.valid} valid, ${s.invalid} with problems; ${s.created} heat(s) new, ${s.revised} revised, ${s.unchanged} unchanged; ${s.testsAdded} test(s) and ${s.readingsAdded} reading(s) written.`,
  ];
  if (report.mapping && !report.mapping.ownLayout) {
    lines.push('  Columns (headers recognised; save them as a layout with --save-layout):');
    for (const line of report.mapping.lines) lines.push(`    ${line}`);
  } else if (report.mapping?.missing.length) {
    for (const m of report.mapping.missing) lines.push(`  Missing: ${m}.`);
  }
  if (report.dryRun) lines.push(`  ${report.dryRun.message}`);
  const problems = [...report.problems, ...report.items.flatMap((i) => i.problems)];
  if (problems.length) {
    lines.push(`  Problems (${problems.length}):`);
    for (const p of problems.slice(0, 50)) {
      const where = [p.row !== undefined ? `row ${p.row}` : null, p.column ? `column "${p.column}"` : null].filter(Boolean).join(', ');
      lines.push(`  - ${where && !p.message.startsWith('row ') ? `${where}: ` : ''}${p.message}`);
    }
    if (problems.length > 50) lines.push(`  ... and ${problems.length - 50} more (use --json for all).`);
  }
  if (report.status === 'rejected') lines.push('  Nothing was written (the document is archived). Fix the rows above, or use --accept-valid to write the valid ones.');
  return lines.join('\n');
}

registerTokenCommands(program);
registerDemoCommand(program);
registerRefitCommand(program);
registerReportCommand(program);
registerPartBandCommand(program);
registerCatalogCommands(program);

/** Mistakes a user can fix, said in one plain line (the stack only with LOG_LEVEL=debug). */
function plainMessage(error: Error & { code?: string; path?: string }): string | null {
  if (error.code === 'ENOENT') return `no such file: ${error.path ?? error.message}`;
  if (error.code === 'EACCES') return `not allowed to read ${error.path ?? 'the file'}`;
  if (['ConfigError', 'OpenBindRefused', 'AlertSettingsError', 'InvalidMillLayoutError', 'InvalidArgumentError', 'DemoRefusedError', 'CatalogInputError', 'HardenabilityInputError', 'AnalysisError'].includes(error.constructor.name)) return error.message;
  if (error instanceof SyntaxError) return `a JSON file could not be read: ${error.message}`;
  return null;
}

program.parseAsync(process.argv).catch((error: Error) => {
  const plain = plainMessage(error);
  if (plain && process.env.LOG_LEVEL !== 'debug') {
    console.error(`endquench: ${plain}`);
    process.exit(1);
  }
  createLogger('error').error({ err: error }, error.message);
  console.error(`endquench: ${error.message}`);
  process.exit(2);
});
