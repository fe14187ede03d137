// What an ingest touched, loaded once and shared by every statistical rule of the same ingest: the
// end-quench tests this transaction wrote, grouped by (mill, grade), each group's curves (all sources,
// history back to `historyDays` before its earliest new cast date, through the one series loader), the
// grade's band versions, and the frozen baselines of the series. The scope is kept per `written` object
// (the ingest hands the same object to every rule), so four rule families cost one load per group.
import type { Db, Executor } from '../../db/connection.ts';
import type { ApplyResult } from '../../db/certificateStore.ts';
import { testsWrittenInThisTransaction, type WrittenTest } from '../../db/alerts.ts';
import { loadCurves, type HeatCurve, type SeriesSource } from '../../db/series.ts';
import { listBands, type BandView } from '../../db/referenceData.ts';
import { listBaselines, type BaselineRecord } from '../../db/baselines.ts';
import { toBand } from '../../analysis/bandOf.ts';
import type { Band } from '../../hardenability/bands.ts';

export interface SeriesGroup {
  millId: number;
  mill: string;
  gradeId: number;
  grade: string;
  /** Curves of the group (every source), in time order, from `historyFrom` on. */
  curves: HeatCurve[];
  historyFrom: string;
  /** Tests of the group written by this ingest. */
  newTests: WrittenTest[];
  /** Band versions of the grade (every status). */
  bands: BandView[];
  /** Active frozen baselines, per source. */
  baselines: Map<SeriesSource, BaselineRecord[]>;
}

export interface IngestScope {
  tests: WrittenTest[];
  groups: SeriesGroup[];
}

const cache = new WeakMap<ApplyResult, Map<number, Promise<IngestScope>>>();

/** The scope of this ingest (memoised per `written` and history length). */
export function ingestScope(tx: Executor, written: ApplyResult, historyDays: number): Promise<IngestScope> {
  let byDays = cache.get(written);
  if (!byDays) cache.set(written, (byDays = new Map()));
  let scope = byDays.get(historyDays);
  if (!scope) {
    scope = loadScope(tx, written, historyDays);
    byDays.set(historyDays, scope);
  }
  return scope;
}

export function addDays(iso: string, days: number): string {
  const d = new Date(`${iso}T00:00:00Z`);
  d.setUTCDate(d.getUTCDate() + days);
  return d.toISOString().slice(0, 10);
}

async function loadScope(tx: Executor, written: ApplyResult, historyDays: number): Promise<IngestScope> {
  const tests = await testsWrittenInThisTransaction(tx, [...new Set(written.heatIds.values())]);
  const byGroup = new Map<string, WrittenTest[]>();
  for (const t of tests) {
    const key = `${t.millId}/${t.gradeId}`;
    const list = byGroup.get(key);
    if (list) list.push(t);
    else byGroup.set(key, [t]);
  }
  const bandsOf = new Map<string, BandView[]>();
  const groups: SeriesGroup[] = [];
  for (const newTests of byGroup.values()) {
    const { millId, mill, gradeId, grade } = newTests[0];
    const earliest = newTests.reduce((m, t) => (t.castDate < m ? t.castDate : m), newTests[0].castDate);
    const historyFrom = addDays(earliest, -historyDays);
    const curves = await loadCurves(tx, { grade, mill, from: historyFrom, source: 'both' });
    if (!bandsOf.has(grade)) bandsOf.set(grade, await listBands(tx as Db, grade));
    const baselines = new Map<SeriesSource, BaselineRecord[]>();
    for (const b of await listBaselines(tx, { grade, mill })) {
      const list = baselines.get(b.source);
      if (list) list.push(b);
      else baselines.set(b.source, [b]);
    }
    groups.push({ millId, mill, gradeId, grade, curves, historyFrom, newTests, bands: bandsOf.get(grade)!, baselines });
  }
  groups.sort((a, b) => a.mill.localeCompare(b.mill) || a.grade.localeCompare(b.grade));
  return { tests, groups };
}

