#!/usr/bin/env node
// Entry point of the `endquench` command: runs the TypeScript sources through tsx's loader
// (no build step needed), or the compiled dist/ when present.
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

const compiled = fileURLToPath(new URL('../dist/src/cli.js', import.meta.url));
if (existsSync(compiled) && process.env.ENDQUENCH_FROM_SOURCE !== '1') {
  await import(compiled);
} else {
  const { register } = await import('tsx/esm/api');
  register();
  await import('../src/cli.ts');
}
