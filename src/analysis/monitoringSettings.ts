// The monitoring settings a page or answer uses for a grade: the same ones the alert rules run with, so
// no page shows a signal the alerts would not raise unless it says it is a looser view. The settings of a
// grade are the deployment's (defaults, or ENDQUENCH_ALERT_SETTINGS) overridden by the grade's newest
// stored monitoring configuration (src/db/monitoringConfig.ts), when one is on file.
import type { Db, Executor } from '../db/connection.ts';
import { alertSettings, deploymentAlertSettings, type AlertRuleSettings, type AlertSettingsOverride } from '../alerts/rules/settings.ts';
import { currentMonitoringConfig } from '../db/monitoringConfig.ts';
import type { ChartKind, ChartParameters } from './controlCharts.ts';

let deployment: AlertRuleSettings | null = null;

/** The deployment's settings (read once). */
export function deploymentSettings(): AlertRuleSettings {
  return (deployment ??= deploymentAlertSettings());
}

/**
 * The settings in force for a grade: `base` (the deployment's by default) with the grade's newest stored
 * monitoring configuration applied, when one is on file.
 */
export async function monitoringSettingsFor(db: Db | Executor, grade: string, base: AlertRuleSettings = deploymentSettings()): Promise<AlertRuleSettings> {
  const stored = await currentMonitoringConfig(db, grade);
  return stored ? alertSettings(stored.settings as AlertSettingsOverride, base) : base;
}

/**
 * Chart parameters of a kind as the alert rules use them: the individuals chart carries the run rules the
 * alerts run (none when the Nelson rules are off) at 3 sigma and no moving-range signal; EWMA and CUSUM
 * their alert limits; T² its alert alpha.
 */
export function alertChartParameters(settings: AlertRuleSettings, kind: ChartKind): ChartParameters {
  return {
    L: kind === 'ewma' ? settings.ewma.L : 3,
    lambda: settings.ewma.lambda,
    k: settings.cusum.k,
    h: settings.cusum.h,
    headStart: settings.cusum.headStart,
    alpha: settings.t2.alpha,
    rules: settings.nelson.enabled ? [...settings.nelson.rules] : [],
    movingRange: false,
  };
}
