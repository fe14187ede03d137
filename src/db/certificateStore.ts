// Storing certificates and end-quench tests, set-based: every table is written with one INSERT over
// unnest()ed array parameters per batch, never row by row, so a 10^5-certificate file is a handful of
// statements. Planning (reads) is separate from applying (writes), so the caller can refuse a whole
// batch before anything is written.
import { sql, type SQL } from 'drizzle-orm';
import { rowsOf, type Executor } from './connection.ts';
import {
  diffDocuments,
  type CertificateDocument,
  type FieldDifference,
  type PreparedCertificate,
  type PreparedLot,
  type PreparedTest,
  type PreparedTestRecord,
} from '../ingest/prepare.ts';

export type CertificateDecision =
  | { action: 'create' }
  | { action: 'unchanged'; heatId: number; revision: number }
  | { action: 'revise'; heatId: number; revision: number; differences: FieldDifference[] }
  | { action: 'conflict'; heatId: number; revision: number; differences: FieldDifference[] }
  | { action: 'reject'; reason: string }
  /** The caller may not send this mill's data. */
  | { action: 'forbidden'; reason: string };

export interface CertificatePlanItem {
  certificate: PreparedCertificate;
  decision: CertificateDecision;
}

export interface TestPlanItem {
  record: PreparedTestRecord;
  /** Known heat, or null when the heat comes with a certificate of the same batch. */
  heatId: number | null;
  reject?: string;
  /** The caller may not send this mill's data. */
  forbidden?: boolean;
}

export interface StorePlan {
  certificates: CertificatePlanItem[];
  tests: TestPlanItem[];
  /** Codes the batch will create (only with createMissing). */
  newMills: string[];
  newGrades: string[];
}

export interface PlanOptions {
  /** Store a changed certificate as a new revision instead of refusing it. */
  revise: boolean;
  /** Create unknown mills and grades instead of refusing their certificates. */
  createMissing: boolean;
  /** Refuse every item of another mill (a caller limited to one mill). */
  onlyMill?: string;
}

const p = (value: unknown): SQL => sql`${sql.param(value)}`;

async function codeMap(ex: Executor, table: 'mills' | 'grades', codes: string[]): Promise<Map<string, number>> {
  if (codes.length === 0) return new Map();
  const rows = rowsOf<{ id: number; code: string }>(
    await ex.execute(sql`select id, code from ${sql.identifier(table)} where code = any(${p(codes)}::text[])`),
  );
  return new Map(rows.map((r) => [r.code, r.id]));
}

interface ExistingHeat {
  heat_id: number;
  mill_code: string;
  heat_number: string;
  revision: number;
  content_hash: string;
  document: CertificateDocument;
}

async function existingHeats(ex: Executor, keys: Array<{ mill: string; heatNumber: string }>): Promise<Map<string, ExistingHeat>> {
  if (keys.length === 0) return new Map();
  const rows = rowsOf<ExistingHeat>(
    await ex.execute(sql`
      select distinct on (h.id) h.id as heat_id, m.code as mill_code, h.heat_number, c.revision, c.content_hash, c.document
      from unnest(${p(keys.map((k) => k.mill))}::text[], ${p(keys.map((k) => k.heatNumber))}::text[]) as k(mill, heat_number)
      join mills m on m.code = k.mill
      join heats h on h.mill_id = m.id and h.heat_number = k.heat_number
      join certificates c on c.heat_id = h.id
      order by h.id, c.revision desc`),
  );
  return new Map(rows.map((r) => [`${r.mill_code}/${r.heat_number}`, r]));
}

