// The import pipeline: archive the document, parse, validate, plan, then write everything in one
// transaction (or nothing). The archived document and its per-row outcome are kept whatever happens.
import { sql } from 'drizzle-orm';
import type { Db, Executor } from '../db/connection.ts';
import { jsonbText, rowsOf } from '../db/connection.ts';
import { applyPlan, planStore, type ApplyResult, type CertificatePlanItem, type StorePlan } from '../db/certificateStore.ts';
import {
  certificateSchema,
  problemsFromZod,
  testRecordSchema,
  type CertificateInput,
  type TestRecordInput,
  type ValidationProblem,
} from './certificateSchema.ts';
import { prepareCertificate, prepareTestRecord, sha256, type FieldDifference } from './prepare.ts';
import { loadMillLayout, type MillLayout } from './millLayout.ts';
import { previewTableHeaders, type HeaderMapping } from './headerRecognition.ts';
import type { DistanceSystem } from './certificateSchema.ts';
import { XlsxLimitError } from './xlsxReader.ts';

export type ImportFormat = 'json' | 'csv' | 'xlsx';

export interface ImportOptions {
  /** Validate and plan only; write nothing but the archive. */
  dryRun?: boolean;
  /** Write the valid items and report the rest (default: any problem rejects the whole document). */
  acceptValid?: boolean;
  /** Create unknown mills and grades. */
  createMissing?: boolean;
  /** Store changed certificates as new revisions instead of refusing them. */
  revise?: boolean;
  /** Refuse items of any other mill (set for mill-scoped callers). */
  onlyMill?: string;
}

export interface ImportRequest {
  bytes: Uint8Array;
  format: ImportFormat;
  filename?: string;
  layout?: MillLayout;
  /** A table without a layout: the mill code for a file with no mill column (header recognition, src/ingest/headerRecognition.ts). */
  millCode?: string;
  /** A table without a layout: the unit of whole-number J headers when their set does not say it. */
  distanceUnit?: DistanceSystem;
  options?: ImportOptions;
  createdBy?: string;
  today?: () => string;
  onProgress?: (stage: 'parse' | 'store', done: number, total: number) => void;
  /** Runs inside the data transaction after the rows are written (alert rules). */
  afterWrite?: (tx: Executor, written: ApplyResult) => Promise<void>;
}

export type ItemStatus = 'created' | 'unchanged' | 'revised' | 'added' | 'conflict' | 'invalid' | 'rejected' | 'forbidden' | 'not_written';

export interface ItemOutcome {
  key: string;
  kind: 'certificate' | 'test';
  rows?: number[];
  status: ItemStatus;
  heatId?: number;
  revision?: number;
  problems: ValidationProblem[];
  differences?: FieldDifference[];
}

export type ImportStatus = 'accepted' | 'partially_accepted' | 'rejected' | 'validated' | 'duplicate' | 'failed';

export interface ImportReport {
  importId: number;
  status: ImportStatus;
  /** The earlier import of the same bytes, when status is duplicate. */
  duplicateOf?: number;
  /** The work limit the document passed, when it was refused for one (413 for sizes, 422 for counts). */
  limit?: { name: string; value: number; status: 413 | 422 };
  summary: {
    items: number;
    valid: number;
    invalid: number;
    created: number;
    unchanged: number;
    revised: number;
    conflicts: number;
    testsAdded: number;
    readingsAdded: number;
  };
  problems: ValidationProblem[];
  items: ItemOutcome[];
  /** A table read without a layout: which column became what, what was ignored, what is missing. */
  mapping?: HeaderMapping;
  /** Dry runs: whether an import of the same file would write anything, in words. */
  dryRun?: { wouldWrite: number; message: string };
}

interface ParsedDocument {
  certificates: Array<{ key: string; rows?: number[]; value?: CertificateInput; problems: ValidationProblem[] }>;
  tests: Array<{ key: string; rows?: number[]; value?: TestRecordInput; problems: ValidationProblem[] }>;
  fileProblems: ValidationProblem[];
}

/** Rows per INSERT batch inside the one transaction: bounds statement size and gives progress. */
const STORE_CHUNK = 5000;

