// Hardenability bands (H-bands): min and/or max HRC at end-quench distances, versioned by date.
// Sources: SAE J1268 (hardenability bands of H-steels and restricted-hardenability "RH" bands);
// EN 10084 / EN 10083-3 (+H, +HH, +HL bands). A restricted band is a band whose limits lie inside
// the standard band of the same grade at every point (a narrower range ordered by agreement).

import { HardenabilityInputError } from './errors.ts';

export interface BandPoint {
  /** Distance from the quenched end, mm (exact, converted from the original unit). */
  mm: number;
  /** Label as written in the specification, e.g. "J4" or "5 mm". */
  label?: string;
  minHrc?: number;
  maxHrc?: number;
}

/**
 * How readings meet the limits: 'astm_e29' rounds each reading to the limit's places by ASTM E29 §6.4
 * before comparing (35.4 meets a maximum of 35, 35.5 does not); 'as_reported' compares the reading as
 * written. Absent: 'astm_e29'.
 */
export type BandRounding = 'astm_e29' | 'as_reported';

export type BandKind = 'standard' | 'restricted';
export type BandStatus = 'draft' | 'active' | 'retired';

export interface Band {
  grade: string;
  version: number;
  /** ISO date YYYY-MM-DD from which this version applies. */
  effectiveFrom: string;
  status: BandStatus;
  kind: BandKind;
  points: readonly BandPoint[];
  reason?: string;
  /** How readings are compared with the limits (absent: 'astm_e29'). */
  rounding?: BandRounding;
}

export type BandPointKind = 'two_sided' | 'min_only' | 'max_only';

export const bandPointKind = (p: BandPoint): BandPointKind =>
  p.minHrc !== undefined && p.maxHrc !== undefined ? 'two_sided' : p.minHrc !== undefined ? 'min_only' : 'max_only';

const ISO_DATE = /^\d{4}-\d{2}-\d{2}$/;

export function assertIsoDate(date: string, what: string): void {
  if (!ISO_DATE.test(date) || Number.isNaN(Date.parse(`${date}T00:00:00Z`))) {
    throw new HardenabilityInputError(`${what} must be a date written YYYY-MM-DD (got "${date}")`);
  }
}

/** Check a band and return it with its points sorted by distance. Throws on any inconsistency. */
export function validateBand(band: Band): Band {
  assertIsoDate(band.effectiveFrom, `effective date of ${band.grade} v${band.version}`);
  if (band.points.length === 0) throw new HardenabilityInputError(`band ${band.grade} v${band.version} has no points`);
  const points = [...band.points].sort((a, b) => a.mm - b.mm);
  points.forEach((p, i) => {
    const where = `band ${band.grade} v${band.version} at ${p.label ?? `${p.mm} mm`}`;
    if (!Number.isFinite(p.mm) || p.mm <= 0) throw new HardenabilityInputError(`${where}: distance must be positive`);
    if (i > 0 && p.mm === points[i - 1].mm) throw new HardenabilityInputError(`${where}: distance listed twice`);
    if (p.minHrc === undefined && p.maxHrc === undefined) {
      throw new HardenabilityInputError(`${where}: a band point needs a minimum, a maximum or both`);
    }
    for (const v of [p.minHrc, p.maxHrc]) {
      if (v !== undefined && (!Number.isFinite(v) || v < 0 || v > 75)) {
        throw new HardenabilityInputError(`${where}: ${v} is not a plausible HRC limit`);
      }
    }
    if (p.minHrc !== undefined && p.maxHrc !== undefined && p.minHrc > p.maxHrc) {
      throw new HardenabilityInputError(`${where}: minimum ${p.minHrc} HRC is above maximum ${p.maxHrc} HRC`);
    }
  });
  return { ...band, points };
}

/**
 * The band version in force on a date: among non-draft versions with effectiveFrom <= date, the one
 * with the latest effective date (ties: the higher version number). Retired versions count for the
 * dates before their successor took effect. Returns null when no version was in force.
 */
