// The published predictor of a curve from chemistry, as the baseline the plant's own model must beat and
// the answer for a grade with too little history: the ASTM A255 calculation (Grossmann 1942) where it
// covers the distance, else Just (1969), inch form. Outside both (chemistry outside the method's factor
// domain, boron steel, distance not covered) there is no published value, and the reason is kept.
import { predictA255Curve } from '../hardenability/astmA255.ts';
import { predictJust1969 } from '../hardenability/just1969.ts';
import type { Chemistry } from '../hardenability/types.ts';

export interface PublishedPoint {
  mm: number;
  hrc: number;
  method: string;
  source: string;
}

export interface PublishedCurveResult {
  points: Map<number, PublishedPoint>;
  /** Distances without a published value, with the reason. */
  missing: Array<{ mm: number; reason: string }>;
  warnings: string[];
}

const match = (a: number, b: number) => Math.abs(a - b) <= 1e-6;

/** Published prediction at each distance (mm) for one heat. Never throws for chemistry outside a method. */
export function publishedCurve(chemistry: Chemistry, grainSize: number | null, distancesMm: readonly number[]): PublishedCurveResult {
  const points = new Map<number, PublishedPoint>();
  const missing: Array<{ mm: number; reason: string }> = [];
  const warnings: string[] = [];
  const wanted = [...new Set(distancesMm)].sort((a, b) => a - b);
  if (wanted.length === 0) return { points, missing, warnings };
  let a255Reason = '';
  try {
    const a = predictA255Curve(chemistry, { distancesMm: wanted, grainSize: grainSize ?? 7 });
    if (a.outsideMethod) a255Reason = 'boron-treated steel is outside the ASTM A255 calculation';
    else {
      for (const p of a.points) points.set(p.mm, { mm: p.mm, hrc: p.hrc, method: a.method, source: a.source });
      if (a.outOfRange.length) warnings.push(`ASTM A255: ${a.outOfRange.map((f) => `${f.quantity} ${Number(f.value.toFixed(4))} outside range`).join('; ')}`);
      a255Reason = 'distance outside the ASTM A255 dividing factors';
    }
  } catch (error) {
    a255Reason = `ASTM A255: ${(error as Error).message}`;
  }
  const rest = wanted.filter((d) => ![...points.keys()].some((k) => match(k, d)));
  if (rest.length) {
    try {
      const j = predictJust1969(chemistry, { distancesMm: rest });
      for (const p of j.points) points.set(p.mm, { mm: p.mm, hrc: p.hrc, method: j.method, source: j.source });
      for (const o of j.omitted) missing.push({ mm: o.mm, reason: `${a255Reason}; Just (1969): ${o.reason}` });
    } catch (error) {
      for (const mm of rest) missing.push({ mm, reason: `${a255Reason}; Just (1969): ${(error as Error).message}` });
    }
  }
  return { points, missing, warnings };
}

/** The published value at a distance (tolerant match), or null. */
export function publishedAt(result: PublishedCurveResult, mm: number): PublishedPoint | null {
  for (const [k, v] of result.points) if (match(k, mm)) return v;
  return null;
}