/** The band in force on a date: the active version with the latest effective date not after it (as bandInForce). */
export function bandOnDate(bands: readonly BandView[], onDate: string): Band | null {
  let best: BandView | null = null;
  for (const b of bands) {
    // Drafts never govern; a retired version still does for the dates before its successor.
    if (b.status === 'draft' || b.effectiveFrom > onDate) continue;
    if (!best || b.effectiveFrom > best.effectiveFrom || (b.effectiveFrom === best.effectiveFrom && b.version > best.version)) best = b;
  }
  return best ? toBand(best) : null;
}

const SOURCES_OF: Record<SeriesSource, ReadonlyArray<HeatCurve['source']>> = {
  mill_certificate: ['mill_certificate'],
  receiving_inspection: ['receiving_inspection', 'outside_lab'],
  both: ['mill_certificate', 'receiving_inspection', 'outside_lab'],
};

/** The group's curves of a series source (the loader's meaning of the source). */
export function curvesOfSource(group: SeriesGroup, source: SeriesSource): HeatCurve[] {
  const wanted = SOURCES_OF[source];
  return group.curves.filter((c) => wanted.includes(c.source));
}

/** Heats with a test of this source written by the ingest: their points are the new ones. */
export function newHeatsOfSource(group: SeriesGroup, source: SeriesSource): Set<number> {
  const wanted = SOURCES_OF[source];
  return new Set(group.newTests.filter((t) => wanted.includes(t.source)).map((t) => t.heatId));
}

/** Lot of a heat's newest test written by the ingest (null for a certificate test of the heat itself). */
export function lotOf(group: SeriesGroup, heatId: number): number | null {
  let lot: number | null = null;
  for (const t of group.newTests) if (t.heatId === heatId && t.lotId !== null) lot = t.lotId;
  return lot;
}

/** Active baseline of a series at a distance, or null. */
export function baselineAt(group: SeriesGroup, source: SeriesSource, distanceMm: number): BaselineRecord | null {
  return group.baselines.get(source)?.find((b) => Math.abs(b.distanceMm - distanceMm) <= 1e-6) ?? null;
}

/**
 * The part of a time-ordered series a chart looks at: up to `maxReference` points just before the first
 * new point (the phase I reference, or the warm-up of EWMA and CUSUM with frozen limits), then every
 * point from the first new one on. Null when nothing is new.
 */
export interface ChartWindow<T> {
  points: T[];
  /** Leading points of `points` before the first new one. */
  referenceCount: number;
  /** Indices (into points) of the new points. */
  newIndices: number[];
}

export function chartWindow<T>(series: readonly T[], isNew: (p: T) => boolean, maxReference: number): ChartWindow<T> | null {
  const first = series.findIndex(isNew);
  if (first < 0) return null;
  const start = Math.max(0, first - maxReference);
  const points = series.slice(start);
  const newIndices: number[] = [];
  points.forEach((p, i) => {
    if (isNew(p)) newIndices.push(i);
  });
  return { points, referenceCount: first - start, newIndices };
}

/**
 * The whole time-ordered series with a reference that does not move with each import: the first
 * `maxReference` points of the series (fewer while the series is younger: the points before the first
 * new one), then everything after it. Null when nothing is new.
 */
export function fixedReferenceWindow<T>(series: readonly T[], isNew: (p: T) => boolean, maxReference: number): ChartWindow<T> | null {
  const first = series.findIndex(isNew);
  if (first < 0) return null;
  const newIndices: number[] = [];
  series.forEach((p, i) => {
    if (isNew(p)) newIndices.push(i);
  });
  return { points: [...series], referenceCount: Math.min(first, maxReference), newIndices };
}

/** A stable text for a distance in a cause key. */
export const distanceKey = (mm: number) => String(Number(mm.toFixed(6)));
