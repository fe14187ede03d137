// The catalogue a plant sets up before its first import: mills, grades (with chemistry limits) and
// versioned end-quench bands. One set of zod schemas validates the API bodies, the command line and
// the catalogue page alike. Distances of a band are given in the grade's unit (ISO 642 mm or ASTM
// A255 sixteenths of an inch) and stored in exact millimetres with their label.
import { z } from 'zod';
import { makeDistance } from '../hardenability/distances.ts';
import { ELEMENTS } from './certificateSchema.ts';

const isoDate = z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'must be a date written YYYY-MM-DD');

export const millInputSchema = z.object({
  code: z.string().trim().min(1, 'is required').max(40, 'is longer than 40 characters'),
  name: z.string().trim().min(1, 'is required'),
  country: z.string().nullish(),
  notes: z.string().nullish(),
});

export const chemistryLimitSchema = z
  .object({ element: z.enum(ELEMENTS), min: z.number().min(0).max(100).nullable().default(null), max: z.number().min(0).max(100).nullable().default(null) })
  .refine((l) => l.min !== null || l.max !== null, 'needs a min or a max')
  .refine((l) => l.min === null || l.max === null || l.min <= l.max, 'min is above max');

export const gradeInputSchema = z.object({
  code: z.string().trim().min(1, 'is required').max(40, 'is longer than 40 characters'),
  description: z.string().nullish(),
  distanceSystem: z.enum(['mm', 'sixteenths']).default('mm'),
  chemistryLimits: z
    .array(chemistryLimitSchema)
    .default([])
    .refine((ls) => new Set(ls.map((l) => l.element)).size === ls.length, 'an element appears twice'),
});

export const bandPointSchema = z
  .object({ at: z.number().positive(), min: z.number().min(0).max(70).nullable().default(null), max: z.number().min(0).max(70).nullable().default(null) })
  .refine((p) => p.min !== null || p.max !== null, 'needs a min or a max HRC')
  .refine((p) => p.min === null || p.max === null || p.min <= p.max, 'min HRC is above max HRC');

export const bandInputSchema = z.object({
  effectiveFrom: isoDate,
  status: z.enum(['draft', 'active', 'retired']).default('active'),
  kind: z.enum(['standard', 'restricted']).default('standard'),
  /** astm_e29 (default): readings rounded to the limits' places by ASTM E29 before comparing; as_reported: compared as written. */
  rounding: z.enum(['astm_e29', 'as_reported']).default('astm_e29'),
  reason: z.string().optional(),
  /** Distances in the unit named here; stored in exact mm with the original label. */
  distanceSystem: z.enum(['mm', 'sixteenths']),
  points: z
    .array(bandPointSchema)
    .min(1)
    .refine((pts) => new Set(pts.map((p) => p.at)).size === pts.length, 'a distance appears twice'),
});

export type MillInputBody = z.output<typeof millInputSchema>;
export type GradeInputBody = z.output<typeof gradeInputSchema>;
export type BandInputBody = z.output<typeof bandInputSchema>;

/** Band points in stored form: exact mm, the label, HRC limits. Throws HardenabilityInputError for a distance past the specimen. */
export function storedBandPoints(band: BandInputBody): Array<{ distanceMm: number; label: string; minHrc: number | null; maxHrc: number | null }> {
  return band.points.map((p) => {
    const at = makeDistance(p.at, band.distanceSystem);
    return { distanceMm: at.mm, label: at.label, minHrc: p.min, maxHrc: p.max };
  });
}

/** Every problem of a zod result in one line each: "points.2.max: min HRC is above max HRC". */
export function catalogProblems(error: z.ZodError): string[] {
  return error.issues.map((i) => (i.path.length ? `${i.path.map(String).join('.')}: ${i.message}` : i.message));
}

/** A catalogue file: mills, grades and bands (each band names its grade). */
export const catalogueFileSchema = z.object({
  mills: z.array(millInputSchema).default([]),
  grades: z.array(gradeInputSchema).default([]),
  bands: z.array(bandInputSchema.extend({ grade: z.string().trim().min(1) })).default([]),
});

// ---- command-line forms ----

/** "C=0.17-0.22", "Si=-0.40" (max only), "B=0.0008-" (min only). */
export function parseLimitText(text: string): { element: string; min: number | null; max: number | null } {
  const m = /^\s*([A-Za-z]{1,2})\s*=\s*([0-9.]*)\s*-\s*([0-9.]*)\s*$/.exec(text);
  if (!m) throw new Error(`"${text}" is not a chemistry limit; write ELEMENT=MIN-MAX in wt% (C=0.17-0.22, Si=-0.40, B=0.0008-)`);
  return { element: m[1], min: m[2] === '' ? null : Number(m[2]), max: m[3] === '' ? null : Number(m[3]) };
}

/** "1.5=39-49" (HRC min and max at 1.5), "20=-37" (max only), "9=30-" (min only). */
export function parsePointText(text: string): { at: number; min: number | null; max: number | null } {
  const m = /^\s*([0-9]+(?:\.[0-9]+)?)\s*=\s*([0-9.]*)\s*-\s*([0-9.]*)\s*$/.exec(text);
  if (!m) throw new Error(`"${text}" is not a band point; write DISTANCE=MIN-MAX in HRC (1.5=41-49, 20=-37, 9=30-)`);
  return { at: Number(m[1]), min: m[2] === '' ? null : Number(m[2]), max: m[3] === '' ? null : Number(m[3]) };
}
