// `endquench report --mill M --from D --to D --out F.html|.csv`: a period report for a supplier review.
import { writeFile } from 'node:fs/promises';
import { extname } from 'node:path';
import { Command, InvalidArgumentError } from 'commander';
import { loadConfig } from '../config.ts';
import { openDatabase } from '../db/connection.ts';
import { buildPeriodReport, renderReportCsv, renderReportHtml } from '../analysis/report.ts';

const dateOption = (value: string): string => {
  if (!/^\d{4}-\d{2}-\d{2}$/.test(value) || Number.isNaN(Date.parse(`${value}T00:00:00Z`))) throw new InvalidArgumentError('must be a date written YYYY-MM-DD');
  return value;
};

const outOption = (value: string): string => {
  const ext = extname(value).toLowerCase();
  if (ext !== '.html' && ext !== '.htm' && ext !== '.csv') throw new InvalidArgumentError('must end in .html or .csv');
  return value;
};

/** Writes the report to a file, HTML or CSV by its extension. Returns the number of grades covered. */
export async function writePeriodReport(db: Parameters<typeof buildPeriodReport>[0], request: Parameters<typeof buildPeriodReport>[1], out: string): Promise<number> {
  const report = await buildPeriodReport(db, request);
  const content = extname(out).toLowerCase() === '.csv' ? renderReportCsv(report) : await renderReportHtml(report);
  await writeFile(out, content, 'utf8');
  return report.grades.length;
}

export function register(program: Command): void {
  program
    .command('report')
    .description('period report for a supplier review: capability, charts (SVG), alerts, certificates to look at')
    .requiredOption('--mill <code>', 'the mill')
    .requiredOption('--from <date>', 'first cast date (YYYY-MM-DD)', dateOption)
    .requiredOption('--to <date>', 'last cast date (YYYY-MM-DD)', dateOption)
    .requiredOption('--out <file>', 'output file, .html or .csv', outOption)
    .option('--grade <code>', 'only this grade')
    .action(async (opts: { mill: string; from: string; to: string; out: string; grade?: string }) => {
      if (opts.from > opts.to) throw new InvalidArgumentError('--from is after --to');
      const config = loadConfig();
      const database = await openDatabase({ url: config.databaseUrl, dataDir: config.dataDir });
      try {
        await database.migrate();
        const grades = await writePeriodReport(database.db, { mill: opts.mill, from: opts.from, to: opts.to, grade: opts.grade }, opts.out);
        console.log(`Report for ${opts.mill}, ${opts.from} to ${opts.to}: ${grades} grade(s), written to ${opts.out}.`);
      } finally {
        await database.close();
      }
    });
}
