// Freezing phase I limits for a series from a chosen window (who and why are recorded), one baseline
// per distance. The limits are estimated by src/stats/phaseOne.ts (Montgomery §5.4/§6.4 trial limits with
// iterative exclusion; ASTM E2587 §6); the heats excluded on the way are listed by heat number.
import type { Db } from '../db/connection.ts';
import { insertBaselines, listBaselines, type BaselineFilter, type BaselineInput, type BaselineRecord } from '../db/baselines.ts';
import { estimateIndividualsLimits, PhaseOneError, type FrozenIndividualsLimits } from '../stats/phaseOne.ts';
import { bandOn } from './bandOf.ts';
import { insufficientData, invalidInput } from './errors.ts';
import { distancesOf, loadSeriesCurves, matchDistance, pointsAt, type SeriesSource } from './seriesData.ts';

export interface FreezeRequest {
  grade: string;
  mill: string;
  source?: SeriesSource;
  from: string;
  to: string;
  /** Distances (mm) to freeze; default every band distance measured in the window. */
  distancesMm?: number[];
  reason: string;
  createdBy: string | null;
  /** Width of the limits in sigmas (default 3). */
  L?: number;
}

export interface StoredLimits extends FrozenIndividualsLimits {
  /** Heat numbers of the baseline window, in time order, and those excluded by phase I. */
  heats: string[];
  excludedHeats: string[];
}

export interface FreezeResult {
  baselines: BaselineRecord[];
  /** Distances not frozen, with the reason. */
  skipped: Array<{ distanceMm: number; reason: string }>;
}

/** Estimates and stores baselines for a series; the previous baseline of each distance is retired. */
export async function freezeBaselines(db: Db, request: FreezeRequest): Promise<FreezeResult> {
  if (request.from > request.to) throw invalidInput('the baseline window starts after it ends');
  const source = request.source ?? 'mill_certificate';
  const curves = await loadSeriesCurves(db, { grade: request.grade, mill: request.mill, from: request.from, to: request.to, source });
  const measured = distancesOf(curves);
  let wanted = request.distancesMm;
  if (!wanted) {
    const band = await bandOn(db, request.grade, request.to);
    wanted = band ? band.points.map((p) => p.mm).filter((d) => matchDistance(measured, d) !== null) : measured;
  }
  const inputs: BaselineInput[] = [];
  const skipped: FreezeResult['skipped'] = [];
  for (const requested of wanted) {
    const d = matchDistance(measured, requested);
    if (d === null) {
      skipped.push({ distanceMm: requested, reason: 'no heat in the window was tested at this distance' });
      continue;
    }
    const points = pointsAt(curves, d);
    try {
      const frozen = estimateIndividualsLimits(points.map((p) => p.value), { L: request.L ?? 3 });
      const limits: StoredLimits = { ...frozen, heats: points.map((p) => p.heatNumber), excludedHeats: frozen.excluded.map((i) => points[i].heatNumber) };
      inputs.push({
        mill: request.mill,
        grade: request.grade,
        distanceMm: d,
        source,
        windowFrom: request.from,
        windowTo: request.to,
        limits,
        reason: request.reason,
        createdBy: request.createdBy,
      });
    } catch (error) {
      if (!(error instanceof PhaseOneError) && !(error instanceof Error && error.name === 'StatsInputError')) throw error;
      skipped.push({ distanceMm: d, reason: error.message });
    }
  }
  if (inputs.length === 0) throw insufficientData('no distance had enough heats in the window to freeze limits', { skipped });
  return { baselines: await insertBaselines(db, inputs), skipped };
}

export const baselinesOnFile = (db: Db, filter: BaselineFilter) => listBaselines(db, filter);
