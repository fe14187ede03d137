// What the API and the pages show of the drift monitoring: a grade's configuration (in force, stored
// versions) and one series' curve-level scheme (reference, design, autocorrelation, points, episodes).
import type { Db } from '../db/connection.ts';
import { findGrade } from '../db/referenceData.ts';
import { currentMonitoringConfig, listMonitoringConfigs, saveMonitoringConfig, type MonitoringConfigRecord } from '../db/monitoringConfig.ts';
import { alertSettings, AlertSettingsError, GRADE_CONFIGURABLE, type AlertRuleSettings, type AlertSettingsOverride, type GradeMonitoringOverride } from '../alerts/rules/settings.ts';
import { curveSeries } from './curveSeries.ts';
import { episodesOf } from './curveMonitor.ts';
import { deploymentSettings, monitoringSettingsFor } from './monitoringSettings.ts';
import { invalidInput, notFound } from './errors.ts';
import type { SeriesSource } from './seriesData.ts';

export interface GradeMonitoringConfig {
  grade: string;
  /** The settings in force (the configurable parts). */
  inForce: Pick<AlertRuleSettings, (typeof GRADE_CONFIGURABLE)[number]>;
  /** The stored version in force; null: the deployment's defaults. */
  version: MonitoringConfigRecord | null;
  versions: MonitoringConfigRecord[];
  defaults: Pick<AlertRuleSettings, (typeof GRADE_CONFIGURABLE)[number]>;
}

const pick = (s: AlertRuleSettings) => Object.fromEntries(GRADE_CONFIGURABLE.map((k) => [k, s[k]])) as GradeMonitoringConfig['inForce'];

export async function gradeMonitoringConfig(db: Db, grade: string): Promise<GradeMonitoringConfig> {
  if (!(await findGrade(db, grade))) throw notFound(`grade ${grade} is not on file`);
  const [settings, version, versions] = await Promise.all([monitoringSettingsFor(db, grade), currentMonitoringConfig(db, grade), listMonitoringConfigs(db, grade)]);
  return { grade, inForce: pick(settings), version, versions, defaults: pick(deploymentSettings()) };
}

/**
 * Stores a new version of a grade's configuration: the given parts over the deployment's settings (the
 * whole override is stored, so a version reads on its own). Refused in plain words when a value is not
 * usable (the checks of alertSettings).
 */
export async function saveGradeMonitoring(db: Db, input: { grade: string; settings: GradeMonitoringOverride; reason: string; createdBy: string | null }): Promise<GradeMonitoringConfig> {
  if (!(await findGrade(db, input.grade))) throw notFound(`grade ${input.grade} is not on file`);
  if (!input.reason.trim()) throw invalidInput('say why the monitoring of this grade changes');
  const unknown = Object.keys(input.settings).filter((k) => !(GRADE_CONFIGURABLE as readonly string[]).includes(k));
  if (unknown.length) throw invalidInput(`not part of a grade's monitoring configuration: ${unknown.join(', ')} (allowed: ${GRADE_CONFIGURABLE.join(', ')})`);
  try {
    alertSettings(input.settings as AlertSettingsOverride, deploymentSettings());
  } catch (error) {
    if (error instanceof AlertSettingsError) throw invalidInput(error.message);
    throw error;
  }
  await saveMonitoringConfig(db, { grade: input.grade, settings: input.settings as Record<string, unknown>, reason: input.reason.trim(), createdBy: input.createdBy });
  return gradeMonitoringConfig(db, input.grade);
}

const r = (x: number | null | undefined, n = 4) => (x === null || x === undefined || !Number.isFinite(x) ? null : Number(x.toFixed(n)));

/** One series' curve-level monitoring, as the alerts run it. */
export async function seriesMonitoringView(db: Db, query: { grade: string; mill: string; source?: SeriesSource }) {
  const settings = await monitoringSettingsFor(db, query.grade);
  const series = await curveSeries(db, query, { settings });
  const m = series.monitoring;
  const ref = m.reference;
  const episodes = episodesOf(m).map((e) => ({
    cause: e.cause,
    from: m.monitored[e.onset].heatNumber,
    castDate: m.monitored[e.onset].castDate,
    heats: e.signals.length,
    last: m.monitored[e.signals[e.signals.length - 1]].heatNumber,
  }));
  return {
    grade: series.grade,
    mill: series.mill,
    source: series.source,
    enabled: settings.curve.enabled,
    status: m.status,
    reason: m.reason,
    settings: settings.curve,
    distances: series.distancesMm.map((mm, j) => ({ mm, label: series.labels[j] })),
    incompleteHeats: series.incomplete,
    reference: ref
      ? {
          origin: m.origin,
          heats: m.referenceHeats.length,
          from: m.referenceHeats[0]?.castDate ?? null,
          to: m.referenceHeats[m.referenceHeats.length - 1]?.castDate ?? null,
          used: ref.kept.length,
          excludedHeats: m.excludedHeats,
          heatsPerYear: r(m.heatsPerYear, 1),
          lag1Autocorrelation: r(ref.location.lag1, 3),
          autocorrelationTreated: ref.location.treated,
          phi: r(ref.location.phi, 3),
          level: {
            L: r(ref.location.design.L),
            knownParameterL: r(ref.location.design.knownL),
            limit: r(ref.location.limit),
            guarantee: ref.location.design.guarantee,
            shortfallShare: r(ref.location.design.shortfallShare, 3),
            expectedFalseAlarmsPerYear: m.heatsPerYear === null ? null : r(ref.location.design.meanFalseAlarmsPerHeat * m.heatsPerYear, 3),
          },
          shape: ref.shape ? { components: ref.shape.k, alpha: r(ref.shape.alpha, 6), ucl: r(ref.shape.ucl) } : null,
          arl: ref.arl,
        }
      : m.origin
        ? { origin: m.origin, heats: m.referenceHeats.length }
        : null,
    statements: m.statements,
    points: m.monitored.map((h) => ({
      heatId: h.heatId,
      heatNumber: h.heatNumber,
      castDate: h.castDate,
      level: r(h.point.u),
      ewma: r(h.point.ewma),
      limit: r(h.point.limit),
      levelSignal: h.point.level,
      t2: r(h.point.t2),
      t2Ucl: r(h.point.t2Ucl),
      shapeSignal: h.point.shape,
    })),
    episodes,
  };
}

export type SeriesMonitoringView = Awaited<ReturnType<typeof seriesMonitoringView>>;