export class ImportError extends Error {
  constructor(
    message: string,
    readonly code: string,
  ) {
    super(message);
  }
}

export async function runImport(db: Db, request: ImportRequest): Promise<ImportReport> {
  // A table without a layout: recognise the mill's own header names; when they are not our own
  // layout's, the recognised mapping is used as the layout (and archived with the document).
  let mapping: HeaderMapping | undefined;
  if (request.format !== 'json' && !request.layout) {
    try {
      mapping = await previewTableHeaders(request.bytes, request.format, { millCode: request.millCode, distanceUnit: request.distanceUnit });
    } catch {
      mapping = undefined; // unreadable: the parser says why
    }
    if (mapping && !mapping.ownLayout && mapping.layout) {
      try {
        request = { ...request, layout: loadMillLayout(mapping.layout) };
      } catch {
        // not usable as a layout: the parser reports against our own layout
      }
    }
  }
  const report = await importDocument(db, request);
  if (mapping) report.mapping = mapping;
  if (request.options?.dryRun) report.dryRun = dryRunVerdict(report, Boolean(request.options.acceptValid));
  return report;
}

/** What an import of the same file would do, from a dry run's item statuses (the same rule as the real import). */
export function dryRunVerdict(report: ImportReport, acceptValid: boolean): { wouldWrite: number; message: string } {
  const s = report.summary;
  const clean = s.invalid === 0 && report.problems.length === 0;
  const forbidden = report.items.some((i) => i.status === 'forbidden');
  const writes = report.items.filter((i) => i.status === 'created' || i.status === 'revised' || i.status === 'added').length;
  if (report.status === 'duplicate') return { wouldWrite: 0, message: `Dry run: nothing was written, and an import would write nothing either: this document was already imported (import ${report.duplicateOf}).` };
  if (report.status !== 'validated') return { wouldWrite: 0, message: `Dry run: nothing was written, and an import would write nothing either: ${report.problems[0]?.message ?? 'the file was refused'}.` };
  let why: string | undefined;
  if (s.items === 0) why = report.problems.length ? `no row could be read (${report.problems.length} problem(s) with the file as a whole, listed below)` : 'the file holds no rows to import';
  else if (forbidden) why = 'it holds another mill\'s heats';
  else if (!clean && !acceptValid) why = `${s.invalid} item(s) have problems and any problem rejects the whole file (accept-valid writes the valid ones)`;
  else if (writes === 0) why = `every one of its ${s.items} item(s) is already on file unchanged`;
  if (why) return { wouldWrite: 0, message: `Dry run: nothing was written, and an import of this file would write nothing either: ${why}.` };
  return { wouldWrite: writes, message: `Dry run: nothing was written. An import would write ${writes} item(s) (${s.created} new heat(s), ${s.revised} revised, ${report.items.filter((i) => i.status === 'added').length} re-test(s)); ${s.unchanged} unchanged${s.invalid ? `, ${s.invalid} with problems left out` : ''}.` };
}

