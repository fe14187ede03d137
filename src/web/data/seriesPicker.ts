// What the analysis pages are asked about: grade, mill, distance and window, read from the query with
// sensible defaults (the first grade, the first mill that supplies it, the band's first distance).
import type { Context } from 'hono';
import type { Db } from '../../db/connection.ts';
import { listGrades, listMills } from '../../db/referenceData.ts';
import { listHeats } from '../../db/heats.ts';
import { bandOn } from '../../analysis/bandOf.ts';
import { todayIso } from '../../analysis/seriesData.ts';
import type { Band } from '../../hardenability/bands.ts';
import { dateWindow, daysBefore, optionalNumber, optionalText } from '../params.ts';

export interface SeriesChoice {
  grade: string;
  mill: string;
  distanceMm: number | null;
  from?: string;
  to?: string;
  band: Band | null;
  grades: string[];
  mills: string[];
  /** Mills that supply the chosen grade. */
  suppliers: string[];
  distances: Array<{ mm: number; label: string }>;
}

export async function readSeriesChoice(c: Context<any>, db: Db, options: { needMill?: boolean; defaultDays?: number } = {}): Promise<SeriesChoice> {
  let window = dateWindow(c.req.query('from'), c.req.query('to'));
  // A page may start on a recent window; ?all=1 (or any date given) overrides it.
  if (options.defaultDays && !window.from && !window.to && c.req.query('all') === undefined) window = { from: daysBefore(todayIso(), options.defaultDays), to: todayIso() };
  const [grades, mills] = await Promise.all([listGrades(db), listMills(db)]);
  const wantedGrade = optionalText(c.req.query('grade'));
  const grade = grades.find((g) => g.code === wantedGrade)?.code ?? grades[0]?.code ?? '';
  const suppliers = grade ? await suppliersOf(db, grade, mills.map((m) => m.code)) : [];
  const wantedMill = optionalText(c.req.query('mill'));
  const mill = wantedMill && mills.some((m) => m.code === wantedMill) ? wantedMill : options.needMill === false ? '' : (suppliers[0] ?? mills[0]?.code ?? '');
  const band = grade ? await bandOn(db, grade, window.to ?? todayIso()) : null;
  const distances = (band?.points ?? []).map((p) => ({ mm: p.mm, label: p.label ?? `${p.mm} mm` }));
  const asked = optionalNumber(c.req.query('distance'), 'The distance', { min: 0 });
  const distanceMm = (asked !== undefined ? distances.find((d) => Math.abs(d.mm - asked) < 1e-6)?.mm : undefined) ?? distances[0]?.mm ?? null;
  return { grade, mill, distanceMm, ...window, band, grades: grades.map((g) => g.code), mills: mills.map((m) => m.code), suppliers, distances };
}

async function suppliersOf(db: Db, grade: string, mills: string[]): Promise<string[]> {
  const counts = await Promise.all(mills.map(async (m) => ({ m, n: (await listHeats(db, { grade, mill: m, limit: 0 })).total })));
  return counts.filter((x) => x.n > 0).map((x) => x.m);
}
