// Alert rules named in words for pages, reports and exports (the identifiers stay in the API and in
// webhook payloads, where systems match on them). Our own wording; Nelson rules keep their trade name.
import { NELSON_RULE_DESCRIPTIONS, type NelsonRule } from '../stats/nelsonRules.ts';

export const ALERT_RULE_NAMES: Readonly<Record<string, string>> = Object.freeze({
  out_of_band: 'Outside the band',
  copied_certificate: 'Certificate repeats another heat',
  impossible_j1: 'Quenched-end hardness above what its carbon allows',
  inconsistent_with_chemistry: 'Curve unlike its chemistry',
  curve_level_shift: 'Curve level drifting',
  curve_shape_change: 'Curve shape changing',
  ewma_signal: 'Gradual shift at a distance (EWMA)',
  cusum_signal: 'Sustained shift at a distance (CUSUM)',
  t2_signal: 'Unusual curve shape (Hotelling T²)',
  capability_drop: 'Capability falling (Ppk)',
  lab_agreement: 'Mill and our laboratory disagree',
});

/** The rule in words: "Outside the band"; a Nelson rule with what it looks for; an unknown id with its underscores as spaces. */
export function alertRuleName(rule: string): string {
  const named = ALERT_RULE_NAMES[rule];
  if (named) return named;
  const nelson = /^nelson_rule_(\d)$/.exec(rule);
  if (nelson && NELSON_RULE_DESCRIPTIONS[Number(nelson[1]) as NelsonRule]) return `Chart pattern: ${NELSON_RULE_DESCRIPTIONS[Number(nelson[1]) as NelsonRule]} (Nelson ${nelson[1]})`;
  const words = rule.replace(/_/g, ' ');
  return words.charAt(0).toUpperCase() + words.slice(1);
}