/** Reads what is stored and decides, per item, what storing it would do. Writes nothing. */
export async function planStore(
  ex: Executor,
  certificates: PreparedCertificate[],
  testRecords: PreparedTestRecord[],
  options: PlanOptions,
): Promise<StorePlan> {
  const millCodes = [...new Set([...certificates.map((c) => c.mill), ...testRecords.map((t) => t.mill)])];
  const gradeCodes = [...new Set(certificates.map((c) => c.grade))];
  const mills = await codeMap(ex, 'mills', millCodes);
  const grades = await codeMap(ex, 'grades', gradeCodes);
  const heats = await existingHeats(ex, [
    ...certificates.map((c) => ({ mill: c.mill, heatNumber: c.heatNumber })),
    ...testRecords.map((t) => ({ mill: t.mill, heatNumber: t.heatNumber })),
  ]);

  const seenInBatch = new Map<string, PreparedCertificate>();
  const planned: CertificatePlanItem[] = certificates.map((certificate) => {
    const decide = (): CertificateDecision => {
      if (options.onlyMill !== undefined && certificate.mill !== options.onlyMill) {
        return { action: 'forbidden', reason: `this caller may only send data of mill ${options.onlyMill}, not of "${certificate.mill}"` };
      }
      if (!mills.has(certificate.mill) && !options.createMissing) {
        return { action: 'reject', reason: `mill "${certificate.mill}" is not on file (add it first, or import with create-missing)` };
      }
      if (!grades.has(certificate.grade) && !options.createMissing) {
        return { action: 'reject', reason: `grade "${certificate.grade}" is not on file (add it first, or import with create-missing)` };
      }
      const earlier = seenInBatch.get(certificate.key);
      if (earlier) {
        return earlier.contentHash === certificate.contentHash
          ? { action: 'reject', reason: `heat ${certificate.key} appears twice in this batch (identical; the first is used)` }
          : { action: 'reject', reason: `heat ${certificate.key} appears twice in this batch with different content` };
      }
      seenInBatch.set(certificate.key, certificate);
      const stored = heats.get(certificate.key);
      if (!stored) return { action: 'create' };
      if (stored.content_hash === certificate.contentHash) return { action: 'unchanged', heatId: stored.heat_id, revision: stored.revision };
      const differences = diffDocuments(stored.document, certificate.document);
      return options.revise
        ? { action: 'revise', heatId: stored.heat_id, revision: stored.revision + 1, differences }
        : { action: 'conflict', heatId: stored.heat_id, revision: stored.revision, differences };
    };
    return { certificate, decision: decide() };
  });

  const createdInBatch = new Set(planned.filter((c) => c.decision.action === 'create').map((c) => c.certificate.key));
  const tests: TestPlanItem[] = testRecords.map((record) => {
    if (options.onlyMill !== undefined && record.mill !== options.onlyMill) {
      return { record, heatId: null, forbidden: true, reject: `this caller may only send data of mill ${options.onlyMill}, not of "${record.mill}"` };
    }
    const stored = heats.get(record.key);
    if (stored) return { record, heatId: stored.heat_id };
    if (createdInBatch.has(record.key)) return { record, heatId: null };
    return { record, heatId: null, reject: `heat ${record.heatNumber} of mill "${record.mill}" is not on file; send its certificate first` };
  });

  const creating = planned.filter((c) => c.decision.action === 'create' || c.decision.action === 'revise');
  return {
    certificates: planned,
    tests,
    newMills: [...new Set(creating.map((c) => c.certificate.mill))].filter((m) => !mills.has(m)),
    newGrades: [...new Set(creating.map((c) => c.certificate.grade))].filter((g) => !grades.has(g)),
  };
}

export interface ApplyResult {
  heatsCreated: number;
  certificatesWritten: number;
  lotsCreated: number;
  testsCreated: number;
  readingsCreated: number;
  /** Heat id per heat key, for every item that was written or already stored. */
  heatIds: Map<string, number>;
}

