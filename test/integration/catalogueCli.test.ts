// Setting up a plant's catalogue from the command line: the worked example of README.md
// (seed/samples/catalogue-example.json, then seed/samples/orwell-bar-mill-tests.csv), and the same
// validation as the API for a mill, a grade and a band.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, test } from 'vitest';
import { parseLimitText, parsePointText } from '../../src/ingest/catalogSchema.ts';

const dir = mkdtempSync(join(tmpdir(), 'endquench-catalogue-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const cli = (...args: string[]) =>
  spawnSync(process.execPath, ['bin/endquench.js', ...args], {
    encoding: 'utf8',
    env: { ...process.env, ENDQUENCH_DATA_DIR: join(dir, 'data'), DATABASE_URL: '', ENDQUENCH_FROM_SOURCE: '1', LOG_LEVEL: 'silent' },
  });

describe('command-line forms', () => {
  test('limits and band points', () => {
    expect(parseLimitText('C=0.17-0.22')).toEqual({ element: 'C', min: 0.17, max: 0.22 });
    expect(parseLimitText('Si=-0.40')).toEqual({ element: 'Si', min: null, max: 0.4 });
    expect(parsePointText('25=-35')).toEqual({ at: 25, min: null, max: 35 });
    expect(() => parsePointText('J1.5: 41 to 49')).toThrow(/DISTANCE=MIN-MAX/);
  });
});

describe('the worked example', () => {
  test('catalogue file, a band listed, then the mill file imported through its recognised headers', () => {
    const check = cli('catalogue', 'seed/samples/catalogue-example.json', '--check');
    expect(check.stdout).toMatch(/is valid: 2 mill\(s\), 1 grade\(s\), 1 band version\(s\). Nothing was written/);
    expect(cli('mill', 'list').stdout).toMatch(/No mills on file yet/);

    const load = cli('catalogue', 'seed/samples/catalogue-example.json');
    expect(load.status).toBe(0);
    // loading the same file again adds no second band version
    expect(cli('catalogue', 'seed/samples/catalogue-example.json').status).toBe(0);
    const bands = cli('band', 'list', '20MnCr5').stdout.trim().split('\n');
    expect(bands).toHaveLength(1);
    expect(bands[0]).toMatch(/^v1\tfrom 2024-01-01\tactive\tstandard\t1.5 mm 41–49/);

    const dry = cli('import', 'seed/samples/orwell-bar-mill-tests.csv', '--mill', 'ORW', '--dry-run');
    expect(dry.stdout).toMatch(/"Heat No\." → heat_number/);
    expect(dry.stdout).toMatch(/An import would write 4 item\(s\)/);
    const real = cli('import', 'seed/samples/orwell-bar-mill-tests.csv', '--mill', 'ORW');
    expect(real.status).toBe(0);
    expect(real.stdout).toMatch(/accepted\.\n {2}4 item\(s\): 4 valid/);
  });

  test('the API’s validation: an empty name, an unknown element, min above max, a grade not on file', () => {
    const mill = cli('mill', 'add', 'ORW', '--name', ' ');
    expect(mill.status).toBe(1);
    expect(mill.stderr).toMatch(/the mill is not valid:\n {2}- name: is required/);
    const grade = cli('grade', 'add', '16MnCr5', '--limit', 'Xx=1-2');
    expect(grade.status).toBe(1);
    expect(grade.stderr).toMatch(/chemistryLimits\.0\.element/);
    const band = cli('band', 'add', '20MnCr5', '--from', '2026-01-01', '--point', '1.5=49-41');
    expect(band.stderr).toMatch(/points\.0: min HRC is above max HRC/);
    const noGrade = cli('band', 'add', '42CrMo4', '--from', '2026-01-01', '--point', '1.5=53-61');
    expect(noGrade.stderr).toMatch(/grade 42CrMo4 is not on file; add it first/);
    const edit = cli('mill', 'add', 'ORW', '--name', 'Orwell Bar Mill Ltd (invented)');
    expect(edit.stdout).toMatch(/Mill ORW "Orwell Bar Mill Ltd \(invented\)" is on file/);
  });
});
