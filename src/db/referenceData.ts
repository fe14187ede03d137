// Mills, grades (with chemistry limits) and versioned bands.
import { and, asc, desc, eq, sql } from 'drizzle-orm';
import { rowsOf, type Db, type Executor } from './connection.ts';
import { bandPoints, bands, gradeChemistryLimits, grades, mills } from './schema.ts';

export interface MillInput {
  code: string;
  name: string;
  country?: string | null;
  notes?: string | null;
}

export async function listMills(db: Db) {
  return db.select().from(mills).orderBy(asc(mills.code));
}

export async function upsertMill(ex: Executor, mill: MillInput) {
  const [row] = await ex
    .insert(mills)
    .values({ code: mill.code, name: mill.name, country: mill.country ?? null, notes: mill.notes ?? null })
    .onConflictDoUpdate({ target: mills.code, set: { name: mill.name, country: mill.country ?? null, notes: mill.notes ?? null } })
    .returning();
  return row;
}

export interface ChemistryLimit {
  element: string;
  min: number | null;
  max: number | null;
}

export interface GradeInput {
  code: string;
  description?: string | null;
  distanceSystem: 'mm' | 'sixteenths';
  chemistryLimits: ChemistryLimit[];
}

export interface GradeView {
  id: number;
  code: string;
  description: string | null;
  distanceSystem: 'mm' | 'sixteenths';
  chemistryLimits: ChemistryLimit[];
}

export async function listGrades(db: Db): Promise<GradeView[]> {
  const rows = await db.select().from(grades).orderBy(asc(grades.code));
  const limits = await db.select().from(gradeChemistryLimits);
  return rows.map((g) => ({
    id: g.id,
    code: g.code,
    description: g.description,
    distanceSystem: g.distanceSystem as GradeView['distanceSystem'],
    chemistryLimits: limits
      .filter((l) => l.gradeId === g.id)
      .map((l) => ({ element: l.element, min: l.minPct, max: l.maxPct }))
      .sort((a, b) => a.element.localeCompare(b.element)),
  }));
}

export async function findGrade(db: Db, code: string): Promise<GradeView | null> {
  return (await listGrades(db)).find((g) => g.code === code) ?? null;
}

/** Creates a grade or replaces its description, distance system and chemistry limits. */
export async function upsertGrade(db: Db, grade: GradeInput): Promise<GradeView> {
  await db.transaction(async (tx) => {
    const [row] = await tx
      .insert(grades)
      .values({ code: grade.code, description: grade.description ?? null, distanceSystem: grade.distanceSystem })
      .onConflictDoUpdate({ target: grades.code, set: { description: grade.description ?? null, distanceSystem: grade.distanceSystem } })
      .returning();
    await tx.delete(gradeChemistryLimits).where(eq(gradeChemistryLimits.gradeId, row.id));
    if (grade.chemistryLimits.length) {
      await tx.insert(gradeChemistryLimits).values(
        grade.chemistryLimits.map((l) => ({ gradeId: row.id, element: l.element, minPct: l.min, maxPct: l.max })),
      );
    }
  });
  return (await findGrade(db, grade.code))!;
}

export interface BandPointInput {
  distanceMm: number;
  label: string;
  minHrc: number | null;
  maxHrc: number | null;
}

export interface BandInput {
  effectiveFrom: string;
  status: 'draft' | 'active' | 'retired';
  kind: 'standard' | 'restricted';
  /** Default 'astm_e29'. */
  rounding?: 'astm_e29' | 'as_reported';
  reason?: string | null;
  author?: string | null;
  points: BandPointInput[];
}

export interface BandView {
  id: number;
  grade: string;
  version: number;
  effectiveFrom: string;
  status: string;
  kind: string;
  rounding: string;
  reason: string | null;
  author: string | null;
  createdAt: string;
  points: BandPointInput[];
}

export async function listBands(db: Db, gradeCode: string): Promise<BandView[]> {
  const rows = await db
    .select({ band: bands, grade: grades.code })
    .from(bands)
    .innerJoin(grades, eq(grades.id, bands.gradeId))
    .where(eq(grades.code, gradeCode))
    .orderBy(desc(bands.version));
  if (rows.length === 0) return [];
  const points = rowsOf<{ band_id: number; distance_mm: number; label: string; min_hrc: number | null; max_hrc: number | null }>(
    await db.execute(sql`select * from band_points where band_id = any(${sql.param(rows.map((r) => r.band.id))}::int[]) order by distance_mm`),
  );
  return rows.map(({ band, grade }) => ({
    id: band.id,
    grade,
    version: band.version,
    effectiveFrom: band.effectiveFrom,
    status: band.status,
    kind: band.kind,
    rounding: band.rounding,
    reason: band.reason,
    author: band.author,
    createdAt: band.createdAt.toISOString(),
    points: points
      .filter((p) => p.band_id === band.id)
      .map((p) => ({ distanceMm: p.distance_mm, label: p.label, minHrc: p.min_hrc, maxHrc: p.max_hrc })),
  }));
}

/**
 * The band in force on a date: of the versions that are not drafts, the one with the latest effective
 * date not after it (a retired version still governs the dates before its successor took effect; the
 * same rule as src/hardenability/bands.ts bandInForce).
 */
export async function bandInForce(db: Db, gradeCode: string, onDate: string): Promise<BandView | null> {
  const candidates = (await listBands(db, gradeCode)).filter((b) => b.status !== 'draft' && b.effectiveFrom <= onDate);
  candidates.sort((a, b) => b.effectiveFrom.localeCompare(a.effectiveFrom) || b.version - a.version);
  return candidates[0] ?? null;
}

/** Adds the next version of a grade's band. */
export async function addBandVersion(db: Db, gradeCode: string, band: BandInput): Promise<BandView> {
  const id = await db.transaction(async (tx) => {
    const [grade] = await tx.select().from(grades).where(eq(grades.code, gradeCode)).for('update');
    if (!grade) throw new NotFoundError(`grade ${gradeCode} is not on file`);
    const [{ next }] = rowsOf<{ next: number }>(
      await tx.execute(sql`select coalesce(max(version), 0) + 1 as next from bands where grade_id = ${grade.id}`),
    );
    const [row] = await tx
      .insert(bands)
      .values({
        gradeId: grade.id,
        version: next,
        effectiveFrom: band.effectiveFrom,
        status: band.status,
        kind: band.kind,
        rounding: band.rounding ?? 'astm_e29',
        reason: band.reason ?? null,
        author: band.author ?? null,
      })
      .returning();
    await tx.insert(bandPoints).values(band.points.map((p) => ({ bandId: row.id, ...p })));
    return row.id;
  });
  return (await listBands(db, gradeCode)).find((b) => b.id === id)!;
}

export async function setBandStatus(db: Db, gradeCode: string, version: number, status: BandInput['status']) {
  const [grade] = await db.select().from(grades).where(eq(grades.code, gradeCode));
  if (!grade) throw new NotFoundError(`grade ${gradeCode} is not on file`);
  const updated = await db
    .update(bands)
    .set({ status })
    .where(and(eq(bands.gradeId, grade.id), eq(bands.version, version)))
    .returning();
  if (updated.length === 0) throw new NotFoundError(`grade ${gradeCode} has no band version ${version}`);
}

export class NotFoundError extends Error {}