/** Writes the items the plan accepts (create, revise, tests on known heats). Call inside a transaction. */
export async function applyPlan(ex: Executor, plan: StorePlan, importId: number | null): Promise<ApplyResult> {
  if (plan.newMills.length) {
    await ex.execute(sql`insert into mills (code, name) select c, c from unnest(${p(plan.newMills)}::text[]) as c on conflict (code) do nothing`);
  }
  if (plan.newGrades.length) {
    await ex.execute(sql`insert into grades (code) select c from unnest(${p(plan.newGrades)}::text[]) as c on conflict (code) do nothing`);
  }
  const toCreate = plan.certificates.filter((c) => c.decision.action === 'create').map((c) => c.certificate);
  const toRevise = plan.certificates.filter((c) => c.decision.action === 'revise');
  const heatIds = new Map<string, number>();
  for (const item of plan.certificates) {
    const d = item.decision;
    if (d.action === 'unchanged' || d.action === 'revise' || d.action === 'conflict') heatIds.set(item.certificate.key, d.heatId);
  }
  for (const t of plan.tests) if (t.heatId !== null) heatIds.set(t.record.key, t.heatId);

  let heatsCreated = 0;
  if (toCreate.length) {
    const rows = rowsOf<{ id: number; mill: string; heat_number: string }>(
      await ex.execute(sql`
        insert into heats (mill_id, heat_number, grade_id, cast_date)
        select m.id, k.heat_number, g.id, k.cast_date
        from unnest(${p(toCreate.map((c) => c.mill))}::text[], ${p(toCreate.map((c) => c.heatNumber))}::text[],
                    ${p(toCreate.map((c) => c.grade))}::text[], ${p(toCreate.map((c) => c.castDate))}::date[])
             as k(mill, heat_number, grade, cast_date)
        join mills m on m.code = k.mill
        join grades g on g.code = k.grade
        returning id, (select code from mills where id = mill_id) as mill, heat_number`),
    );
    for (const r of rows) heatIds.set(`${r.mill}/${r.heat_number}`, r.id);
    heatsCreated = rows.length;
  }
  if (toRevise.length) {
    // A revision may correct the grade or cast date: the heat row follows its newest certificate.
    const revised = toRevise.map((r) => r.certificate);
    await ex.execute(sql`
      update heats h set grade_id = g.id, cast_date = k.cast_date
      from unnest(${p(toRevise.map((r) => (r.decision as { heatId: number }).heatId))}::int[],
                  ${p(revised.map((c) => c.grade))}::text[], ${p(revised.map((c) => c.castDate))}::date[]) as k(heat_id, grade, cast_date)
      join grades g on g.code = k.grade
      where h.id = k.heat_id`);
  }

  const written = [
    ...toCreate.map((c) => ({ c, revision: 1 })),
    ...toRevise.map((r) => ({ c: r.certificate, revision: (r.decision as { revision: number }).revision })),
  ];
  const certificateIds = await insertCertificates(ex, written, heatIds, importId);

  const lots: Array<{ heatId: number; lot: PreparedLot }> = [];
  const tests: Array<{ heatId: number; certificateId: number | null; test: PreparedTest }> = [];
  for (const { c } of written) {
    const heatId = heatIds.get(c.key)!;
    for (const lot of c.lots) lots.push({ heatId, lot });
    for (const test of c.certificateTests) tests.push({ heatId, certificateId: certificateIds.get(c.key)!, test });
    for (const test of c.otherTests) tests.push({ heatId, certificateId: null, test });
  }
  // An unchanged certificate may still bring new lots and re-tests (they are additive).
  for (const item of plan.certificates) {
    if (item.decision.action !== 'unchanged') continue;
    const heatId = item.decision.heatId;
    for (const lot of item.certificate.lots) lots.push({ heatId, lot });
    for (const test of item.certificate.otherTests) tests.push({ heatId, certificateId: null, test });
  }
  for (const t of plan.tests) {
    if (t.reject) continue;
    const heatId = heatIds.get(t.record.key);
    if (heatId === undefined) continue;
    if (t.record.lot) lots.push({ heatId, lot: t.record.lot });
    tests.push({ heatId, certificateId: null, test: t.record.test });
  }
  const lotsCreated = await insertLots(ex, lots);
  const { testsCreated, readingsCreated } = await insertTests(ex, tests, importId);
  return { heatsCreated, certificatesWritten: written.length, lotsCreated, testsCreated, readingsCreated, heatIds };
}

async function insertCertificates(
  ex: Executor,
  items: Array<{ c: PreparedCertificate; revision: number }>,
  heatIds: Map<string, number>,
  importId: number | null,
): Promise<Map<string, number>> {
  const ids = new Map<string, number>();
  if (items.length === 0) return ids;
  const col = <T>(f: (c: PreparedCertificate) => T) => p(items.map(({ c }) => f(c)));
  const rows = rowsOf<{ id: number; heat_id: number }>(
    await ex.execute(sql`
      insert into certificates (heat_id, revision, certificate_number, certificate_date, grain_size, grain_size_stated,
        c, mn, si, p, s, cr, ni, mo, cu, v, al, b, ti, nb, n, other_elements, document, content_hash, import_id)
      select heat_id, revision, certificate_number, certificate_date, grain_size, grain_size_stated,
        c, mn, si, p, s, cr, ni, mo, cu, v, al, b, ti, nb, n, other_elements, document, content_hash, ${importId}::int
      from unnest(
        ${p(items.map(({ c }) => heatIds.get(c.key)))}::int[], ${p(items.map((i) => i.revision))}::int[],
        ${col((c) => c.certificateNumber)}::text[], ${col((c) => c.certificateDate)}::date[], ${col((c) => c.grainSize)}::float8[], ${col((c) => c.grainSizeStated)}::text[],
        ${col((c) => c.chemistry.c)}::float8[], ${col((c) => c.chemistry.mn)}::float8[], ${col((c) => c.chemistry.si)}::float8[],
        ${col((c) => c.chemistry.p)}::float8[], ${col((c) => c.chemistry.s)}::float8[], ${col((c) => c.chemistry.cr)}::float8[],
        ${col((c) => c.chemistry.ni)}::float8[], ${col((c) => c.chemistry.mo)}::float8[], ${col((c) => c.chemistry.cu)}::float8[],
        ${col((c) => c.chemistry.v)}::float8[], ${col((c) => c.chemistry.al)}::float8[], ${col((c) => c.chemistry.b)}::float8[],
        ${col((c) => c.chemistry.ti)}::float8[], ${col((c) => c.chemistry.nb)}::float8[], ${col((c) => c.chemistry.n)}::float8[],
        ${col((c) => JSON.stringify(c.otherElements))}::jsonb[], ${col((c) => JSON.stringify(c.document))}::jsonb[],
        ${col((c) => c.contentHash)}::text[]
      ) as k(heat_id, revision, certificate_number, certificate_date, grain_size, grain_size_stated,
        c, mn, si, p, s, cr, ni, mo, cu, v, al, b, ti, nb, n, other_elements, document, content_hash)
      returning id, heat_id`),
  );
  const keyByHeat = new Map(items.map(({ c }) => [heatIds.get(c.key)!, c.key]));
  for (const r of rows) ids.set(keyByHeat.get(r.heat_id)!, r.id);
  return ids;
}

