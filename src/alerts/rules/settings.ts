// Settings of the statistical alert rules run in the ingest transaction, with their defaults. Sources of
// the methods are named in each rule's file; docs/access-and-alerts.md ("Rules") explains the choices.
//
// How the defaults were chosen: drift is watched by one curve-level scheme per mill x grade x source
// (src/analysis/curveMonitor.ts; docs/monitoring.md), with limits designed for at most one false alarm
// per series in three years and a fixed reference, so alerts do not depend on how heats are batched.
// Per-distance charts (EWMA, CUSUM, Nelson rules) and the whole-curve T² of each point are off as alert
// rules by default: with ~15 distances per curve their false alarms add up (on the demo plant the run
// rules fired on 8 of its 9 series within one import of 1,250 certificates); they remain switchable, and
// the pages draw the per-distance charts as explanation. bench/monitoring.bench.ts measures the design.
// ENDQUENCH_ALERT_SETTINGS (JSON, same shape as AlertSettingsOverride) overrides the defaults for the
// deployment; a grade's stored monitoring configuration (src/db/monitoringConfig.ts) overrides the
// monitoring parts (GRADE_CONFIGURABLE) for that grade.
import { QUENCHED_END_FAIL_ABOVE_IH_HRC } from '../../hardenability/martensite.ts';
import type { NelsonRule } from '../../stats/nelsonRules.ts';
import type { SeriesSource } from '../../db/series.ts';
import type { CurveMonitorSettings } from '../../analysis/curveMonitor.ts';

export interface ReferenceSettings {
  /** Phase I of the per-distance rules (no frozen baseline) uses the series' first this-many heats, then keeps them. */
  maxHeats: number;
  /** ... and at least this many; with fewer, no limits are estimated and the rule is silent. */
  minHeats: number;
}

export interface AlertRuleSettings {
  /** Test sources charted: each is its own series (cause keys name it). */
  sources: Exclude<SeriesSource, never>[];
  /** History loaded before the earliest new cast date (days): phase I, copies and rolling Ppk use it. */
  historyDays: number;
  reference: ReferenceSettings;
  /**
   * One cause per chart rule and mill x grade x source, listing the band distances that fired (default),
   * or one per distance as well. A heat whose whole curve is high fires at most distances at once: with
   * a cause per distance it would raise one alert per distance for one cause.
   */
  causePerDistance: boolean;
  /**
   * The curve-level drift scheme (src/analysis/curveMonitor.ts, src/stats/curveScheme.ts): one level and
   * one shape statistic per series, limits designed for one false alarm per `yearsPerFalseAlarm`.
   */
  curve: CurveMonitorSettings;
  nelson: { enabled: boolean; rules: NelsonRule[] };
  ewma: { enabled: boolean; lambda: number; L: number };
  cusum: { enabled: boolean; k: number; h: number; headStart: number };
  t2: { enabled: boolean; alpha: number };
  certificate: {
    /**
     * 'chemistry': the alert needs the chemistry repeated exactly (with or without the curve);
     * 'curve_or_chemistry': an exactly repeated curve alone is enough.
     */
    copies: { enabled: boolean; windowDays: number; needs: 'chemistry' | 'curve_or_chemistry' };
    martensite: { enabled: boolean; failAboveHrc: number };
    prediction: { enabled: boolean; failZ: number; minDistances: number };
  };
  /**
   * confidence: the alert needs the one-sided upper confidence bound of Ppk (Bissell 1990) below minPpk,
   * so that sampling scatter of a 50-heat estimate alone does not raise it; null: the estimate itself.
   */
  capability: { enabled: boolean; windowHeats: number; minPpk: number; confidence: number | null };
}

