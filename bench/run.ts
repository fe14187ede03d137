// Runs every bench/*.bench.ts in turn (each in its own process, so one heavy benchmark does not
// warm or starve the next) and writes the collected lines to bench/RESULTS.md.
import { readdirSync, writeFileSync } from 'node:fs';
import { spawnSync } from 'node:child_process';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import os from 'node:os';

const here = dirname(fileURLToPath(import.meta.url));
const only = process.argv[2];
const files = readdirSync(here)
  .filter((f) => f.endsWith('.bench.ts'))
  .filter((f) => !only || f.includes(only))
  .sort();

const lines: string[] = [
  '# Benchmark results',
  '',
  `Machine: ${os.cpus().length} cores (${os.cpus()[0]?.model ?? 'unknown'}), ${Math.round(os.totalmem() / 2 ** 30)} GiB, Node ${process.version}.`,
  `Run: ${new Date().toISOString()}`,
  '',
];
let failed = 0;
for (const file of files) {
  process.stdout.write(`\n== ${file}\n`);
  const run = spawnSync(process.execPath, ['--import', 'tsx', join(here, file)], {
    encoding: 'utf8',
    stdio: ['ignore', 'pipe', 'inherit'],
    env: process.env,
  });
  process.stdout.write(run.stdout);
  lines.push(`## ${file}`, '', '```', run.stdout.trim(), '```', '');
  if (run.status !== 0) failed++;
}
if (!only) writeFileSync(join(here, 'RESULTS.md'), lines.join('\n') + '\n');
process.exit(failed ? 1 : 0);
