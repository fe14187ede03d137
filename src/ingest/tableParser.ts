// The table parser: a CSV or XLSX file of end-quench tests (one row per test, in our own layout or a
// mill's own layout) -> canonical certificates and re-test records, each problem addressed by file
// row and the file's own column header. Pure: bytes in, records out. The layout is described in
// docs/import-format.md.
import { parseGrainSize } from '../hardenability/grainSize.ts';
import type { z } from 'zod';
import {
  certificateSchema,
  ELEMENTS,
  testRecordSchema,
  todayUtc,
  type CertificateInput,
  type DistanceSystem,
  type TestRecordInput,
  type ValidationProblem,
} from './certificateSchema.ts';
import {
  compileDateFormat,
  isBlankCell,
  parseChemistryCell,
  parseDateCell,
  parseNumberCell,
  parseTextCell,
  showCell,
  TableReadError,
  type BelowDetectionPolicy,
  type CellResult,
  type DatePattern,
  type NumberFormat,
  type RawCell,
  type RawRow,
  type RawTable,
} from './cellValues.ts';
import { readCsv } from './csvReader.ts';
import { compileDistancePattern, normaliseHeader, readDistanceHeader, readLayoutDistanceHeader, type DistancePosition, type HeaderReading } from './distanceHeaders.ts';
import {
  CHOICE_FIELDS,
  fieldForOwnHeader,
  fieldKind,
  normaliseChoice,
  type ChemistryField,
  type FieldName,
  type MillLayout,
} from './millLayout.ts';
import { heatKey } from './prepare.ts';
import { readXlsx, XlsxLimitError } from './xlsxReader.ts';

export interface TableParseOptions {
  format: 'csv' | 'xlsx';
  /** Absent: our own layout (docs/import-format.md). */
  layout?: MillLayout;
  /** YYYY-MM-DD, for "date in the future" checks (default: today UTC). */
  today?: () => string;
}

export interface ParsedItem {
  /** certificate: chemistry present; test: a re-test of a heat already on file. */
  kind: 'certificate' | 'test';
  /** File rows (1-based, as a spreadsheet shows them; the header row counts). */
  rows: number[];
  /** mill/heat number, to group and to report. */
  key: string;
  certificate?: CertificateInput;
  testRecord?: TestRecordInput;
  /** Empty when valid; each with row, column (the file's own header text) and a plain message. */
  problems: ValidationProblem[];
}

export interface TableParseResult {
  items: ParsedItem[];
  /** Problems with the file as a whole (unreadable, missing or ambiguous columns); when present, items is empty. */
  fileProblems: ValidationProblem[];
  /** Data rows read (non-blank rows below the header row). */
  rowCount: number;
  /** Things worth a look that do not make anything invalid (ignored columns, less-than values taken as a number). */
  warnings: ValidationProblem[];
}

// ---------------------------------------------------------------------------------------------
// Columns

type ColumnRole = { kind: 'field'; field: FieldName } | { kind: 'distance'; position: DistancePosition } | { kind: 'ignored' };

interface Column {
  index: number;
  header: string;
  role: ColumnRole;
}

interface Setup {
  columns: Column[];
  fieldColumn: Map<FieldName, Column>;
  distanceColumns: Column[];
  chemistryColumns: Column[];
  numberFormat: NumberFormat;
  datePattern?: DatePattern;
  allowSerialDates: boolean;
  belowDetection: BelowDetectionPolicy;
  valueMaps: Map<FieldName, Map<string, string>>;
  defaults: Map<FieldName, Value>;
  layoutName?: string;
}

type Value = string | number;

/** Where a value came from: a cell (row, column header) or a layout default. */
interface Origin {
  row: number;
  column?: string;
  /** Set when the value is the layout's default rather than a cell. */
  defaultOf?: FieldName;
  raw: RawCell;
}

function place(origin: { row: number; column?: string; defaultOf?: FieldName }): string {
  if (origin.column !== undefined) return `row ${origin.row}, column "${origin.column}"`;
  if (origin.defaultOf) return `row ${origin.row}, the layout's default for ${origin.defaultOf}`;
  return `row ${origin.row}`;
}

function problem(origin: { row: number; column?: string; defaultOf?: FieldName }, path: string, reason: string): ValidationProblem {
  const where = place(origin);
  return origin.column !== undefined
    ? { row: origin.row, column: origin.column, path, message: `${where}: ${reason}` }
    : { row: origin.row, path, message: `${where}: ${reason}` };
}

function fileProblem(message: string): ValidationProblem {
  return { path: '', message };
}

