// Refitting the chemistry-to-hardness models: a new version per grade (grade-wide) and per mill with
// enough history. Old versions are kept. Used by `endquench refit` and after loading the demo plant.
import type { Db } from '../db/connection.ts';
import { seriesWithHistory } from '../db/models.ts';
import { fitAndStoreModel, minHeatsFor, DEFAULT_PREDICTORS } from './chemistryModel.ts';

export interface RefitOptions {
  grade?: string;
  mill?: string;
  from?: string;
  to?: string;
  /** Also fit one model per mill (default true). */
  perMill?: boolean;
  /** Heats cast on or after this date are held out of training and scored (coverage of the 95 % prediction intervals). */
  holdOutFrom?: string;
  createdBy?: string;
}

export interface RefitOutcome {
  grade: string;
  mill: string | null;
  modelId: number | null;
  version: number | null;
  distances: number;
  problem: string | null;
  /** With holdOutFrom: the pooled held-out score beside the cross-validated RMSE. */
  heldOut?: { heats: number; readings: number; coverage95: number | null; rmse: number | null; cvRmse: number | null };
}

/** Refits the models asked for; a failure on one series is reported and the others go on. */
export async function refitModels(db: Db, options: RefitOptions = {}): Promise<RefitOutcome[]> {
  const minHeats = minHeatsFor(DEFAULT_PREDICTORS.length);
  const series = (await seriesWithHistory(db, 1)).filter((s) => (!options.grade || s.grade === options.grade) && (!options.mill || s.mill === options.mill));
  const targets: Array<{ grade: string; mill: string | null }> = [];
  const grades = [...new Set(series.map((s) => s.grade))];
  for (const grade of grades) {
    const own = series.filter((s) => s.grade === grade);
    if (!options.mill && own.reduce((a, s) => a + s.heats, 0) >= minHeats) targets.push({ grade, mill: null });
    if (options.perMill !== false) for (const s of own) if (s.heats >= minHeats) targets.push({ grade, mill: s.mill });
  }
  const outcomes: RefitOutcome[] = [];
  for (const t of targets) {
    try {
      const m = await fitAndStoreModel(db, { grade: t.grade, mill: t.mill ?? undefined, from: options.from, to: options.to, holdOutFrom: options.holdOutFrom, createdBy: options.createdBy ?? 'refit' });
      const h = m.fits.heldOut;
      const cv = m.fits.distances.map((d) => d.cvRmse);
      const heldOut = h ? { heats: h.heats, readings: h.n, coverage95: h.coverage95, rmse: h.rmse, cvRmse: cv.length ? Math.sqrt(cv.reduce((a, x) => a + x * x, 0) / cv.length) : null } : undefined;
      outcomes.push({ ...t, modelId: m.id, version: m.version, distances: m.fits.distances.length, problem: null, ...(heldOut ? { heldOut } : {}) });
    } catch (error) {
      outcomes.push({ ...t, modelId: null, version: null, distances: 0, problem: (error as Error).message });
    }
  }
  return outcomes;
}
