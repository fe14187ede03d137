// The alert rules evaluated inside every ingest transaction (API and command line alike).
import type { Executor } from '../../db/connection.ts';
import type { ApplyResult } from '../../db/certificateStore.ts';
import { outOfBandRule } from './outOfBand.ts';
import { certificateChecksRule } from './certificateChecks.ts';
import { controlSignalsRule } from './controlSignals.ts';
import { multivariateRule } from './multivariate.ts';
import { capabilityDropRule } from './capabilityDrop.ts';
import { curveDriftRule } from './curveDrift.ts';
import { labAgreementRule } from './labAgreement.ts';
import { DEFAULT_ALERT_SETTINGS, deploymentAlertSettings, type AlertRuleSettings } from './settings.ts';

export type IngestRule = (tx: Executor, written: ApplyResult) => Promise<void>;

/** Every rule family with the given settings (the statistical rules share one load per ingest). */
export function ingestRules(settings: AlertRuleSettings = DEFAULT_ALERT_SETTINGS): IngestRule[] {
  return [outOfBandRule, certificateChecksRule(settings), controlSignalsRule(settings), multivariateRule(settings), curveDriftRule(settings), capabilityDropRule(settings), labAgreementRule(settings)];
}

/** The rules of this deployment (defaults, or ENDQUENCH_ALERT_SETTINGS). */
export const INGEST_RULES: readonly IngestRule[] = ingestRules(deploymentAlertSettings());

export async function runIngestRules(tx: Executor, written: ApplyResult, rules: readonly IngestRule[] = INGEST_RULES): Promise<void> {
  for (const rule of rules) await rule(tx, written);
}