function headerText(cell: RawCell): string {
  return cell === null || cell === undefined ? '' : showCell(cell).trim();
}

function resolveColumns(
  headerCells: RawCell[],
  layout: MillLayout | undefined,
  fileProblems: ValidationProblem[],
  warnings: ValidationProblem[],
): Column[] {
  const layoutFields = new Map<string, FieldName>();
  const patterns = new Map<string, RegExp>();
  const ignored = new Set<string>();
  if (layout) {
    for (const [field, header] of Object.entries(layout.columns)) layoutFields.set(normaliseHeader(header), field as FieldName);
    for (const spec of layout.distances) if ('pattern' in spec) patterns.set(spec.pattern, compileDistancePattern(spec.pattern));
    for (const h of layout.ignoreColumns) ignored.add(normaliseHeader(h));
  }
  const columns: Column[] = [];
  headerCells.forEach((cell, index) => {
    const header = headerText(cell);
    if (header === '') {
      columns.push({ index, header, role: { kind: 'ignored' } });
      return;
    }
    const norm = normaliseHeader(header);
    let role: ColumnRole | undefined;
    let reading: HeaderReading;
    if (layout) {
      const field = layoutFields.get(norm);
      if (field) role = { kind: 'field', field };
      reading = role ? { kind: 'not-distance' } : readLayoutDistanceHeader(header, layout.distances, patterns);
    } else {
      const field = fieldForOwnHeader(header);
      if (field) role = { kind: 'field', field };
      reading = role ? { kind: 'not-distance' } : readDistanceHeader(header);
    }
    if (!role) {
      if (reading.kind === 'distance') role = { kind: 'distance', position: reading.position };
      else if (reading.kind === 'refused') {
        fileProblems.push(fileProblem(`column "${header}": ${reading.reason}`));
        role = { kind: 'ignored' };
      } else {
        role = { kind: 'ignored' };
        if (!ignored.has(norm)) {
          warnings.push({
            column: header,
            path: '',
            message: layout
              ? `column "${header}" is not named in the layout "${layout.name}"; it was ignored`
              : `column "${header}" is not one of our fields; it was ignored`,
          });
        }
      }
    }
    columns.push({ index, header, role });
  });

  // The same field or distance twice is ambiguous.
  const seen = new Map<string, Column>();
  for (const c of columns) {
    const id = c.role.kind === 'field' ? c.role.field : c.role.kind === 'distance' ? `${c.role.position.system}:${c.role.position.at}` : undefined;
    if (!id) continue;
    const first = seen.get(id);
    if (first) {
      const what = c.role.kind === 'field' ? c.role.field : `the distance ${id.replace(':', ' ')}`;
      fileProblems.push(fileProblem(`columns "${first.header}" and "${c.header}" both hold ${what}; keep one`));
    } else seen.set(id, c);
  }
  return columns;
}

function setUp(headerCells: RawCell[], options: TableParseOptions, fileProblems: ValidationProblem[], warnings: ValidationProblem[]): Setup {
  const layout = options.layout;
  const columns = resolveColumns(headerCells, layout, fileProblems, warnings);
  const fieldColumn = new Map<FieldName, Column>();
  for (const c of columns) if (c.role.kind === 'field') fieldColumn.set(c.role.field, c);
  const distanceColumns = columns.filter((c) => c.role.kind === 'distance');

  const setup: Setup = {
    columns,
    fieldColumn,
    distanceColumns,
    chemistryColumns: columns.filter((c) => c.role.kind === 'field' && fieldKind(c.role.field) === 'chemistry'),
    numberFormat: { decimalComma: layout?.decimalComma ?? false, thousandsSeparator: layout?.thousandsSeparator },
    datePattern: layout?.dateFormat ? compileDateFormat(layout.dateFormat) : undefined,
    allowSerialDates: options.format === 'xlsx',
    belowDetection: layout?.belowDetection ?? 'reject',
    valueMaps: new Map(),
    defaults: new Map(),
    layoutName: layout?.name,
  };

  const required: FieldName[] = ['heat_number'];
  if (!layout?.millCode) required.push('mill');
  for (const field of required) {
    if (fieldColumn.has(field)) continue;
    fileProblems.push(
      fileProblem(
        layout
          ? `the file has no column "${layout.columns[field] ?? field}", which the layout "${layout.name}" names for ${field}; every row needs it`
          : `the file has no column "${field}"; every row needs it (our own layout is described in docs/import-format.md)`,
      ),
    );
  }
  if (layout) {
    for (const [field, header] of Object.entries(layout.columns)) {
      if (!fieldColumn.has(field as FieldName) && !required.includes(field as FieldName)) {
        warnings.push({ path: '', message: `the layout "${layout.name}" names column "${header}" for ${field}, but the file has no such column` });
      }
    }
    for (const [field, map] of Object.entries(layout.values)) {
      setup.valueMaps.set(field as FieldName, new Map(Object.entries(map).map(([k, v]) => [normaliseHeader(k), v])));
    }
    const defaults: Array<[FieldName, Value]> = Object.entries(layout.defaults) as Array<[FieldName, Value]>;
    if (layout.millCode) defaults.push(['mill', layout.millCode]);
    for (const [field, raw] of defaults) {
      const read = readField(field, raw, setup);
      if (!read.ok) fileProblems.push(fileProblem(`the layout's default for ${field}: ${read.reason}`));
      else if (read.value !== undefined) setup.defaults.set(field, read.value);
    }
  }
  if (distanceColumns.length === 0) warnings.push({ path: '', message: 'the file has no J-distance columns, so it holds no end-quench readings' });
  return setup;
}