async function importDocument(db: Db, request: ImportRequest): Promise<ImportReport> {
  const options = request.options ?? {};
  const digest = sha256(request.bytes);
  const [archived] = rowsOf<{ id: number }>(
    await db.execute(sql`
      insert into imports (filename, format, sha256, size_bytes, content, mill_layout, options, created_by)
      values (${request.filename ?? null}, ${request.format}, ${digest}, ${request.bytes.byteLength},
        ${sql.param(Buffer.from(request.bytes))}, ${request.layout ? JSON.stringify(request.layout) : null}::jsonb,
        ${JSON.stringify(options)}::jsonb, ${request.createdBy ?? null})
      returning id`),
  );
  const importId = archived.id;

  // A mill-scoped caller hears only of its own mill's earlier imports: another mill's document is read
  // and refused like any other, so the answer says nothing of what that mill sent.
  const [earlier] = rowsOf<{ id: number }>(
    await db.execute(sql`
      select id from imports where sha256 = ${digest} and id <> ${importId}
        and status = 'accepted'
        ${options.onlyMill === undefined ? sql`` : sql`and options->>'onlyMill' = ${options.onlyMill}`}
      order by id limit 1`),
  );
  if (earlier) {
    const report = emptyReport(importId, 'duplicate');
    report.duplicateOf = earlier.id;
    report.problems.push({ path: '', message: `this document was already imported (import ${earlier.id}); nothing was written` });
    await finish(db, report);
    return report;
  }

  let parsed: ParsedDocument;
  try {
    parsed = await parseDocument(request);
  } catch (error) {
    const report = emptyReport(importId, 'rejected');
    report.problems.push({ path: '', message: `the file could not be read: ${(error as Error).message}` });
    if (error instanceof XlsxLimitError) report.limit = { name: error.limit, value: error.value, status: error.status };
    await finish(db, report);
    return report;
  }
  request.onProgress?.('parse', 1, 1);

  const validCertificates = parsed.certificates.filter((c) => c.value).map((c) => prepareCertificate(c.value!));
  const validTests = parsed.tests.filter((t) => t.value).map((t) => prepareTestRecord(t.value!));

  let report: ImportReport;
  try {
    report = await db.transaction(async (tx) => {
      // Imports of the same mill take turns (one advisory lock per mill, taken in name order so two
      // imports never wait on each other crosswise): the second plans against what the first
      // committed instead of colliding on unique keys. Per mill, not per heat: a lock per heat of a
      // 20,000-heat file would overflow PostgreSQL's lock table.
      const mills = [...new Set([...validCertificates.map((c) => c.mill), ...validTests.map((t) => t.mill)])].sort();
      if (mills.length) await tx.execute(sql`select pg_advisory_xact_lock(hashtext('import:' || m)) from (select m from unnest(${sql.param(mills)}::text[]) as m order by m) as ordered`);
      const plan = await planStore(tx, validCertificates, validTests, {
        revise: Boolean(options.revise),
        // A mill-scoped caller may not add mills or grades to the buyer's catalogue.
        createMissing: Boolean(options.createMissing) && options.onlyMill === undefined,
        onlyMill: options.onlyMill,
      });
      const outcome = describe(importId, parsed, plan);
      const clean = outcome.summary.invalid === 0 && outcome.problems.length === 0;
      // Another mill's data rejects the whole document, whatever acceptValid says.
      const forbidden = outcome.items.some((i) => i.status === 'forbidden');
      if (options.dryRun) {
        // In a dry run the item statuses say what an import would do.
        outcome.status = 'validated';
      } else if (forbidden || (!clean && !options.acceptValid) || outcome.summary.valid === 0) {
        outcome.status = 'rejected';
        markNotWritten(outcome);
      } else {
        const written = await applyInChunks(tx, plan, importId, request.onProgress);
        await request.afterWrite?.(tx, written);
        outcome.status = clean ? 'accepted' : 'partially_accepted';
        outcome.summary.testsAdded = written.testsCreated;
        outcome.summary.readingsAdded = written.readingsCreated;
        for (const item of outcome.items) item.heatId ??= written.heatIds.get(item.key);
        // The archive row changes state in the same transaction as the data: both or neither.
        await finish(tx, outcome);
      }
      return outcome;
    });
  } catch (error) {
    // Nothing was written; the archive keeps the document and says why.
    const failed = emptyReport(importId, 'failed');
    failed.problems.push({ path: '', message: `the import stopped: ${(error as Error).message}` });
    await finish(db, failed).catch(() => {});
    throw error;
  }
  if (report.status !== 'accepted' && report.status !== 'partially_accepted') await finish(db, report);
  return report;
}

