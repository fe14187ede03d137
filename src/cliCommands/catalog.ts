// `endquench mill|grade|band add|list` and `endquench catalogue load FILE`: setting up a plant's
// catalogue (mills, grades with chemistry limits, band versions) with the API's own validation
// (src/ingest/catalogSchema.ts).
import { readFile } from 'node:fs/promises';
import { Command } from 'commander';
import type { z } from 'zod';
import { loadConfig } from '../config.ts';
import { openDatabase, type Database } from '../db/connection.ts';
import { addBandVersion, findGrade, listBands, listGrades, listMills, upsertGrade, upsertMill } from '../db/referenceData.ts';
import {
  bandInputSchema,
  catalogProblems,
  catalogueFileSchema,
  gradeInputSchema,
  millInputSchema,
  parseLimitText,
  parsePointText,
  storedBandPoints,
} from '../ingest/catalogSchema.ts';

/** A catalogue entry the command refuses; the message lists every problem. */
export class CatalogInputError extends Error {
  override name = 'CatalogInputError';
}

function validated<S extends z.ZodType>(schema: S, value: unknown, what: string): z.output<S> {
  const result = schema.safeParse(value);
  if (result.success) return result.data;
  throw new CatalogInputError(`the ${what} is not valid:\n${catalogProblems(result.error).map((p) => `  - ${p}`).join('\n')}`);
}

function textForm<T>(parse: (t: string) => T) {
  return (value: string, previous: T[] = []): T[] => {
    try {
      return [...previous, parse(value)];
    } catch (error) {
      throw new CatalogInputError((error as Error).message);
    }
  };
}

async function withDatabase<T>(work: (database: Database) => Promise<T>): Promise<T> {
  const config = loadConfig();
  const database = await openDatabase({ url: config.databaseUrl, dataDir: config.dataDir });
  try {
    await database.migrate();
    return await work(database);
  } finally {
    await database.close();
  }
}

const limitsText = (ls: Array<{ element: string; min: number | null; max: number | null }>) =>
  ls.length ? ls.map((l) => `${l.element} ${l.min ?? ''}–${l.max ?? ''}`).join(', ') : 'no chemistry limits';

