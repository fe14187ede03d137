// A mill layout: how one mill's own spreadsheet maps onto our fields (its header texts, delimiter,
// decimal comma, date pattern, distance columns, constant defaults and value translations).
// Layout files are JSON; loadMillLayout validates a parsed JSON object and names every problem.
import { z } from 'zod';
import { DISTANCE_SYSTEMS, ELEMENTS, TEST_SOURCES } from './certificateSchema.ts';
import { compileDateFormat } from './cellValues.ts';
import { compileDistancePattern, normaliseHeader, type DistanceColumnSpec } from './distanceHeaders.ts';

// ---- the field vocabulary shared by our own layout and mill layouts ----

/**
 * Residual elements a certificate may list besides the fifteen canonical ones (common practice on
 * steel mill certificates); they go to chemistry.other.
 */
export const RESIDUAL_ELEMENTS = ['Sn', 'As', 'Sb', 'Pb', 'Ca', 'Co', 'W', 'Zr', 'Bi', 'Se', 'Te', 'Mg', 'Ta', 'Zn', 'Ce'] as const;

export const TEXT_FIELDS = ['mill', 'grade', 'heat_number', 'certificate_number', 'lot_number', 'purchase_order', 'laboratory'] as const;
export const DATE_FIELDS = ['cast_date', 'certificate_date', 'received_date', 'test_date'] as const;
export const NUMBER_FIELDS = ['grain_size', 'mass_kg', 'bar_diameter_mm', 'austenitizing_c'] as const;
export const CHOICE_FIELDS = { source: TEST_SOURCES, basis: ['measured', 'calculated'] } as const;
export const CHEMISTRY_FIELDS = [...ELEMENTS, ...RESIDUAL_ELEMENTS] as const;

export type TextField = (typeof TEXT_FIELDS)[number];
export type DateField = (typeof DATE_FIELDS)[number];
export type NumberField = (typeof NUMBER_FIELDS)[number];
export type ChoiceField = keyof typeof CHOICE_FIELDS;
export type ChemistryField = (typeof CHEMISTRY_FIELDS)[number];
export type FieldName = TextField | DateField | NumberField | ChoiceField | ChemistryField;

export const FIELD_NAMES: readonly FieldName[] = [
  ...TEXT_FIELDS,
  ...DATE_FIELDS,
  ...NUMBER_FIELDS,
  ...(Object.keys(CHOICE_FIELDS) as ChoiceField[]),
  ...CHEMISTRY_FIELDS,
];

export type FieldKind = 'text' | 'date' | 'number' | 'choice' | 'chemistry';

const kindOf = new Map<string, FieldKind>([
  ...TEXT_FIELDS.map((f) => [f, 'text'] as const),
  ...DATE_FIELDS.map((f) => [f, 'date'] as const),
  ...NUMBER_FIELDS.map((f) => [f, 'number'] as const),
  ...Object.keys(CHOICE_FIELDS).map((f) => [f, 'choice'] as const),
  ...CHEMISTRY_FIELDS.map((f) => [f, 'chemistry'] as const),
]);

export function fieldKind(name: FieldName): FieldKind {
  return kindOf.get(name) as FieldKind;
}

/** Our field name for a header of our own layout (trimmed, case-insensitive), or undefined. */
export function fieldForOwnHeader(header: string): FieldName | undefined {
  return ownHeaderIndex.get(normaliseHeader(header));
}
const ownHeaderIndex = new Map<string, FieldName>(FIELD_NAMES.map((f) => [f.toLowerCase(), f]));

/** Normalises a choice word: "Receiving inspection" and "receiving-inspection" read as receiving_inspection. */
export function normaliseChoice(text: string): string {
  return text.trim().toLowerCase().replace(/[\s-]+/g, '_');
}

// ---- the layout file ----

const headerText = z.string({ error: 'must be a header text' }).trim().min(1, 'must not be empty');