async function applyInChunks(
  tx: Executor,
  plan: StorePlan,
  importId: number,
  onProgress: ImportRequest['onProgress'],
): Promise<ApplyResult> {
  const total = plan.certificates.length + plan.tests.length;
  const sum: ApplyResult = { heatsCreated: 0, certificatesWritten: 0, lotsCreated: 0, testsCreated: 0, readingsCreated: 0, heatIds: new Map() };
  // Certificates first, so re-tests of heats created by this batch find them.
  const chunks: StorePlan[] = [];
  for (let i = 0; i < plan.certificates.length; i += STORE_CHUNK) {
    chunks.push({ ...plan, certificates: plan.certificates.slice(i, i + STORE_CHUNK), tests: [] });
  }
  for (let i = 0; i < plan.tests.length; i += STORE_CHUNK) {
    chunks.push({ certificates: [], tests: plan.tests.slice(i, i + STORE_CHUNK), newMills: [], newGrades: [] });
  }
  let done = 0;
  for (const chunk of chunks) {
    if (chunk.tests.length) {
      chunk.tests = chunk.tests.map((t) => (t.heatId === null && sum.heatIds.has(t.record.key) ? { ...t, heatId: sum.heatIds.get(t.record.key)! } : t));
    }
    const r = await applyPlan(tx, chunk, importId);
    sum.heatsCreated += r.heatsCreated;
    sum.certificatesWritten += r.certificatesWritten;
    sum.lotsCreated += r.lotsCreated;
    sum.testsCreated += r.testsCreated;
    sum.readingsCreated += r.readingsCreated;
    for (const [k, v] of r.heatIds) sum.heatIds.set(k, v);
    done += chunk.certificates.length + chunk.tests.length;
    onProgress?.('store', done, total);
  }
  return sum;
}

async function parseDocument(request: ImportRequest): Promise<ParsedDocument> {
  if (request.format === 'json') return parseJsonDocument(request.bytes, request.today);
  const { parseCertificateTable } = await import('./tableParser.ts');
  const table = await parseCertificateTable(request.bytes, { format: request.format, layout: request.layout, today: request.today });
  return {
    certificates: table.items
      .filter((i) => i.kind === 'certificate')
      .map((i) => ({ key: i.key, rows: i.rows, value: i.problems.length ? undefined : i.certificate, problems: i.problems })),
    tests: table.items
      .filter((i) => i.kind === 'test')
      .map((i) => ({ key: i.key, rows: i.rows, value: i.problems.length ? undefined : i.testRecord, problems: i.problems })),
    fileProblems: table.fileProblems,
  };
}

/**
 * JSON documents: one certificate, an array of certificates, or
 * { certificates: [...], tests: [...] } where tests are re-tests of heats on file.
 */
export function parseJsonDocument(bytes: Uint8Array, today?: () => string): ParsedDocument {
  let body: unknown;
  try {
    body = JSON.parse(Buffer.from(bytes).toString('utf8'));
  } catch (error) {
    throw new ImportError(`not valid JSON (${(error as Error).message})`, 'invalid_json');
  }
  const container =
    body !== null && typeof body === 'object' && !Array.isArray(body) && ('certificates' in body || ('tests' in body && !('heatNumber' in body)));
  const certificates: unknown[] = container
    ? ((body as { certificates?: unknown[] }).certificates ?? [])
    : Array.isArray(body)
      ? body
      : [body];
  const tests: unknown[] = container ? ((body as { tests?: unknown[] }).tests ?? []) : [];
  const cSchema = certificateSchema(today);
  const tSchema = testRecordSchema(today);
  const keyOf = (raw: unknown, i: number, prefix: string) => {
    const r = raw as { mill?: unknown; heatNumber?: unknown };
    return typeof r?.mill === 'string' && typeof r?.heatNumber === 'string' ? `${r.mill}/${r.heatNumber}` : `${prefix}[${i}]`;
  };
  return {
    certificates: certificates.map((raw, i) => {
      const parsed = cSchema.safeParse(raw);
      const base = container || Array.isArray(body) ? `certificates[${i}].` : '';
      return parsed.success
        ? { key: keyOf(raw, i, 'certificates'), value: parsed.data, problems: [] }
        : { key: keyOf(raw, i, 'certificates'), problems: problemsFromZod(parsed.error).map((p) => ({ ...p, path: base + p.path })) };
    }),
    tests: tests.map((raw, i) => {
      const parsed = tSchema.safeParse(raw);
      return parsed.success
        ? { key: keyOf(raw, i, 'tests'), value: parsed.data, problems: [] }
        : { key: keyOf(raw, i, 'tests'), problems: problemsFromZod(parsed.error).map((p) => ({ ...p, path: `tests[${i}].${p.path}` })) };
    }),
    fileProblems: [],
  };
}