export function bandInForce(versions: readonly Band[], date: string): Band | null {
  assertIsoDate(date, 'the date asked for');
  let best: Band | null = null;
  for (const b of versions) {
    assertIsoDate(b.effectiveFrom, `effective date of ${b.grade} v${b.version}`);
    if (b.status === 'draft' || b.effectiveFrom > date) continue;
    if (
      best === null ||
      b.effectiveFrom > best.effectiveFrom ||
      (b.effectiveFrom === best.effectiveFrom && b.version > best.version)
    ) {
      best = b;
    }
  }
  return best;
}

/** Limit of a band at a distance: exact at a band point, linear between two points carrying it. */
export function bandLimitAt(
  band: Band,
  mm: number,
  which: 'min' | 'max',
): { value: number; interpolated: boolean } | null {
  const key = which === 'min' ? 'minHrc' : 'maxHrc';
  const pts = [...band.points].filter((p) => p[key] !== undefined).sort((a, b) => a.mm - b.mm);
  for (let i = 0; i < pts.length; i++) {
    if (Math.abs(pts[i].mm - mm) <= 1e-6) return { value: pts[i][key] as number, interpolated: false };
    if (i > 0 && pts[i - 1].mm < mm && mm < pts[i].mm) {
      const t = (mm - pts[i - 1].mm) / (pts[i].mm - pts[i - 1].mm);
      const v = (pts[i - 1][key] as number) + t * ((pts[i][key] as number) - (pts[i - 1][key] as number));
      return { value: v, interpolated: true };
    }
  }
  return null;
}

export interface RestrictionPointReport {
  mm: number;
  label?: string;
  restrictedMin?: number;
  restrictedMax?: number;
  standardMin: number | null;
  standardMax: number | null;
  /** True when each limit of the restricted point lies inside the standard band. */
  inside: boolean;
  note: string;
}

export interface RestrictionReport {
  /** True when every restricted point lies inside the standard band. */
  inside: boolean;
  points: RestrictionPointReport[];
}

/**
 * Check that a restricted band lies inside the standard band: at each restricted point its minimum
 * is not below the standard minimum and its maximum not above the standard maximum (standard
 * limits taken at the same distance, or linearly between the standard's neighbouring points).
 * A restricted one-sided point against a two-sided standard point is inside when its own side is.
 */
export function checkRestrictedWithin(restricted: Band, standard: Band): RestrictionReport {
  const r = validateBand(restricted);
  const s = validateBand(standard);
  const points = r.points.map((p): RestrictionPointReport => {
    const smin = bandLimitAt(s, p.mm, 'min');
    const smax = bandLimitAt(s, p.mm, 'max');
    const notes: string[] = [];
    let inside = true;
    if (p.minHrc !== undefined && smin !== null && p.minHrc < smin.value - 1e-9) {
      inside = false;
      notes.push(`minimum ${p.minHrc} is below the standard minimum ${round2(smin.value)}`);
    }
    if (p.maxHrc !== undefined && smax !== null && p.maxHrc > smax.value + 1e-9) {
      inside = false;
      notes.push(`maximum ${p.maxHrc} is above the standard maximum ${round2(smax.value)}`);
    }
    if (smin === null && smax === null) {
      inside = false;
      notes.push('the standard band has no limit at this distance to compare with');
    }
    if (p.minHrc === undefined && smin !== null) notes.push('restricted band has no minimum here (the standard one still applies)');
    if (p.maxHrc === undefined && smax !== null) notes.push('restricted band has no maximum here (the standard one still applies)');
    if (smin?.interpolated || smax?.interpolated) notes.push('standard limit interpolated linearly between its points');
    return {
      mm: p.mm,
      label: p.label,
      restrictedMin: p.minHrc,
      restrictedMax: p.maxHrc,
      standardMin: smin?.value ?? null,
      standardMax: smax?.value ?? null,
      inside,
      note: notes.length ? notes.join('; ') : 'inside the standard band',
    };
  });
  return { inside: points.every((p) => p.inside), points };
}

const round2 = (v: number): number => Math.round(v * 100) / 100;
