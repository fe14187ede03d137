// Loads one series for the curve-level monitoring (src/analysis/curveMonitor.ts) through the one series
// loader, and runs it with the grade's settings. Used alike by the alert rule (inside the ingest
// transaction), the heat sheet, Trends, the Mills overview, the report and the API, so every place
// gives the same verdict.
//
// The distances of the curve: the points of the band in force at the end of the series' frozen baseline
// window when there is one, else of the grade's first band version (so the scheme does not change with
// each new band version or with the newest heat of an import), matched to the distances measured. The
// whole series is loaded (not a window before the import): the statistic at a heat depends on every
// heat since the reference.
import type { Db, Executor } from '../db/connection.ts';
import { loadCurves } from '../db/series.ts';
import { listBands, type BandView } from '../db/referenceData.ts';
import { listBaselines, type BaselineRecord } from '../db/baselines.ts';
import type { Band } from '../hardenability/bands.ts';
import type { AlertRuleSettings } from '../alerts/rules/settings.ts';
import { labelFor, toBand } from './bandOf.ts';
import { curveRows } from './controlCharts.ts';
import { monitorSeries, type MonitoredHeat, type SeriesMonitoring } from './curveMonitor.ts';
import { distancesOf, matchDistance, type HeatCurve, type SeriesSource } from './seriesData.ts';
import { monitoringSettingsFor } from './monitoringSettings.ts';

export interface CurveSeries {
  grade: string;
  mill: string;
  source: SeriesSource;
  band: Band | null;
  distancesMm: number[];
  labels: string[];
  /** Heats left out for a missing reading at one of the distances. */
  incomplete: string[];
  monitoring: SeriesMonitoring;
}

/** The band a series' scheme uses (see the header). */
export function schemeBand(bands: readonly BandView[], baseline: BaselineRecord | null): Band | null {
  const governing = bands.filter((b) => b.status !== 'draft').sort((a, b) => a.effectiveFrom.localeCompare(b.effectiveFrom) || a.version - b.version);
  if (governing.length === 0) return null;
  if (baseline) {
    const inForce = governing.filter((b) => b.effectiveFrom <= baseline.windowTo);
    if (inForce.length) return toBand(inForce[inForce.length - 1]);
  }
  return toBand(governing[0]);
}

/** The newest active baseline of a series (its window is the curve reference), or null. */
export function newestBaseline(baselines: readonly BaselineRecord[]): BaselineRecord | null {
  return [...baselines].sort((a, b) => b.id - a.id)[0] ?? null;
}

/** Pure part: the series' heats as complete curves over the scheme's distances, and its monitoring. */
export function curveSeriesOf(
  curves: readonly HeatCurve[],
  meta: { grade: string; mill: string; source: SeriesSource },
  bands: readonly BandView[],
  baselines: readonly BaselineRecord[],
  settings: AlertRuleSettings,
): CurveSeries {
  const baseline = newestBaseline(baselines);
  const band = schemeBand(bands, baseline);
  const measured = distancesOf(curves);
  const distancesMm = (band ? band.points.map((p) => p.mm) : []).map((d) => matchDistance(measured, d)).filter((d): d is number => d !== null);
  const labels = distancesMm.map((d) => labelFor(band, d));
  if (distancesMm.length === 0) {
    return {
      ...meta,
      band,
      distancesMm,
      labels,
      incomplete: [],
      monitoring: { status: 'refused', reason: band ? 'no band distance was measured on these heats' : 'the grade has no band: no distances to monitor', origin: null, reference: null, referenceHeats: [], excludedHeats: [], heatsPerYear: null, statements: [], monitored: [] },
    };
  }
  const { rows, skipped } = curveRows(curves, distancesMm);
  const heats: MonitoredHeat[] = rows.map((r) => ({ heatId: r.heat.heatId, heatNumber: r.heat.heatNumber, castDate: r.heat.castDate, row: r.row }));
  const monitoring = monitorSeries(heats, settings.curve, baseline ? { id: baseline.id, window: { from: baseline.windowFrom, to: baseline.windowTo } } : null);
  return { ...meta, band, distancesMm, labels, incomplete: skipped, monitoring };
}

/** Loads and monitors one series with the grade's settings (or the ones given). */
export async function curveSeries(
  db: Db | Executor,
  query: { grade: string; mill: string; source?: SeriesSource },
  options: { settings?: AlertRuleSettings; bands?: readonly BandView[]; baselines?: readonly BaselineRecord[] } = {},
): Promise<CurveSeries> {
  const source = query.source ?? 'mill_certificate';
  const settings = options.settings ?? (await monitoringSettingsFor(db, query.grade));
  const curves = await loadCurves(db, { grade: query.grade, mill: query.mill, source });
  const bands = options.bands ?? (await listBands(db as Db, query.grade));
  const baselines = options.baselines ?? (await listBaselines(db, { grade: query.grade, mill: query.mill, source }));
  return curveSeriesOf(curves, { grade: query.grade, mill: query.mill, source }, bands, baselines, settings);
}