function emptyReport(importId: number, status: ImportStatus): ImportReport {
  return {
    importId,
    status,
    summary: { items: 0, valid: 0, invalid: 0, created: 0, unchanged: 0, revised: 0, conflicts: 0, testsAdded: 0, readingsAdded: 0 },
    problems: [],
    items: [],
  };
}

function certificateOutcome(item: CertificatePlanItem, rows?: number[]): ItemOutcome {
  const d = item.decision;
  const base = { key: item.certificate.key, kind: 'certificate' as const, rows, problems: [] as ValidationProblem[] };
  switch (d.action) {
    case 'create':
      return { ...base, status: 'created', revision: 1 };
    case 'unchanged':
      return { ...base, status: 'unchanged', heatId: d.heatId, revision: d.revision };
    case 'revise':
      return { ...base, status: 'revised', heatId: d.heatId, revision: d.revision, differences: d.differences };
    case 'conflict':
      return {
        ...base,
        status: 'conflict',
        heatId: d.heatId,
        revision: d.revision,
        differences: d.differences,
        problems: [
          {
            row: rows?.[0],
            path: '',
            message: `heat ${item.certificate.key} is on file with different content (${d.differences.map((x) => x.field).join(', ')}); send it as a revision to replace it`,
          },
        ],
      };
    case 'reject':
      return { ...base, status: 'rejected', problems: [{ row: rows?.[0], path: '', message: d.reason }] };
    case 'forbidden':
      return { ...base, status: 'forbidden', problems: [{ row: rows?.[0], path: '', message: d.reason }] };
  }
}

function describe(importId: number, parsed: ParsedDocument, plan: StorePlan): ImportReport {
  const report = emptyReport(importId, 'rejected');
  report.problems.push(...parsed.fileProblems);
  // Plan items come in the order of the valid parsed items: walked with an index, never copied or
  // shifted (Array.shift may move the whole array each time on a large file).
  let nextCertificate = 0;
  for (const c of parsed.certificates) {
    if (!c.value) {
      report.items.push({ key: c.key, kind: 'certificate', rows: c.rows, status: 'invalid', problems: c.problems });
      continue;
    }
    report.items.push(certificateOutcome(plan.certificates[nextCertificate++], c.rows));
  }
  let nextTest = 0;
  for (const t of parsed.tests) {
    if (!t.value) {
      report.items.push({ key: t.key, kind: 'test', rows: t.rows, status: 'invalid', problems: t.problems });
      continue;
    }
    const item = plan.tests[nextTest++];
    report.items.push(
      item.reject
        ? { key: t.key, kind: 'test', rows: t.rows, status: item.forbidden ? 'forbidden' : 'rejected', problems: [{ row: t.rows?.[0], path: '', message: item.reject }] }
        : { key: t.key, kind: 'test', rows: t.rows, status: 'added', heatId: item.heatId ?? undefined, problems: [] },
    );
  }
  const s = report.summary;
  s.items = report.items.length;
  for (const item of report.items) {
    if (item.status === 'invalid' || item.status === 'rejected' || item.status === 'forbidden' || item.status === 'conflict') s.invalid++;
    if (item.status === 'created') s.created++;
    if (item.status === 'unchanged') s.unchanged++;
    if (item.status === 'revised') s.revised++;
    if (item.status === 'conflict') s.conflicts++;
  }
  s.valid = s.items - s.invalid;
  return report;
}

function markNotWritten(report: ImportReport): void {
  for (const item of report.items) {
    if (item.status === 'created' || item.status === 'revised' || item.status === 'added') item.status = 'not_written';
  }
}

async function finish(ex: Executor, report: ImportReport): Promise<void> {
  await ex.execute(sql`
    update imports set status = ${report.status}, summary = ${jsonbText({ ...report.summary, duplicateOf: report.duplicateOf ?? null, limit: report.limit ?? null, problems: report.problems })}::jsonb,
      row_report = ${jsonbText(report.items)}::jsonb, finished_at = now()
    where id = ${report.importId}`);
}