const distanceSpec = z
  .object({
    unit: z.enum(DISTANCE_SYSTEMS, { error: `must be one of ${DISTANCE_SYSTEMS.join(', ')}` }),
    columns: z.record(headerText, z.number({ error: 'must be a distance number' }).positive('must be greater than 0')).optional(),
    pattern: z
      .string()
      .min(1)
      .superRefine((p, ctx) => {
        try {
          compileDistancePattern(p);
        } catch (e) {
          ctx.addIssue({ code: 'custom', message: `is not a usable pattern: ${(e as Error).message}` });
        }
      })
      .optional(),
  })
  .strict()
  .superRefine((d, ctx) => {
    if ((d.columns === undefined) === (d.pattern === undefined)) {
      ctx.addIssue({ code: 'custom', message: 'needs either "columns" (header -> position) or "pattern" (a regex with one capture group), not both' });
    }
  })
  .transform((d): DistanceColumnSpec => (d.columns ? { unit: d.unit, columns: d.columns } : { unit: d.unit, pattern: d.pattern as string }));

const fieldKey = z.string().refine((k) => kindOf.has(k), { error: (iss) => `"${String(iss.input)}" is not one of our field names (${FIELD_NAMES.join(', ')})` });

export const millLayoutSchema = z
  .object({
    /** The layout's name, e.g. the mill and the document ("Kessler Bar Works hardenability report"). */
    name: z.string().trim().min(1, 'is required'),
    /** The mill code used when the file has no mill column or the cell is empty. */
    millCode: z.string().trim().min(1).optional(),
    /** CSV only: the field delimiter (one character, or "\t"). */
    delimiter: z.string().length(1, 'must be one character').default(','),
    decimalComma: z.boolean().default(false),
    /** Declared thousands separator; any other grouping mark is refused. */
    thousandsSeparator: z.enum([' ', '.', ',', "'"]).optional(),
    /** Date pattern from the tokens DD, D, MM, M, YYYY, YY (ISO YYYY-MM-DD is always accepted too). */
    dateFormat: z
      .string()
      .optional()
      .superRefine((f, ctx) => {
        if (f === undefined) return;
        try {
          compileDateFormat(f);
        } catch (e) {
          ctx.addIssue({ code: 'custom', message: (e as Error).message });
        }
      }),
    /** The 1-based row that holds the headers; rows above it are titles and are skipped. */
    headerRow: z.number().int('must be a whole number').min(1, 'must be 1 or more').default(1),
    /** XLSX only: the sheet to read (default: the first). */
    sheet: z.string().min(1).optional(),
    /** CSV only: the text encoding (default: UTF-8, or Windows-1252 when the bytes are not UTF-8). */
    encoding: z.enum(['utf-8', 'windows-1252', 'utf-16le']).optional(),
    /** Our field name -> the file's header text. */
    columns: z.record(fieldKey, headerText),
    distances: z.preprocess((d) => (Array.isArray(d) || d === undefined ? d : [d]), z.array(distanceSpec).min(1, 'needs at least one distance spec')),
    /** Constant values for fields the file does not carry (or leaves empty), e.g. {"source": "mill_certificate"}. */
    defaults: z.record(fieldKey, z.union([z.string(), z.number()])).default({}),
    /** Per field, the file's words -> our words, e.g. {"source": {"Works cert": "mill_certificate"}}. */
    values: z.record(fieldKey, z.record(z.string(), z.string())).default({}),
    /** Less-than chemistry ("<0,0005"): refuse (default), take the bound, or take zero. */
    belowDetection: z.enum(['reject', 'bound', 'zero']).default('reject'),
    /** Headers to skip without a warning. */
    ignoreColumns: z.array(z.string()).default([]),
  })
  .strict()
  .superRefine((layout, ctx) => {
    const seen = new Map<string, string>();
    for (const [field, header] of Object.entries(layout.columns)) {
      const n = normaliseHeader(header);
      const other = seen.get(n);
      if (other) ctx.addIssue({ code: 'custom', path: ['columns', field], message: `header "${header}" is already used for ${other}` });
      else seen.set(n, field);
    }
    (Array.isArray(layout.distances) ? layout.distances : []).forEach((spec, i) => {
      if ('columns' in spec) {
        for (const header of Object.keys(spec.columns)) {
          const other = seen.get(normaliseHeader(header));
          if (other) ctx.addIssue({ code: 'custom', path: ['distances', i, 'columns', header], message: `header "${header}" is already used for ${other}` });
          else seen.set(normaliseHeader(header), 'a distance column');
        }
      }
    });
    if ('mill' in layout.defaults) {
      ctx.addIssue({ code: 'custom', path: ['defaults', 'mill'], message: 'use "millCode" for the mill' });
    }
    if (!layout.columns.heat_number) {
      ctx.addIssue({ code: 'custom', path: ['columns', 'heat_number'], message: 'is required: every row needs its heat number' });
    }
    if (!layout.columns.mill && !layout.millCode) {
      ctx.addIssue({ code: 'custom', path: ['millCode'], message: 'is required when the file has no mill column' });
    }
    if (layout.thousandsSeparator === ',' && layout.decimalComma) {
      ctx.addIssue({ code: 'custom', path: ['thousandsSeparator'], message: 'cannot be "," when the decimal mark is a comma' });
    }
    if (layout.thousandsSeparator === '.' && !layout.decimalComma) {
      ctx.addIssue({ code: 'custom', path: ['thousandsSeparator'], message: 'cannot be "." when the decimal mark is a point' });
    }
    for (const [field, value] of Object.entries(layout.defaults)) {
      const choices = (CHOICE_FIELDS as Record<string, readonly string[]>)[field];
      if (choices) {
        const mapped = layout.values[field]?.[String(value)] ?? String(value);
        if (!choices.includes(normaliseChoice(mapped))) {
          ctx.addIssue({ code: 'custom', path: ['defaults', field], message: `"${value}" is not one of ${choices.join(', ')}` });
        }
      }
    }
    for (const [field, map] of Object.entries(layout.values)) {
      const choices = (CHOICE_FIELDS as Record<string, readonly string[]>)[field];
      if (!choices) continue;
      for (const [theirs, ours] of Object.entries(map)) {
        if (!choices.includes(normaliseChoice(ours))) {
          ctx.addIssue({ code: 'custom', path: ['values', field, theirs], message: `"${ours}" is not one of ${choices.join(', ')}` });
        }
      }
    }
  });

