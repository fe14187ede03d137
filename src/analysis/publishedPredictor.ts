// The published predictor of a curve from chemistry, as the baseline the plant's own model must beat and
// the answer for a grade with too little history:
//  - at the quenched end (J1 = 1.5875 mm, ISO 642's 1.5 mm: one position within either standard's
//    placing tolerance), the ASTM A255 initial hardness IH(C), where A255 sets the dividing factor to 1;
//  - from 4/16 in (6.35 mm) to 32/16 in (50.8 mm), Just (1969), inch form, with its composition-range
//    flags kept beside each value;
//  - every value capped at IH(C) + 1 HRC, the fully martensitic hardness of that carbon with the margin
//    by which published bands centre their quenched end above it (martensite.ts): a regression answering
//    above it predicts something no steel of that carbon shows on average;
//  - nothing between the quenched end and 6.35 mm, nothing past 50.8 mm, and nothing beyond the quenched
//    end for boron-treated steel (neither method has a boron factor): those distances are listed as
//    missing with the reason, never clamped or extrapolated.
// A255's own distance curve (IH divided by dividing factors) is not used: the only dividing factors at
// hand are a secondary polynomial set that misses published bands (see src/hardenability/astmA255.ts).
import { BORON_TREATED_FROM } from '../hardenability/astmA255.ts';
import { QUENCHED_END_MAX_MM } from '../hardenability/distances.ts';
import { predictJust1969 } from '../hardenability/just1969.ts';
import { martensiteBounds, PREDICTION_ABOVE_IH_HRC } from '../hardenability/martensite.ts';
import type { Chemistry } from '../hardenability/types.ts';

export interface PublishedPoint {
  mm: number;
  hrc: number;
  method: string;
  source: string;
  /** The method answered above IH(C); the value was lowered to it. */
  cappedAtMartensite?: boolean;
}

export interface PublishedCurveResult {
  points: Map<number, PublishedPoint>;
  /** Distances without a published value, with the reason. */
  missing: Array<{ mm: number; reason: string }>;
  /** Composition or carbon outside a method's stated range, and other cautions, in words. */
  warnings: string[];
}

const match = (a: number, b: number) => Math.abs(a - b) <= 1e-6;

export const QUENCHED_END_METHOD = 'ASTM A255 initial hardness at the quenched end';
export const QUENCHED_END_SOURCE = 'ASTM A255-10 (initial hardness IH(C); dividing factor 1 at J1)';

/** Published prediction at each distance (mm) for one heat. Never throws for chemistry outside a method. */
export function publishedCurve(chemistry: Chemistry, grainSize: number | null, distancesMm: readonly number[], options: { boronTreated?: boolean } = {}): PublishedCurveResult {
  const points = new Map<number, PublishedPoint>();
  const missing: Array<{ mm: number; reason: string }> = [];
  const warnings: string[] = [];
  const wanted = [...new Set(distancesMm)].sort((a, b) => a - b);
  if (wanted.length === 0) return { points, missing, warnings };
  const carbon = chemistry.C;
  let ih: number | null = null;
  let noCeiling = '';
  if (carbon === undefined) noCeiling = 'carbon not reported';
  else {
    try {
      const bounds = martensiteBounds(carbon);
      ih = bounds.fullyMartensiticHrc;
      for (const f of bounds.outOfRange) if (f.quantity.startsWith('C (fully')) warnings.push(`quenched end: C ${carbon} % ${f.note}`);
    } catch (error) {
      noCeiling = (error as Error).message;
    }
  }
  const ceiling = ih === null ? null : ih + PREDICTION_ABOVE_IH_HRC;
  const boron = options.boronTreated === true || (chemistry.B ?? 0) >= BORON_TREATED_FROM;
  if (grainSize !== null && grainSize !== 7) {
    // Just's inch form has no grain-size term; A255's IH does not depend on grain size.
    warnings.push(`grain size ${grainSize}: the published equations used here take no grain-size term`);
  }

  const quenchedEnd = wanted.filter((d) => d <= QUENCHED_END_MAX_MM);
  for (const mm of quenchedEnd) {
    if (ih === null) missing.push({ mm, reason: `ASTM A255 initial hardness: ${noCeiling}` });
    else points.set(mm, { mm, hrc: ih, method: QUENCHED_END_METHOD, source: QUENCHED_END_SOURCE });
  }
  const beyond = wanted.filter((d) => d > QUENCHED_END_MAX_MM);
  if (beyond.length === 0) return { points, missing, warnings };
  if (ceiling === null) {
    // Without the martensite ceiling a regression can answer beyond what any steel shows (89.6 HRC for a
    // bearing steel's 1.0 % C by Just's equation): no value.
    for (const mm of beyond) missing.push({ mm, reason: `no fully martensitic hardness to bound a prediction (${noCeiling})` });
    return { points, missing, warnings };
  }
  if (boron) {
    for (const mm of beyond) missing.push({ mm, reason: 'boron-treated steel: neither ASTM A255 (no boron factor here) nor Just (1969) covers boron' });
    return { points, missing, warnings };
  }
  try {
    const j = predictJust1969(chemistry, { distancesMm: beyond });
    for (const f of j.outOfRange) warnings.push(`Just (1969): ${f.quantity} ${Number(f.value.toFixed(4))} % outside ${f.min ?? 0}-${f.max ?? '∞'} % (${f.note})`);
    for (const p of j.points) {
      const capped = p.hrc > ceiling;
      points.set(p.mm, { mm: p.mm, hrc: capped ? ceiling : p.hrc, method: j.method, source: j.source, ...(capped ? { cappedAtMartensite: true } : {}) });
    }
    for (const o of j.omitted) {
      missing.push({ mm: o.mm, reason: o.mm < 6.35 ? `between the quenched end and 4/16 in (6.35 mm) no published value is at hand (Just (1969) starts at 4/16 in; ASTM A255 dividing factors not available in a verified form)` : `Just (1969): ${o.reason}` });
    }
  } catch (error) {
    for (const mm of beyond) missing.push({ mm, reason: `Just (1969): ${(error as Error).message}` });
  }
  if ([...points.values()].some((p) => p.cappedAtMartensite)) {
    warnings.push(`Just (1969) answered above ${ceiling.toFixed(1)} HRC, the fully martensitic hardness for ${carbon} % C (ASTM A255 IH ${ih!.toFixed(1)} + ${PREDICTION_ABOVE_IH_HRC}), at some distances: capped there`);
  }
  return { points, missing, warnings };
}

/** The published value at a distance (tolerant match), or null. */
export function publishedAt(result: PublishedCurveResult, mm: number): PublishedPoint | null {
  for (const [k, v] of result.points) if (match(k, mm)) return v;
  return null;
}
