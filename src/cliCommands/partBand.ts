// `endquench part-band`: from a round part to a band minimum (src/analysis/partRequirement.ts) — the
// equivalent end-quench distance at a location of a long round bar, the band minimum it implies and, with
// --grade, each mill's share of heats that met it and the predicted probability. `--table` prints the
// equivalent distances of bars at surface, 3/4 radius and centre instead.
import { Command, InvalidArgumentError } from 'commander';
import { loadConfig } from '../config.ts';
import { openDatabase } from '../db/connection.ts';
import { equivalenceTable, estimatePart, LIMITS, LOCATION_FRACTIONS, partRequirement, type PartEstimate, type PartLocation, type PartRequirementResult, type QuenchInput } from '../analysis/partRequirement.ts';
import type { Agitation, Medium } from '../hardenability/quench/severity.ts';

const MEDIA = ['air', 'oil', 'water', 'brine'];
const AGITATIONS = ['none', 'mild', 'moderate', 'good', 'strong', 'violent'];

const numberOption = (what: string, min: number, max: number) => (value: string): number => {
  const v = Number(value);
  if (value.trim() === '' || !Number.isFinite(v) || v < min || v > max) throw new InvalidArgumentError(`${what} must be a number from ${min} to ${max}`);
  return v;
};
const oneOf = (allowed: string[]) => (value: string): string => {
  if (!allowed.includes(value)) throw new InvalidArgumentError(`must be one of ${allowed.join(', ')}`);
  return value;
};
const locationOption = (value: string): PartLocation | number => {
  if (value in LOCATION_FRACTIONS) return value as PartLocation;
  const v = Number(value);
  if (value.trim() !== '' && Number.isFinite(v) && v >= 0 && v <= 1) return v;
  throw new InvalidArgumentError(`must be ${Object.keys(LOCATION_FRACTIONS).join(', ')} or a fraction of the radius (0 centre, 1 surface)`);
};

const mm = (v: number | null) => (v === null ? '–' : `${v.toFixed(1)} mm`);
const pct = (v: number | null) => (v === null ? '–' : `${(100 * v).toFixed(1)} %`);

export function formatEstimate(r: PartEstimate | PartRequirementResult): string {
  const s = r.severity;
  const lines = [
    `${r.input.diameterMm} mm round bar, ${s.medium ? `${s.medium} (${s.agitation === 'none' ? 'no' : s.agitation} agitation, H ${s.low === s.high ? s.mid : `${s.low}–${s.high}`} in⁻¹)` : `H ${s.mid} in⁻¹`}, ${r.input.location}, at least ${r.input.requiredHrc} HRC`,
    `  equivalent end-quench distance: ${mm(r.middle.distanceMm)} (range ${mm(r.fastest.distanceMm)} to ${mm(r.slowest.distanceMm)}; ${r.input.criterion === 'rate700' ? 'equal cooling rate at 700 °C' : r.input.criterion === 'rate500' ? 'equal cooling rate at 500 °C' : 'equal t8/5'})`,
    `  λ = ${r.middle.lambda === null ? '–' : r.middle.lambda.toFixed(2)} (t8/5 ${r.middle.t85 === null ? '–' : `${r.middle.t85.toFixed(0)} s`}), cooling rate at 700 °C ${r.middle.rate700 === null ? '–' : `${r.middle.rate700.toFixed(1)} K/s`}`,
    `  band minimum implied: ${r.bandMinimum ? r.bandMinimum.statement : 'none can be stated'}`,
  ];
  for (const n of r.notes) lines.push(`  note: ${n}`);
  if ('mills' in r) {
    if (r.criticalDiameter) lines.push(`  Grossmann critical diameter for DI ${r.criticalDiameter.diMm} mm at H ${r.criticalDiameter.severity}: ${r.criticalDiameter.mm.toFixed(1)} mm`);
    lines.push(`  ${r.grade} by mill (share of heats that met it; predicted probability from chemistry):`);
    for (const m of r.mills) {
      const interval = m.interval95 ? ` [95 % ${pct(m.interval95[0])}–${pct(m.interval95[1])}]` : '';
      const pred = m.prediction ? `; predicted ${m.prediction.hrc === null ? '–' : `${m.prediction.hrc.toFixed(1)} HRC`}, P = ${pct(m.prediction.probability)}${m.prediction.predictedShare === null ? '' : `, predicted share ${pct(m.prediction.predictedShare)} over ${m.prediction.heatsPredicted} heats`} (${m.prediction.answeredBy})` : '';
      lines.push(`  - ${m.mill}: ${m.met}/${m.heats} = ${pct(m.share)}${interval}${m.notReaching ? `; ${m.notReaching} heat(s) not measured that far` : ''}${pred}`);
    }
  }
  lines.push('  Limits:');
  for (const l of LIMITS) lines.push(`  - ${l}`);
  return lines.join('\n');
}

