// The usual caution, in one place for every machine-readable answer that gives a verdict or a
// prediction: JSON API answers (src/api/caution.ts) and webhook payloads (src/db/alerts.ts).
export const DECISION_CAUTION =
  'endquench supports decisions; it does not make them. Predictions, verdicts and statistics do not replace end-quench testing; acceptance follows the purchase specification, the applicable standards and local codes, and the judgement of qualified personnel.';