/** The defaults (see the header and docs/access-and-alerts.md for why). */
export const DEFAULT_ALERT_SETTINGS: AlertRuleSettings = Object.freeze({
  // The mill's own certificates are its process; receiving re-tests are too sparse to chart by default.
  sources: ['mill_certificate'],
  historyDays: 730,
  // Quesenberry (1993, J. Quality Technology 25:237-247) shows individuals limits estimated from fewer
  // than about 100 points give false-alarm rates well above nominal; 30 is our floor for trying at all.
  reference: { maxHeats: 100, minHeats: 30 },
  causePerDistance: false,
  // One scheme per curve (docs/monitoring.md): EWMA (λ 0.1) of the mean standardised deviation and T² of
  // the shape on up to 12 principal components; at most one false alarm per series in three years at the
  // series' own heat rate (Woodall et al. 2004 for monitoring a profile by a few statistics; Lowry et
  // al. 1992). The reference is the first 100 complete curves (Quesenberry 1993 on ~100 points for
  // individuals limits), widened so 90 % of references meet the target (Gandy & Kvaløy 2013); below 30
  // no limits at all. |lag-1 autocorrelation| >= 0.2 of the reference level: AR(1) residuals charted.
  curve: {
    enabled: true,
    lambda: 0.1,
    yearsPerFalseAlarm: 3,
    heatsPerYear: null,
    referenceHeats: 100,
    minReferenceHeats: 30,
    guarantee: 0.9,
    locationShare: 0.5,
    shapeComponents: 12,
    autocorrelationThreshold: 0.2,
  },
  // Nelson (1984) rules 1, 2, 3 and 5 when enabled: a point beyond 3 sigma, nine in a row on one side, a
  // trend of six, two of three beyond 2 sigma (the zone rules 6-8 and rule 4 stay on the Trends page).
  nelson: { enabled: false, rules: [1, 2, 3, 5] },
  // Lucas & Saccucci (1990, Technometrics 32:1-12) tabulate lambda 0.1, L = 2.814: ARL0 500, one-sigma
  // shift found in 10.3. lambda 0.05 with L = 3.5 gives ARL0 about 6,460 and 16.7 for a one-sigma shift
  // (Lucas & Saccucci's Markov chain, computed by ewmaArl in src/stats/runLength.ts).
  // Per-distance EWMA, CUSUM and T² alerts are off by default: about 15 charts per curve multiply the
  // false alarms (the curve scheme above replaces them); the pages still draw them as explanation.
  ewma: { enabled: false, lambda: 0.05, L: 3.5 },
  // Page (1954) / Lucas & Crosier (1982): k = 0.5 tuned to a one-sigma shift. h = 5 gives a two-sided
  // ARL0 of 465 (Montgomery §9.1); h = 8 gives a two-sided ARL0 of about 9,480 and 16.4 for a one-sigma
  // shift (Brook & Evans 1972 Markov chain, computed by cusumArl in src/stats/runLength.ts).
  cusum: { enabled: false, k: 0.5, h: 8, headStart: 0 },
  // Hotelling T² on the curve; one series per mill x grade, alpha per point (Tracy, Young & Mason 1992).
  t2: { enabled: false, alpha: 0.001 },
  certificate: {
    // Curves rounded to whole (or even) HRC that follow chemistry closely repeat by chance of rounding;
    // ten element values all equal by chance are far rarer.
    copies: { enabled: true, windowDays: 365, needs: 'chemistry' },
    // ASTM A255 initial hardness plus 7 HRC: the same fail tolerance as the heat sheet's check, read off
    // published bands at their carbon limits (src/hardenability/martensite.ts).
    martensite: { enabled: true, failAboveHrc: QUENCHED_END_FAIL_ABOVE_IH_HRC },
    // Standardised residual against the curve predicted from chemistry beyond 4 at two or more distances.
    prediction: { enabled: true, failZ: 4, minDistances: 2 },
  },
  // Ppk of the last 50 heats of the series (after the ingest) against the band in force; below 1.0 the
  // band is no longer held with a 3-sigma margin (ISO 22514-2 index; 1.0 as a floor is common practice).
  capability: { enabled: true, windowHeats: 50, minPpk: 1.0, confidence: 0.95 },
}) as AlertRuleSettings;

export type AlertSettingsOverride = {
  [K in keyof AlertRuleSettings]?: AlertRuleSettings[K] extends unknown[] ? AlertRuleSettings[K] : AlertRuleSettings[K] extends object ? Partial<AlertRuleSettings[K]> : AlertRuleSettings[K];
} & { certificate?: { [K in keyof AlertRuleSettings['certificate']]?: Partial<AlertRuleSettings['certificate'][K]> } };

export class AlertSettingsError extends Error {
  override name = 'AlertSettingsError';
}

/** The settings of this deployment: the defaults, overridden by ENDQUENCH_ALERT_SETTINGS (JSON) when set. */
export function deploymentAlertSettings(env: Record<string, string | undefined> = process.env): AlertRuleSettings {
  const raw = env.ENDQUENCH_ALERT_SETTINGS;
  if (!raw) return alertSettings();
  let parsed: unknown;
  try {
    parsed = JSON.parse(raw);
  } catch (error) {
    throw new AlertSettingsError(`ENDQUENCH_ALERT_SETTINGS is not valid JSON: ${(error as Error).message}`);
  }
  if (parsed === null || typeof parsed !== 'object' || Array.isArray(parsed)) throw new AlertSettingsError('ENDQUENCH_ALERT_SETTINGS must be a JSON object');
  return alertSettings(parsed as AlertSettingsOverride);
}