export function register(program: Command): void {
  program
    .command('part-band')
    .description('from a round part (diameter, quench, location, hardness) to the end-quench distance and band minimum it needs; with --grade, what it means for each mill')
    .option('--diameter <mm>', 'bar diameter in mm', numberOption('the diameter', 5, 300))
    .option('--medium <medium>', `quench medium: ${MEDIA.join(', ')}`, oneOf(MEDIA))
    .option('--agitation <agitation>', `agitation: ${AGITATIONS.join(', ')} (default none)`, oneOf(AGITATIONS))
    .option('--severity <H>', 'Grossmann H in in⁻¹ instead of a medium', numberOption('H', 0.001, 100))
    .option('--location <where>', 'surface, three_quarter_radius, half_radius, centre, or a fraction of the radius', locationOption, 'centre' as PartLocation | number)
    .option('--hrc <HRC>', 'hardness the part needs there', numberOption('the hardness', 10, 70))
    .option('--criterion <c>', 'rate700 (Lamont, default), rate500 or t85', oneOf(['rate700', 'rate500', 't85']))
    .option('--austenitize <°C>', 'austenitizing temperature (default 850)', numberOption('the temperature', 700, 1100))
    .option('--grade <code>', 'a stored grade: add each mill’s share and predicted probability')
    .option('--mill <code>', 'only this mill')
    .option('--di <mm>', 'ideal critical diameter: add Grossmann’s critical diameter', numberOption('DI', 2, 500))
    .option('--table', 'print equivalent distances of 20–80 mm bars at surface, 3/4 radius and centre for the medium')
    .option('--json', 'print the result as JSON')
    .action(async (opts: { diameter?: number; medium?: Medium; agitation?: Agitation; severity?: number; location: PartLocation | number; hrc?: number; criterion?: 'rate700' | 'rate500' | 't85'; austenitize?: number; grade?: string; mill?: string; di?: number; table?: boolean; json?: boolean }) => {
      if (opts.table) {
        const media = opts.medium ? [{ medium: opts.medium, agitation: opts.agitation }] : [{ medium: 'oil' as Medium }, { medium: 'water' as Medium }];
        const rows = equivalenceTable([20, 30, 40, 50, 60, 70, 80], media, opts.criterion);
        if (opts.json) console.log(JSON.stringify(rows, null, 2));
        else {
          console.log('quench        H      D (mm)  surface  3/4 R  centre  λ centre   (equivalent end-quench distance, mm)');
          for (const r of rows) console.log(`${r.medium.padEnd(12)}  ${r.severity.toFixed(3).padStart(5)}  ${String(r.diameterMm).padStart(6)}  ${(r.surface?.toFixed(1) ?? '–').padStart(7)}  ${(r.threeQuarter?.toFixed(1) ?? '–').padStart(5)}  ${(r.centre?.toFixed(1) ?? '–').padStart(6)}  ${(r.lambdaCentre?.toFixed(2) ?? '–').padStart(8)}`);
          console.log('An estimate for long round bars, to be confirmed by testing parts.');
        }
        return;
      }
      if (opts.diameter === undefined || opts.hrc === undefined) throw new InvalidArgumentError('--diameter and --hrc are needed (or --table)');
      if ((opts.medium === undefined) === (opts.severity === undefined)) throw new InvalidArgumentError('give --medium or --severity (one of them)');
      const quench: QuenchInput = opts.severity !== undefined ? { severity: opts.severity } : { medium: opts.medium!, agitation: opts.agitation };
      const input = { diameterMm: opts.diameter, quench, location: opts.location, requiredHrc: opts.hrc, criterion: opts.criterion, austenitize: opts.austenitize };
      let result: PartEstimate | PartRequirementResult;
      if (opts.grade) {
        const config = loadConfig();
        const database = await openDatabase({ url: config.databaseUrl, dataDir: config.dataDir });
        try {
          await database.migrate();
          result = await partRequirement(database.db, { ...input, grade: opts.grade, mill: opts.mill, diMm: opts.di });
        } finally {
          await database.close();
        }
      } else result = estimatePart(input);
      console.log(opts.json ? JSON.stringify(result, null, 2) : formatEstimate(result));
    });
}