async function insertLots(ex: Executor, lots: Array<{ heatId: number; lot: PreparedLot }>): Promise<number> {
  if (lots.length === 0) return 0;
  const col = <T>(f: (l: { heatId: number; lot: PreparedLot }) => T) => p(lots.map(f));
  const rows = rowsOf<{ id: number }>(
    await ex.execute(sql`
      insert into lots (heat_id, lot_number, received_date, mass_kg, bar_diameter_mm, purchase_order)
      select * from unnest(${col((l) => l.heatId)}::int[], ${col((l) => l.lot.lotNumber)}::text[],
        ${col((l) => l.lot.receivedDate)}::date[], ${col((l) => l.lot.massKg)}::float8[],
        ${col((l) => l.lot.barDiameterMm)}::float8[], ${col((l) => l.lot.purchaseOrder)}::text[])
      on conflict (heat_id, lot_number) do nothing
      returning id`),
  );
  return rows.length;
}

async function insertTests(
  ex: Executor,
  tests: Array<{ heatId: number; certificateId: number | null; test: PreparedTest }>,
  importId: number | null,
): Promise<{ testsCreated: number; readingsCreated: number }> {
  if (tests.length === 0) return { testsCreated: 0, readingsCreated: 0 };
  const col = <T>(f: (t: { heatId: number; certificateId: number | null; test: PreparedTest }) => T) => p(tests.map(f));
  const rows = rowsOf<{ id: number; heat_id: number; content_hash: string }>(
    await ex.execute(sql`
      insert into end_quench_tests (heat_id, lot_id, certificate_id, source, basis, test_date, austenitizing_c,
        distance_system, laboratory, content_hash, import_id)
      select k.heat_id, l.id, k.certificate_id, k.source, k.basis, k.test_date, k.austenitizing_c,
        k.distance_system, k.laboratory, k.content_hash, ${importId}::int
      from unnest(${col((t) => t.heatId)}::int[], ${col((t) => t.certificateId)}::int[], ${col((t) => t.test.lotNumber)}::text[],
        ${col((t) => t.test.source)}::text[], ${col((t) => t.test.basis)}::text[], ${col((t) => t.test.testDate)}::date[],
        ${col((t) => t.test.austenitizingC)}::float8[], ${col((t) => t.test.distanceSystem)}::text[],
        ${col((t) => t.test.laboratory)}::text[], ${col((t) => t.test.contentHash)}::text[])
        as k(heat_id, certificate_id, lot_number, source, basis, test_date, austenitizing_c, distance_system, laboratory, content_hash)
      left join lots l on l.heat_id = k.heat_id and l.lot_number = k.lot_number
      on conflict (heat_id, content_hash) do nothing
      returning id, heat_id, content_hash`),
  );
  if (rows.length === 0) return { testsCreated: 0, readingsCreated: 0 };
  const testByKey = new Map(tests.map((t) => [`${t.heatId}:${t.test.contentHash}`, t.test]));
  const testIds: number[] = [];
  const distances: number[] = [];
  const labels: string[] = [];
  const hrcs: number[] = [];
  const censored: Array<string | null> = [];
  for (const r of rows) {
    for (const reading of testByKey.get(`${r.heat_id}:${r.content_hash}`)!.readings) {
      testIds.push(Number(r.id));
      distances.push(reading.distanceMm);
      labels.push(reading.label);
      hrcs.push(reading.hrc);
      censored.push(reading.censored ?? null);
    }
  }
  await ex.execute(sql`
    insert into end_quench_readings (test_id, distance_mm, label, hrc, censored)
    select * from unnest(${p(testIds)}::bigint[], ${p(distances)}::float8[], ${p(labels)}::text[], ${p(hrcs)}::float8[], ${p(censored)}::text[])`);
  return { testsCreated: rows.length, readingsCreated: testIds.length };
}