export type MillLayout = z.output<typeof millLayoutSchema>;
/** A layout as written in its JSON file (defaults not yet filled in). */
export type MillLayoutFile = z.input<typeof millLayoutSchema>;

export class InvalidMillLayoutError extends Error {
  override name = 'InvalidMillLayoutError';
  constructor(
    readonly layoutName: string | undefined,
    readonly problems: string[],
  ) {
    super(`the mill layout${layoutName ? ` "${layoutName}"` : ''} is not valid:\n${problems.map((p) => `  - ${p}`).join('\n')}`);
  }
}

/** Validates a parsed layout JSON object; throws InvalidMillLayoutError listing every problem. */
export function loadMillLayout(json: unknown): MillLayout {
  const result = millLayoutSchema.safeParse(json);
  if (result.success) return result.data;
  const name = typeof json === 'object' && json !== null && typeof (json as { name?: unknown }).name === 'string' ? (json as { name: string }).name : undefined;
  const problems = result.error.issues.map((issue) => {
    const path = issue.path.map(String).join('.');
    if (issue.code === 'unrecognized_keys') {
      const where = path ? `${path}: ` : '';
      return `${where}unknown ${issue.keys.length > 1 ? 'keys' : 'key'} ${issue.keys.map((k) => `"${k}"`).join(', ')}`;
    }
    if (issue.code === 'invalid_key') return `${path}: ${issue.issues[0]?.message ?? 'is not an allowed key'}`;
    if (issue.code === 'invalid_type') {
      return valueAt(json, issue.path) === undefined ? `${path} is required` : `${path} must be ${article(issue.expected)}`;
    }
    return path ? `${path} ${issue.message}` : issue.message;
  });
  throw new InvalidMillLayoutError(name, problems);
}

function valueAt(json: unknown, path: readonly PropertyKey[]): unknown {
  let v = json;
  for (const k of path) {
    if (typeof v !== 'object' || v === null) return undefined;
    v = (v as Record<PropertyKey, unknown>)[k];
  }
  return v;
}

function article(expected: string): string {
  return expected === 'array' || expected === 'object' ? `an ${expected}` : `a ${expected}`;
}

/** The same as loadMillLayout (the name callers of the first draft used). */
export const parseMillLayout = loadMillLayout;