// ---------------------------------------------------------------------------------------------
// Rows

interface Reading {
  position: DistancePosition;
  hrc: number;
  censored?: 'below' | 'above';
  origin: Origin;
}

/** A reading off the scale as mills write it: "<20", "< 20 HRC", "≤20", ">65", "> 65 HRC". */
const CENSORED_READING = /^\s*(<|>|≤|≥|<=|>=)\s*(\d+(?:[.,]\d+)?)\s*(?:hrc)?\s*$/i;

interface RowData {
  row: number;
  values: Map<FieldName, { value: Value; origin: Origin }>;
  /** Fields whose cell could not be read (so the schema's "is required" is not repeated). */
  failed: Set<FieldName>;
  readings: Reading[];
  failedReadings: boolean;
  hasChemistry: boolean;
  problems: ValidationProblem[];
}

function readField(field: FieldName, cell: RawCell, setup: Setup): CellResult<Value> {
  switch (fieldKind(field)) {
    case 'text':
      return mapped(field, parseTextCell(cell), setup);
    case 'choice': {
      const text = mapped(field, parseTextCell(cell), setup);
      if (!text.ok || text.value === undefined) return text;
      const choices = CHOICE_FIELDS[field as keyof typeof CHOICE_FIELDS] as readonly string[];
      const word = normaliseChoice(text.value);
      if (choices.includes(word)) return { ok: true, value: word };
      return {
        ok: false,
        reason: `"${String(cell).trim()}" is not one of ${choices.join(', ')}${setup.layoutName ? ` (the layout "${setup.layoutName}" can translate the file's own words under "values")` : ''}`,
      };
    }
    case 'date':
      return parseDateCell(cell, setup.datePattern, setup.allowSerialDates);
    case 'number': {
      const n = parseNumberCell(cell, setup.numberFormat);
      // A grain size may be stated as a range, a bound or a word ("5-8", "≥5", "fine"): kept as written.
      if (!n.ok && field === 'grain_size' && typeof cell === 'string') {
        try {
          parseGrainSize(cell);
          return { ok: true, value: cell.trim() };
        } catch (error) {
          return { ok: false, reason: (error as Error).message };
        }
      }
      return n;
    }
    case 'chemistry':
      return parseChemistryCell(cell, setup.numberFormat, setup.belowDetection);
  }
}

function mapped(field: FieldName, result: CellResult<string>, setup: Setup): CellResult<string> {
  if (!result.ok || result.value === undefined) return result;
  const map = setup.valueMaps.get(field);
  const ours = map?.get(normaliseHeader(result.value));
  return ours === undefined ? result : { ok: true, value: ours };
}

function readRow(raw: RawRow, setup: Setup, warnings: ValidationProblem[]): RowData {
  const data: RowData = { row: raw.row, values: new Map(), failed: new Set(), readings: [], failedReadings: false, hasChemistry: false, problems: [] };
  for (const column of setup.columns) {
    const cell = raw.cells[column.index];
    if (column.role.kind === 'ignored') {
      if (column.header === '' && !isBlankCell(cell)) {
        // A value under an empty header is most likely a shifted row.
        warnings.push({ row: raw.row, path: '', message: `row ${raw.row}: column ${column.index + 1} has no header; its value ${JSON.stringify(showCell(cell))} was ignored` });
      }
      continue;
    }
    if (column.role.kind === 'distance') {
      if (isBlankCell(cell)) continue;
      const origin: Origin = { row: raw.row, column: column.header, raw: cell };
      const off = typeof cell === 'string' ? CENSORED_READING.exec(cell) : null;
      if (off) {
        const bound = parseNumberCell(off[2], setup.numberFormat);
        if (bound.ok && bound.value !== undefined) {
          data.readings.push({ position: column.role.position, hrc: bound.value, censored: off[1].startsWith('<') || off[1] === '≤' ? 'below' : 'above', origin });
        } else {
          data.problems.push(problem(origin, 'hrc', bound.ok ? 'an off-scale reading needs its bound, e.g. "<20"' : bound.reason));
          data.failedReadings = true;
        }
        continue;
      }
      const read = parseNumberCell(cell, setup.numberFormat);
      if (!read.ok) {
        data.problems.push(problem(origin, 'hrc', read.reason));
        data.failedReadings = true;
      } else if (read.value !== undefined) data.readings.push({ position: column.role.position, hrc: read.value, origin });
      continue;
    }
    const field = column.role.field;
    const kind = fieldKind(field);
    if (kind === 'chemistry' && !isBlankCell(cell)) data.hasChemistry = true;
    const read = readField(field, cell, setup);
    if (read.ok && read.value === undefined) continue;
    const origin: Origin = { row: raw.row, column: column.header, raw: cell };
    if (!read.ok) {
      data.problems.push(problem(origin, field, read.reason));
      data.failed.add(field);
      continue;
    }
    if (read.note) warnings.push({ row: raw.row, column: column.header, path: field, message: `${place(origin)}: ${read.note}` });
    if (read.value !== undefined) data.values.set(field, { value: read.value, origin });
  }
  for (const [field, value] of setup.defaults) {
    if (!data.values.has(field) && !data.failed.has(field)) data.values.set(field, { value, origin: { row: raw.row, defaultOf: field, raw: value } });
  }
  return data;
}

// ---------------------------------------------------------------------------------------------
// Building canonical records, remembering which cell supplied each value

/** Canonical path -> where its value came from. */
type Provenance = Map<string, Origin>;
// Builders take a Provenance only when a record has failed the schema and its issues need placing
// (recording every path for every valid record would cost more than the rest of the parse).

const CERTIFICATE_FIELDS: Array<[FieldName, string]> = [
  ['mill', 'mill'],
  ['grade', 'grade'],
  ['heat_number', 'heatNumber'],
  ['cast_date', 'castDate'],
  ['certificate_number', 'certificateNumber'],
  ['certificate_date', 'certificateDate'],
  ['grain_size', 'grainSize'],
];
const LOT_FIELDS: Array<[FieldName, string]> = [
  ['lot_number', 'lotNumber'],
  ['received_date', 'receivedDate'],
  ['mass_kg', 'massKg'],
  ['bar_diameter_mm', 'barDiameterMm'],
  ['purchase_order', 'purchaseOrder'],
];
const TEST_FIELDS: Array<[FieldName, string]> = [
  ['source', 'source'],
  ['lot_number', 'lotNumber'],
  ['test_date', 'testDate'],
  ['austenitizing_c', 'austenitizingC'],
  ['basis', 'basis'],
  ['laboratory', 'laboratory'],
];
const CANONICAL_ELEMENTS = new Set<string>(ELEMENTS);

function chemistryPath(field: ChemistryField): string {
  return CANONICAL_ELEMENTS.has(field) ? `chemistry.${field}` : `chemistry.other.${field}`;
}

/** Paths whose cell failed to read: the schema's complaint about them would repeat the first problem. */
function failedPaths(row: RowData, prefix: string, fields: Array<[FieldName, string]>, into: Set<string>): void {
  for (const [field, path] of fields) if (row.failed.has(field)) into.add(prefix + path);
}

function hasTestContent(row: RowData): boolean {
  return row.readings.length > 0 || row.failedReadings || row.values.has('test_date') || row.values.has('austenitizing_c') || row.values.has('laboratory');
}

function buildTest(row: RowData, prefix: string, provenance: Provenance | null, failed: Set<string>): { test: Record<string, unknown>; problems: ValidationProblem[] } {
  const problems: ValidationProblem[] = [];
  const test: Record<string, unknown> = {};
  for (const [field, path] of TEST_FIELDS) {
    const v = row.values.get(field);
    if (v) {
      test[path] = v.value;
      provenance?.set(prefix + path, v.origin);
    }
  }
  failedPaths(row, prefix, TEST_FIELDS, failed);
  let readings = row.readings;
  const systems = new Set(readings.map((r) => r.position.system));
  if (systems.size > 1) {
    const firstSystem = readings[0].position.system;
    const other = readings.find((r) => r.position.system !== firstSystem) as Reading;
    problems.push(
      problem(
        other.origin,
        `${prefix}readings`,
        `this row has readings in both mm and sixteenths columns (also "${readings[0].origin.column}"); one test is written in one unit`,
      ),
    );
    readings = readings.filter((r) => r.position.system === firstSystem);
  }
  if (row.failedReadings) failed.add(`${prefix}readings`);
  const system: DistanceSystem | undefined = readings[0]?.position.system;
  test.distanceSystem = system ?? 'mm';
  test.readings = readings.map((r) => (r.censored ? { at: r.position.at, hrc: r.hrc, censored: r.censored } : { at: r.position.at, hrc: r.hrc }));
  if (provenance) {
    provenance.set(`${prefix}distanceSystem`, { row: row.row, raw: undefined });
    readings.forEach((r, j) => {
      provenance.set(`${prefix}readings.${j}.hrc`, r.origin);
      provenance.set(`${prefix}readings.${j}.at`, r.origin);
    });
    provenance.set(`${prefix}readings`, { row: row.row, raw: undefined });
  }
  return { test, problems };
}

function buildLot(row: RowData, prefix: string, provenance: Provenance | null, failed: Set<string>): { lot?: Record<string, unknown>; problems: ValidationProblem[] } {
  const lotNumber = row.values.get('lot_number');
  failedPaths(row, prefix, LOT_FIELDS, failed);
  if (!lotNumber) {
    const stray = LOT_FIELDS.map(([f]) => row.values.get(f)).find((v) => v && v.origin.defaultOf === undefined);
    if (stray && !row.failed.has('lot_number')) return { problems: [problem(stray.origin, 'lot_number', 'lot details are given but lot_number is empty')] };
    return { problems: [] };
  }
  const lot: Record<string, unknown> = {};
  for (const [field, path] of LOT_FIELDS) {
    const v = row.values.get(field);
    if (v) {
      lot[path] = v.value;
      provenance?.set(prefix + path, v.origin);
    }
  }
  return { lot, problems: [] };
}

function disagreement(field: FieldName, first: { value: Value; origin: Origin }, later: { value: Value; origin: Origin }, what: string): ValidationProblem {
  return problem(
    later.origin,
    field,
    `${showCell(later.origin.raw)} disagrees with ${showCell(first.origin.raw)} given for the same ${what} on row ${first.origin.row}`,
  );
}

function buildCertificate(rows: RowData[], schema: ReturnType<typeof certificateSchema>, key: string, setup: Setup): ParsedItem {
  const { record, problems } = composeCertificate(rows, null);
  const parsed = schema.safeParse(record);
  if (!parsed.success) {
    const provenance: Provenance = new Map();
    const { failed } = composeCertificate(rows, provenance);
    const firstChemistryRow = rows.find((r) => r.hasChemistry) ?? rows[0];
    problems.push(...issuesToProblems(parsed.error, provenance, failed, firstChemistryRow.row, 'certificate', setup));
  }
  return {
    kind: 'certificate',
    rows: rows.map((r) => r.row),
    key,
    ...(problems.length === 0 && parsed.success ? { certificate: parsed.data } : {}),
    problems: sortProblems(problems),
  };
}

function composeCertificate(rows: RowData[], provenance: Provenance | null): { record: Record<string, unknown>; problems: ValidationProblem[]; failed: Set<string> } {
  const problems: ValidationProblem[] = rows.flatMap((r) => r.problems);
  const failed = new Set<string>();
  const certificate: Record<string, unknown> = {};
  const chemistry: Record<string, unknown> = {};
  const other: Record<string, number> = {};

  // Certificate fields and chemistry: the first value given wins; a different later value is a problem.
  const chosen = new Map<FieldName, { value: Value; origin: Origin }>();
  for (const row of rows) {
    for (const [field, v] of row.values) {
      const kind = fieldKind(field);
      const isCertificateField = kind === 'chemistry' || CERTIFICATE_FIELDS.some(([f]) => f === field);
      if (!isCertificateField) continue;
      const first = chosen.get(field);
      if (!first) chosen.set(field, v);
      else if (first.value !== v.value) problems.push(disagreement(field, first, v, 'heat'));
    }
  }
  for (const [field, path] of CERTIFICATE_FIELDS) {
    const v = chosen.get(field);
    if (v) {
      certificate[path] = v.value;
      provenance?.set(path, v.origin);
    } else if (rows.some((r) => r.failed.has(field))) failed.add(path);
  }
  const firstChemistryRow = rows.find((r) => r.hasChemistry) ?? rows[0];
  for (const [field, v] of chosen) {
    if (fieldKind(field) !== 'chemistry') continue;
    const path = chemistryPath(field as ChemistryField);
    if (CANONICAL_ELEMENTS.has(field)) chemistry[field] = v.value;
    else other[field] = v.value as number;
    provenance?.set(path, v.origin);
  }
  for (const row of rows) for (const f of row.failed) if (fieldKind(f) === 'chemistry' && !chosen.has(f)) failed.add(chemistryPath(f as ChemistryField));
  if (Object.keys(other).length) chemistry.other = other;
  certificate.chemistry = chemistry;
  provenance?.set('chemistry', { row: firstChemistryRow.row, raw: undefined });

  // Lots, merged by lot number; their details must agree too.
  const lots: Array<Record<string, unknown>> = [];
  const lotIndex = new Map<string, { index: number; values: Map<FieldName, { value: Value; origin: Origin }> }>();
  for (const row of rows) {
    const lotNumber = row.values.get('lot_number');
    if (!lotNumber) {
      problems.push(...buildLot(row, 'lots.?.', provenance, failed).problems);
      continue;
    }
    let entry = lotIndex.get(String(lotNumber.value));
    if (!entry) {
      entry = { index: lots.length, values: new Map() };
      lotIndex.set(String(lotNumber.value), entry);
      lots.push({});
    }
    const lot = lots[entry.index];
    const prefix = `lots.${entry.index}.`;
    for (const [field, path] of LOT_FIELDS) {
      const v = row.values.get(field);
      if (!v) {
        if (row.failed.has(field)) failed.add(prefix + path);
        continue;
      }
      const first = entry.values.get(field);
      if (!first) {
        entry.values.set(field, v);
        lot[path] = v.value;
        provenance?.set(prefix + path, v.origin);
      } else if (first.value !== v.value) problems.push(disagreement(field, first, v, `lot ${lotNumber.value}`));
    }
  }
  certificate.lots = lots;

  // One test per row that carries one.
  const tests: Array<Record<string, unknown>> = [];
  for (const row of rows) {
    if (!hasTestContent(row)) continue;
    const prefix = `tests.${tests.length}.`;
    const built = buildTest(row, prefix, provenance, failed);
    problems.push(...built.problems);
    provenance?.set(`tests.${tests.length}`, { row: row.row, raw: undefined });
    tests.push(built.test);
  }
  certificate.tests = tests;

  return { record: certificate, problems, failed };
}

function buildTestItem(row: RowData, schema: ReturnType<typeof testRecordSchema>, key: string, setup: Setup): ParsedItem {
  const { record, problems } = composeTestRecord(row, null);
  const parsed = schema.safeParse(record);
  if (!parsed.success) {
    const provenance: Provenance = new Map();
    const { failed } = composeTestRecord(row, provenance);
    problems.push(...issuesToProblems(parsed.error, provenance, failed, row.row, 'test', setup));
  }
  return {
    kind: 'test',
    rows: [row.row],
    key,
    ...(problems.length === 0 && parsed.success ? { testRecord: parsed.data } : {}),
    problems: sortProblems(problems),
  };
}

function composeTestRecord(row: RowData, provenance: Provenance | null): { record: Record<string, unknown>; problems: ValidationProblem[]; failed: Set<string> } {
  const problems = [...row.problems];
  const failed = new Set<string>();
  const record: Record<string, unknown> = {};
  for (const [field, path] of [
    ['mill', 'mill'],
    ['heat_number', 'heatNumber'],
  ] as Array<[FieldName, string]>) {
    const v = row.values.get(field);
    if (v) {
      record[path] = v.value;
      provenance?.set(path, v.origin);
    } else if (row.failed.has(field)) failed.add(path);
  }
  const lot = buildLot(row, 'lot.', provenance, failed);
  problems.push(...lot.problems);
  if (lot.lot) record.lot = lot.lot;
  const test = buildTest(row, 'test.', provenance, failed);
  problems.push(...test.problems);
  provenance?.set('test', { row: row.row, raw: undefined });
  record.test = test.test;
  return { record, problems, failed };
}

function sortProblems(problems: ValidationProblem[]): ValidationProblem[] {
  return problems.sort((a, b) => (a.row ?? 0) - (b.row ?? 0));
}

// ---------------------------------------------------------------------------------------------
// Schema issues -> plain words at the cell that supplied the value

interface Quantity {
  unit: string;
  above?: string;
}

function quantityOf(path: string): Quantity {
  if (path.endsWith('.hrc')) return { unit: ' HRC', above: 'beyond any steel' };
  if (path === 'chemistry.C') return { unit: ' %', above: 'which is cast iron, not steel' };
  if (path.startsWith('chemistry.')) return { unit: ' %' };
  if (path.endsWith('austenitizingC')) return { unit: ' °C', above: 'hotter than any austenitizing temperature for an end-quench test' };
  if (path.endsWith('massKg')) return { unit: ' kg' };
  if (path.endsWith('barDiameterMm')) return { unit: ' mm' };
  return { unit: '' };
}

/** Our field name for a canonical path, to name what is missing. */
function fieldOfPath(path: string): FieldName | undefined {
  const leaf = path.split('.').pop() as string;
  if (path.startsWith('chemistry.')) return leaf as FieldName;
  const all = [...CERTIFICATE_FIELDS, ...LOT_FIELDS, ...TEST_FIELDS];
  return all.find(([, p]) => p === leaf)?.[0];
}

function issuesToProblems(
  error: z.ZodError,
  provenance: Provenance,
  failed: Set<string>,
  itemRow: number,
  what: 'certificate' | 'test',
  setup: Setup,
): ValidationProblem[] {
  const out: ValidationProblem[] = [];
  for (const issue of error.issues) {
    const path = issue.path.map(String).join('.');
    if (failed.has(path) || (path.endsWith('.at') && failed.has(path.replace(/\.\d+\.at$/, '')))) continue;
    let origin = provenance.get(path);
    const value = origin ? origin.raw : undefined;
    if (!origin) {
      // Nothing supplied the value: point at the row, and at the field's column when the file has one.
      const row = nearestOrigin(provenance, path)?.row ?? itemRow;
      const field = fieldOfPath(path);
      const column = field ? setup.fieldColumn.get(field)?.header : undefined;
      origin = { row, column, raw: undefined };
    }
    out.push(problem(origin, path, describeIssue(issue, path, value, what)));
  }
  return out;
}

function nearestOrigin(provenance: Provenance, path: string): Origin | undefined {
  const parts = path.split('.');
  while (parts.length > 1) {
    parts.pop();
    const o = provenance.get(parts.join('.'));
    if (o) return { row: o.row, raw: undefined };
  }
  return undefined;
}

function describeIssue(issue: z.core.$ZodIssue, path: string, value: RawCell, what: 'certificate' | 'test'): string {
  const shown = value === undefined ? undefined : showCell(value).trim();
  if (path === 'test.source') {
    return 'this row has no chemistry, so it is read as a re-test, but its source is mill_certificate; a re-test is receiving_inspection or outside_lab (or give the chemistry)';
  }
  if (path.endsWith('readings') && issue.code === 'too_small') return 'the end-quench test has no hardness readings (every J column is empty)';
  switch (issue.code) {
    case 'too_big': {
      const q = quantityOf(path);
      return `${shown}${q.unit} is above ${String(issue.maximum)}${q.unit}${q.above ? `, ${q.above}` : ''}`;
    }
    case 'too_small': {
      const q = quantityOf(path);
      if (Number(issue.minimum) === 0) return issue.inclusive ? `${shown}${q.unit} is negative` : `${shown}${q.unit} must be greater than 0`;
      return `${shown}${q.unit} is below ${String(issue.minimum)}${q.unit}`;
    }
    case 'invalid_type':
      if (value === undefined) return `${fieldOfPath(path) ?? path} is empty, but a ${what === 'certificate' ? 'certificate' : 're-test'} needs it`;
      return `${shown} is not valid here (${issue.message})`;
    default:
      return shown === undefined || shown === '' || shown === '(empty)' ? issue.message : `${JSON.stringify(shown)} ${issue.message}`;
  }
}

// ---------------------------------------------------------------------------------------------
// Entry point

export async function parseCertificateTable(bytes: Uint8Array, options: TableParseOptions): Promise<TableParseResult> {
  const fileProblems: ValidationProblem[] = [];
  const warnings: ValidationProblem[] = [];
  const layout = options.layout;
  let table: RawTable;
  try {
    table =
      options.format === 'csv'
        ? readCsv(bytes, { delimiter: layout?.delimiter, encoding: layout?.encoding })
        : await readXlsx(bytes, { sheet: layout?.sheet });
  } catch (error) {
    // A workbook past a work limit is refused as a whole by the caller (HTTP 413/422 naming the limit).
    if (error instanceof TableReadError && !(error instanceof XlsxLimitError)) return { items: [], fileProblems: [fileProblem(error.message)], rowCount: 0, warnings };
    throw error;
  }
  for (const note of table.notes) warnings.push({ path: '', message: note });

  const headerRowNumber = layout?.headerRow ?? 1;
  const headerRow = table.rows.find((r) => r.row === headerRowNumber);
  if (!headerRow || headerRow.cells.every((c) => isBlankCell(c))) {
    const message =
      table.rows.length === 0 ? 'the file holds no rows' : `row ${headerRowNumber} should hold the column headers, but it is empty`;
    return { items: [], fileProblems: [fileProblem(message)], rowCount: 0, warnings };
  }
  const dataRows = table.rows.filter((r) => r.row > headerRowNumber && !r.cells.every((c) => isBlankCell(c)));
  const setup = setUp(headerRow.cells, options, fileProblems, warnings);
  if (fileProblems.length) return { items: [], fileProblems, rowCount: dataRows.length, warnings };
  if (dataRows.length === 0) return { items: [], fileProblems: [fileProblem(`the file holds column headers (row ${headerRowNumber}) but no rows of data below them`)], rowCount: 0, warnings };

  const today = options.today ?? todayUtc;
  const todayValue = today();
  const items = assemble(dataRows, setup, () => todayValue, warnings);
  warnings.sort((a, b) => (a.row ?? 0) - (b.row ?? 0));
  return { items, fileProblems, rowCount: dataRows.length, warnings };
}

const RE_TEST_SOURCES = new Set(['receiving_inspection', 'outside_lab']);

/** Only what grouping needs, read before the full reading of each group. */
interface RowKey {
  raw: RawRow;
  key?: string;
  hasChemistry: boolean;
  reTest: boolean;
}

function keyOf(raw: RawRow, setup: Setup): RowKey {
  const UNREADABLE = Symbol('unreadable');
  const valueOf = (field: FieldName): Value | undefined | typeof UNREADABLE => {
    const column = setup.fieldColumn.get(field);
    const read = column ? readField(field, raw.cells[column.index], setup) : undefined;
    if (read && !read.ok) return UNREADABLE;
    return read?.value !== undefined ? read.value : setup.defaults.get(field);
  };
  const hasChemistry = setup.chemistryColumns.some((c) => !isBlankCell(raw.cells[c.index]));
  const mill = valueOf('mill');
  const heat = valueOf('heat_number');
  // A row without chemistry is a re-test when its source says so; when its source cannot be read it
  // stands alone too, so its problem does not spoil the heat's certificate.
  const source = valueOf('source');
  const reTest = !hasChemistry && (source === UNREADABLE || RE_TEST_SOURCES.has(String(source)));
  if (mill === UNREADABLE || heat === UNREADABLE) return { raw, hasChemistry, reTest };
  return { raw, key: mill === undefined || heat === undefined ? undefined : heatKey(String(mill), String(heat)), hasChemistry, reTest };
}

/**
 * Groups rows by heat, then reads each group fully and builds its items. Rows are read group by
 * group so the intermediate objects die young (a 100,000-row file stays quick).
 */
function assemble(dataRows: RawRow[], setup: Setup, today: () => string, warnings: ValidationProblem[]): Array<ParsedItem> {
  const certSchema = certificateSchema(today);
  const testSchema = testRecordSchema(today);
  const items: Array<{ first: number; item: ParsedItem }> = [];
  const groups = new Map<string, RowKey[]>();
  for (const raw of dataRows) {
    const k = keyOf(raw, setup);
    if (k.key === undefined) {
      // Without mill and heat number the row cannot be grouped: it stands alone.
      const row = readRow(raw, setup, warnings);
      const lone = row.hasChemistry ? buildCertificate([row], certSchema, `row ${row.row}`, setup) : buildTestItem(row, testSchema, `row ${row.row}`, setup);
      items.push({ first: row.row, item: lone });
      continue;
    }
    const group = groups.get(k.key);
    if (group) group.push(k);
    else groups.set(k.key, [k]);
  }
  for (const [key, group] of groups) {
    const certificateRows = group.filter((r) => !r.reTest);
    const reTests = group.filter((r) => r.reTest);
    if (certificateRows.some((r) => r.hasChemistry)) {
      const rows = certificateRows.map((r) => readRow(r.raw, setup, warnings));
      items.push({ first: rows[0].row, item: buildCertificate(rows, certSchema, key, setup) });
    } else {
      reTests.push(...certificateRows);
    }
    for (const r of reTests) items.push({ first: r.raw.row, item: buildTestItem(readRow(r.raw, setup, warnings), testSchema, key, setup) });
  }
  return items.sort((a, b) => a.first - b.first).map((x) => x.item);
}
