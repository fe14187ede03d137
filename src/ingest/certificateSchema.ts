// The canonical certificate: what the API accepts as JSON and what every file layout is mapped to.
// Validation reports each problem with its path and a plain reason; limits are what no real
// certificate can hold (common practice: carbon above 2 % is cast iron, not steel; end-quench
// hardness above 70 HRC is beyond any steel's martensite).
import { parseGrainSize } from '../hardenability/grainSize.ts';
import { z } from 'zod';
import { SPECIMEN_LENGTH_MM, sixteenthsToMm } from '../hardenability/distances.ts';

export const ELEMENTS = ['C', 'Mn', 'Si', 'P', 'S', 'Cr', 'Ni', 'Mo', 'Cu', 'V', 'Al', 'B', 'Ti', 'Nb', 'N'] as const;
export type Element = (typeof ELEMENTS)[number];

export const TEST_SOURCES = ['mill_certificate', 'receiving_inspection', 'outside_lab'] as const;
export type TestSource = (typeof TEST_SOURCES)[number];

/** How J-distances are written: millimetres (ISO 642) or sixteenths of an inch (ASTM A255 / SAE J406). */
export const DISTANCE_SYSTEMS = ['mm', 'sixteenths'] as const;
export type DistanceSystem = (typeof DISTANCE_SYSTEMS)[number];

export const MAX_HRC = 70;
export const MAX_CARBON_PCT = 2;

const isoDate = z
  .string()
  .regex(/^\d{4}-\d{2}-\d{2}$/, 'must be a date written YYYY-MM-DD')
  .refine((s) => !Number.isNaN(Date.parse(`${s}T00:00:00Z`)) && new Date(`${s}T00:00:00Z`).toISOString().startsWith(s), 'is not a real calendar date');

/** A date that cannot lie in the future (a certificate reports what has happened). */
export function pastDate(today: () => string = todayUtc) {
  return isoDate.refine((s) => s <= today(), { message: 'lies in the future' });
}

export function todayUtc(): string {
  return new Date().toISOString().slice(0, 10);
}

/** Longest identifier (mill, grade, heat, certificate, lot, order number) and free text (laboratory) accepted:
 * far above any real one, and below what a PostgreSQL b-tree index entry can hold (about 2.7 kB). */
export const MAX_IDENTIFIER_LENGTH = 200;
export const MAX_TEXT_LENGTH = 1000;
// No NUL (PostgreSQL text cannot hold it) and no unpaired UTF-16 surrogate (not a character; it cannot be encoded as UTF-8).
const storable = /^(?:[^\u0000\uD800-\uDFFF]|[\uD800-\uDBFF][\uDC00-\uDFFF])*$/;
const identifier = () => z.string().max(MAX_IDENTIFIER_LENGTH, `is longer than ${MAX_IDENTIFIER_LENGTH} characters`).regex(storable, 'contains a NUL or an unpaired surrogate, which cannot be stored as text');
const freeText = () => z.string().max(MAX_TEXT_LENGTH, `is longer than ${MAX_TEXT_LENGTH} characters`).regex(storable, 'contains a NUL or an unpaired surrogate, which cannot be stored as text');
const wtPct = z.number({ error: 'must be a number (wt%)' }).finite().min(0, 'cannot be negative').max(100, 'cannot exceed 100 wt%');

const chemistryShape = Object.fromEntries(ELEMENTS.map((e) => [e, wtPct.optional()])) as Record<Element, z.ZodOptional<typeof wtPct>>;

export const chemistrySchema = z
  .object({
    ...chemistryShape,
    C: wtPct.max(MAX_CARBON_PCT, `carbon above ${MAX_CARBON_PCT} % is not steel`),
    /** Further elements by symbol (e.g. Sn, As, Ca), wt%. */
    other: z.record(z.string().regex(/^[A-Z][a-z]?$/, 'must be an element symbol'), wtPct).optional(),
  })
  .strict()
  .superRefine((c, ctx) => {
    for (const e of Object.keys(c.other ?? {})) {
      if ((ELEMENTS as readonly string[]).includes(e)) {
        ctx.addIssue({ code: 'custom', path: ['other', e], message: 'is one of the main elements: give it beside C, Mn, ..., not under other' });
      }
    }
  })
  .refine((c) => ELEMENTS.reduce((sum, e) => sum + (c[e] ?? 0), 0) + Object.values(c.other ?? {}).reduce((a, b) => a + b, 0) < 100, {
    message: 'the listed elements add up to 100 wt% or more',
  });
export type Chemistry = z.infer<typeof chemistrySchema>;

export const readingSchema = z
  .object({
    /** Distance from the quenched end in the test's distance system (mm or sixteenths of an inch). */
    at: z.number({ error: 'must be a number' }).finite().gt(0, 'must be greater than 0'),
    hrc: z.number({ error: 'must be a number (HRC)' }).finite().min(0, 'cannot be negative').max(MAX_HRC, `above ${MAX_HRC} HRC is beyond any steel`),
    /** A reading off the scale: 'below' for "<20" (hrc = 20, the hardness is under it), 'above' for ">65". */
    censored: z.enum(['below', 'above']).optional(),
  })
  .strict();