/** The parts of the settings a grade's stored monitoring configuration may change (src/db/monitoringConfig.ts). */
export const GRADE_CONFIGURABLE = ['curve', 'nelson', 'ewma', 'cusum', 't2'] as const;
export type GradeMonitoringOverride = Pick<AlertSettingsOverride, (typeof GRADE_CONFIGURABLE)[number]>;

/** Defaults (or the given base) with the given parts replaced; checks the values a rule would choke on. */
export function alertSettings(override: AlertSettingsOverride = {}, base: AlertRuleSettings = DEFAULT_ALERT_SETTINGS): AlertRuleSettings {
  const d = base;
  const s: AlertRuleSettings = {
    sources: override.sources ?? [...d.sources],
    historyDays: override.historyDays ?? d.historyDays,
    causePerDistance: override.causePerDistance ?? d.causePerDistance,
    curve: { ...d.curve, ...override.curve },
    reference: { ...d.reference, ...override.reference },
    nelson: { ...d.nelson, ...override.nelson },
    ewma: { ...d.ewma, ...override.ewma },
    cusum: { ...d.cusum, ...override.cusum },
    t2: { ...d.t2, ...override.t2 },
    certificate: {
      copies: { ...d.certificate.copies, ...override.certificate?.copies },
      martensite: { ...d.certificate.martensite, ...override.certificate?.martensite },
      prediction: { ...d.certificate.prediction, ...override.certificate?.prediction },
    },
    capability: { ...d.capability, ...override.capability },
  };
  const fail = (m: string) => {
    throw new AlertSettingsError(m);
  };
  if (s.sources.length === 0) fail('at least one test source must be charted');
  if (!(s.historyDays >= 1)) fail('historyDays must be at least 1');
  if (!(Number.isInteger(s.reference.minHeats) && s.reference.minHeats >= 10)) fail('reference.minHeats must be an integer of at least 10');
  if (!(s.reference.maxHeats >= s.reference.minHeats)) fail('reference.maxHeats must not be below reference.minHeats');
  const c = s.curve;
  if (!(c.lambda > 0 && c.lambda <= 1)) fail('curve.lambda must be in (0, 1]');
  if (!(c.yearsPerFalseAlarm > 0)) fail('curve.yearsPerFalseAlarm must be positive');
  if (c.heatsPerYear !== null && !(c.heatsPerYear >= 1)) fail('curve.heatsPerYear must be at least 1, or null for the series\' own rate');
  if (!(Number.isInteger(c.minReferenceHeats) && c.minReferenceHeats >= 20)) fail('curve.minReferenceHeats must be an integer of at least 20');
  if (!(Number.isInteger(c.referenceHeats) && c.referenceHeats >= c.minReferenceHeats)) fail('curve.referenceHeats must be an integer not below curve.minReferenceHeats');
  if (!(c.guarantee >= 0.5 && c.guarantee < 1)) fail('curve.guarantee must be in [0.5, 1)');
  if (!(c.locationShare > 0 && c.locationShare <= 1)) fail('curve.locationShare must be in (0, 1]');
  if (!(Number.isInteger(c.shapeComponents) && c.shapeComponents >= 1 && c.shapeComponents <= 30)) fail('curve.shapeComponents must be an integer from 1 to 30');
  if (!(c.autocorrelationThreshold > 0 && c.autocorrelationThreshold <= 1)) fail('curve.autocorrelationThreshold must be in (0, 1]');
  if (!(s.ewma.lambda > 0 && s.ewma.lambda <= 1)) fail('ewma.lambda must be in (0, 1]');
  if (!(s.ewma.L > 0)) fail('ewma.L must be positive');
  if (!(s.cusum.k >= 0 && s.cusum.h > 0 && s.cusum.headStart >= 0 && s.cusum.headStart < s.cusum.h)) fail('cusum needs k >= 0, h > 0 and 0 <= headStart < h');
  if (!(s.t2.alpha > 0 && s.t2.alpha < 1)) fail('t2.alpha must be in (0, 1)');
  if (!(s.certificate.prediction.failZ > 0 && s.certificate.prediction.minDistances >= 1)) fail('prediction needs failZ > 0 and minDistances >= 1');
  if (!(Number.isInteger(s.capability.windowHeats) && s.capability.windowHeats >= 10)) fail('capability.windowHeats must be an integer of at least 10');
  if (!(s.capability.minPpk > 0)) fail('capability.minPpk must be positive');
  if (s.capability.confidence !== null && !(s.capability.confidence > 0.5 && s.capability.confidence < 1)) fail('capability.confidence must be in (0.5, 1) or null');
  return s;
}