export function register(program: Command): void {
  const mill = program.command('mill').description('mills that send certificates: add (or edit), list');
  mill
    .command('add')
    .description('add a mill, or change the name, country or notes of one on file')
    .argument('<code>', 'the short code files and tokens use (e.g. ORW)')
    .requiredOption('--name <name>', 'the mill’s name')
    .option('--country <country>')
    .option('--notes <text>')
    .action(async (code: string, opts: { name: string; country?: string; notes?: string }) => {
      const input = validated(millInputSchema, { code, name: opts.name, country: opts.country, notes: opts.notes }, 'mill');
      const row = await withDatabase(({ db }) => upsertMill(db, input));
      console.log(`Mill ${row.code} "${row.name}" is on file.`);
    });
  mill
    .command('list')
    .description('the mills on file')
    .action(async () => {
      const rows = await withDatabase(({ db }) => listMills(db));
      if (!rows.length) console.log('No mills on file yet: add one with `endquench mill add CODE --name NAME`.');
      for (const m of rows) console.log(`${m.code}\t${m.name}${m.country ? ` (${m.country})` : ''}`);
    });

  const grade = program.command('grade').description('steel grades with their chemistry limits: add (or edit), list');
  grade
    .command('add')
    .description('add a grade, or replace the description, distance unit and chemistry limits of one on file')
    .argument('<code>', 'the grade designation (e.g. 20MnCr5)')
    .option('--description <text>')
    .option('--unit <unit>', 'the unit its bands use: mm (ISO 642) or sixteenths (ASTM A255)', 'mm')
    .option('--limit <ELEMENT=MIN-MAX>', 'a chemistry limit in wt% (repeat: --limit C=0.17-0.22 --limit Si=-0.40)', textForm(parseLimitText), [])
    .action(async (code: string, opts: { description?: string; unit: string; limit: unknown[] }) => {
      const input = validated(gradeInputSchema, { code, description: opts.description, distanceSystem: opts.unit, chemistryLimits: opts.limit }, 'grade');
      const row = await withDatabase(({ db }) => upsertGrade(db, input));
      console.log(`Grade ${row.code} is on file (bands in ${row.distanceSystem}; ${limitsText(row.chemistryLimits)}).`);
    });
  grade
    .command('list')
    .description('the grades on file with their chemistry limits')
    .action(async () => {
      const rows = await withDatabase(({ db }) => listGrades(db));
      if (!rows.length) console.log('No grades on file yet: add one with `endquench grade add CODE --limit C=0.17-0.22 ...`.');
      for (const g of rows) console.log(`${g.code}\t${g.distanceSystem}\t${limitsText(g.chemistryLimits)}`);
    });

  const band = program.command('band').description('end-quench band versions of a grade: add a version (earlier ones are kept), list');
  band
    .command('add')
    .description('add a band version to a grade')
    .argument('<grade>', 'the grade code')
    .requiredOption('--from <date>', 'in force from (YYYY-MM-DD)')
    .option('--point <AT=MIN-MAX>', 'HRC limits at a distance in the grade’s unit (repeat: --point 1.5=41-49 --point 25=-35)', textForm(parsePointText), [])
    .option('--unit <unit>', 'the unit of the distances (default: the grade’s)')
    .option('--kind <kind>', 'standard or restricted', 'standard')
    .option('--status <status>', 'draft, active or retired', 'active')
    .option('--reason <text>', 'why this version (e.g. the standard and its edition)')
    .action(async (gradeCode: string, opts: { from: string; point: unknown[]; unit?: string; kind: string; status: string; reason?: string }) => {
      const result = await withDatabase(async ({ db }) => {
        const g = await findGrade(db, gradeCode);
        if (!g) throw new CatalogInputError(`grade ${gradeCode} is not on file; add it first with \`endquench grade add ${gradeCode}\``);
        const input = validated(
          bandInputSchema,
          { effectiveFrom: opts.from, points: opts.point, distanceSystem: opts.unit ?? g.distanceSystem, kind: opts.kind, status: opts.status, reason: opts.reason },
          'band',
        );
        return addBandVersion(db, gradeCode, { ...input, points: storedBandPoints(input) });
      });
      console.log(`Band version ${result.version} of ${gradeCode} (${result.points.length} points, from ${result.effectiveFrom}, ${result.status}) is on file.`);
    });
  band
    .command('list')
    .description('the band versions of a grade, newest first')
    .argument('<grade>')
    .action(async (gradeCode: string) => {
      const rows = await withDatabase(async ({ db }) => {
        if (!(await findGrade(db, gradeCode))) throw new CatalogInputError(`grade ${gradeCode} is not on file`);
        return listBands(db, gradeCode);
      });
      if (!rows.length) console.log(`${gradeCode} has no band yet: add one with \`endquench band add ${gradeCode} --from DATE --point 1.5=41-49 ...\`.`);
      for (const b of rows) {
        console.log(`v${b.version}\tfrom ${b.effectiveFrom}\t${b.status}\t${b.kind}\t${b.points.map((p) => `${p.label} ${p.minHrc ?? ''}–${p.maxHrc ?? ''}`).join(', ')}`);
      }
    });

  program
    .command('catalogue')
    .alias('catalog')
    .description('set up mills, grades and bands from one JSON file ({"mills": [...], "grades": [...], "bands": [...]}, as the API bodies)')
    .argument('<file>', 'the catalogue file, e.g. seed/samples/catalogue-example.json')
    .option('--check', 'validate only; write nothing')
    .action(async (file: string, opts: { check?: boolean }) => {
      let json: unknown;
      try {
        json = JSON.parse(await readFile(file, 'utf8'));
      } catch (error) {
        if (error instanceof SyntaxError) throw new CatalogInputError(`${file} is not valid JSON: ${error.message}`);
        throw error;
      }
      const catalogue = validated(catalogueFileSchema, json, `catalogue ${file}`);
      const bandsChecked = catalogue.bands.map((b) => ({ grade: b.grade, input: b, points: storedBandPoints(b) }));
      if (opts.check) {
        console.log(`${file} is valid: ${catalogue.mills.length} mill(s), ${catalogue.grades.length} grade(s), ${catalogue.bands.length} band version(s). Nothing was written.`);
        return;
      }
      await withDatabase(async ({ db }) => {
        for (const m of catalogue.mills) await upsertMill(db, m);
        for (const g of catalogue.grades) await upsertGrade(db, g);
        for (const b of bandsChecked) {
          if (!(await findGrade(db, b.grade))) throw new CatalogInputError(`band for ${b.grade}: the grade is not on file (list it under "grades")`);
          // A band version is added only when the same one (date, kind, points) is not the newest on file already.
          const newest = (await listBands(db, b.grade)).find((v) => v.effectiveFrom === b.input.effectiveFrom && v.kind === b.input.kind);
          const same = newest && JSON.stringify(newest.points.map((p) => [p.distanceMm, p.minHrc, p.maxHrc])) === JSON.stringify(b.points.map((p) => [p.distanceMm, p.minHrc, p.maxHrc]));
          if (same) continue;
          await addBandVersion(db, b.grade, { ...b.input, points: b.points });
        }
      });
      console.log(`Catalogue ${file} loaded: ${catalogue.mills.length} mill(s), ${catalogue.grades.length} grade(s), ${catalogue.bands.length} band version(s) on file.`);
    });
}