export function testSchema(today?: () => string) {
  return z
    .object({
      source: z.enum(TEST_SOURCES).default('mill_certificate'),
      lotNumber: identifier().min(1).optional(),
      testDate: pastDate(today).optional(),
      austenitizingC: z.number().min(700).max(1200).optional(),
      basis: z.enum(['measured', 'calculated']).default('measured'),
      distanceSystem: z.enum(DISTANCE_SYSTEMS),
      laboratory: freeText().optional(),
      readings: z.array(readingSchema).min(1, 'needs at least one reading'),
    })
    .strict()
    .superRefine((t, ctx) => {
      const seen = new Map<number, number>();
      t.readings.forEach((r, i) => {
        const mm = t.distanceSystem === 'mm' ? r.at : sixteenthsToMm(r.at);
        if (mm > SPECIMEN_LENGTH_MM + 1e-9) {
          ctx.addIssue({ code: 'custom', path: ['readings', i, 'at'], message: `${r.at} ${t.distanceSystem === 'mm' ? 'mm' : 'sixteenths'} lies beyond the end of the ${SPECIMEN_LENGTH_MM} mm specimen` });
        }
        const first = seen.get(r.at);
        if (first !== undefined) {
          ctx.addIssue({ code: 'custom', path: ['readings', i, 'at'], message: `distance ${r.at} appears twice in one test (also reading ${first + 1})` });
        } else seen.set(r.at, i);
      });
    });
}
export type EndQuenchTestInput = z.infer<ReturnType<typeof testSchema>>;

export function lotSchema(today?: () => string) {
  return z
    .object({
      lotNumber: identifier().min(1),
      receivedDate: pastDate(today).optional(),
      massKg: z.number().positive().optional(),
      barDiameterMm: z.number().positive().max(1000).optional(),
      purchaseOrder: identifier().optional(),
    })
    .strict();
}
export type LotInput = z.infer<ReturnType<typeof lotSchema>>;

export function certificateSchema(today?: () => string) {
  return z
    .object({
      mill: identifier().min(1, 'is required').regex(/\S/, 'is blank (only spaces or invisible characters)'),
      grade: identifier().min(1, 'is required').regex(/\S/, 'is blank (only spaces or invisible characters)'),
      heatNumber: identifier().min(1, 'is required').regex(/\S/, 'is blank (only spaces or invisible characters)'),
      castDate: pastDate(today),
      certificateNumber: identifier().min(1).optional(),
      certificateDate: pastDate(today).optional(),
      /** An ASTM E112 number, or as stated: a range "5-8", a bound "≥5", or "fine" (src/hardenability/grainSize.ts). */
      grainSize: z.union([z.number().min(-1).max(15), z.string().max(40)]).optional(),
      chemistry: chemistrySchema,
      lots: z.array(lotSchema(today)).default([]),
      tests: z.array(testSchema(today)).default([]),
    })
    .strict()
    .superRefine((c, ctx) => {
      if (typeof c.grainSize === 'string') {
        try {
          parseGrainSize(c.grainSize);
        } catch (error) {
          ctx.addIssue({ code: 'custom', path: ['grainSize'], message: (error as Error).message });
        }
      }
      if (c.certificateDate && c.certificateDate < c.castDate) {
        ctx.addIssue({ code: 'custom', path: ['certificateDate'], message: 'is before the cast date' });
      }
      const lotNumbers = new Set<string>();
      c.lots.forEach((l, i) => {
        if (lotNumbers.has(l.lotNumber)) ctx.addIssue({ code: 'custom', path: ['lots', i, 'lotNumber'], message: `lot ${l.lotNumber} is listed twice` });
        lotNumbers.add(l.lotNumber);
      });
      c.tests.forEach((t, i) => {
        if (t.lotNumber && !lotNumbers.has(t.lotNumber)) {
          ctx.addIssue({ code: 'custom', path: ['tests', i, 'lotNumber'], message: `names lot ${t.lotNumber}, which is not among the certificate's lots` });
        }
        if (t.source !== 'mill_certificate' && !t.lotNumber) {
          ctx.addIssue({ code: 'custom', path: ['tests', i, 'lotNumber'], message: 'a receiving or outside-lab test must name its lot' });
        }
      });
    });
}
export type CertificateInput = z.infer<ReturnType<typeof certificateSchema>>;

/** A problem with one input, addressed so a person can find it: file row and column, or JSON path. */
export interface ValidationProblem {
  row?: number;
  column?: string;
  path: string;
  message: string;
}

export function problemsFromZod(error: z.ZodError, base: Partial<ValidationProblem> = {}): ValidationProblem[] {
  return error.issues.map((issue) => {
    const path = issue.path.map(String).join('.');
    const message = issue.code === 'invalid_type' && /received undefined$/.test(issue.message) ? 'is required' : issue.message;
    return { ...base, path, message: `${path || 'certificate'} ${message}`.trim() };
  });
}

/**
 * An end-quench test on a heat already on file (a receiving inspection or outside-lab re-test), sent
 * without the certificate. The heat must exist; the lot is created when new.
 */
export function testRecordSchema(today?: () => string) {
  return z
    .object({
      mill: identifier().min(1, 'is required').regex(/\S/, 'is blank (only spaces or invisible characters)'),
      heatNumber: identifier().min(1, 'is required').regex(/\S/, 'is blank (only spaces or invisible characters)'),
      lot: lotSchema(today).optional(),
      test: testSchema(today),
    })
    .strict()
    .superRefine((r, ctx) => {
      if (r.test.source === 'mill_certificate') {
        ctx.addIssue({ code: 'custom', path: ['test', 'source'], message: 'a mill-certificate curve must come with its certificate (chemistry)' });
      }
      if (r.lot && r.test.lotNumber && r.lot.lotNumber !== r.test.lotNumber) {
        ctx.addIssue({ code: 'custom', path: ['test', 'lotNumber'], message: 'differs from the lot given' });
      }
    });
}
export type TestRecordInput = z.infer<ReturnType<typeof testRecordSchema>>;
