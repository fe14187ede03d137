// Certificate check: heat chemistry against the grade's limits (e.g. SAE J1268 / EN 10084 ranges).
// An element outside its limit fails; outside by no more than an agreed product-analysis tolerance
// (optional, per element, e.g. from ASTM A29 / EN 10084 permissible deviations) warns; a limited
// element that the certificate does not report warns.

import type { ChemicalElement, CheckEvidence, Chemistry } from '../types.ts';

export type ChemistryLimits = Partial<Record<ChemicalElement, { min?: number; max?: number }>>;

export interface ChemistryRow {
  element: ChemicalElement;
  value: number | null;
  min?: number;
  max?: number;
  status: 'inside' | 'outside' | 'within_tolerance' | 'not_reported';
  /** How far outside (wt%), positive; 0 when inside. */
  excess: number;
}

export function checkChemistryLimits(
  chem: Chemistry,
  limits: ChemistryLimits,
  options: { tolerances?: Partial<Record<ChemicalElement, number>> } = {},
): CheckEvidence<{ rows: ChemistryRow[] }> {
  const rows: ChemistryRow[] = [];
  for (const [el, lim] of Object.entries(limits) as [ChemicalElement, { min?: number; max?: number }][]) {
    const v = chem[el];
    if (v === undefined) {
      rows.push({ element: el, value: null, ...lim, status: 'not_reported', excess: 0 });
      continue;
    }
    const below = lim.min !== undefined ? lim.min - v : -Infinity;
    const above = lim.max !== undefined ? v - lim.max : -Infinity;
    const excess = Math.max(below, above, 0);
    const tol = options.tolerances?.[el] ?? 0;
    const eps = 1e-12;
    const status = excess <= eps ? 'inside' : excess <= tol + eps ? 'within_tolerance' : 'outside';
    rows.push({ element: el, value: v, ...lim, status, excess: excess <= eps ? 0 : excess });
  }
  const outside = rows.filter((r) => r.status === 'outside');
  const soft = rows.filter((r) => r.status === 'within_tolerance' || r.status === 'not_reported');
  const verdict = rows.length === 0 ? 'not_applicable' : outside.length ? 'fail' : soft.length ? 'warn' : 'pass';
  const describe = (r: ChemistryRow) =>
    r.status === 'not_reported' ? `${r.element} not reported` : `${r.element} ${r.value} % (limits ${r.min ?? '-'}..${r.max ?? '-'})`;
  const summary =
    verdict === 'not_applicable'
      ? 'no chemistry limits given for this grade.'
      : verdict === 'pass'
        ? `all ${rows.length} limited elements inside their limits.`
        : [outside.length ? `outside: ${outside.map(describe).join(', ')}` : '', soft.length ? `to look at: ${soft.map(describe).join(', ')}` : '']
            .filter(Boolean)
            .join('; ') + '.';
  return {
    check: 'chemistry_limits',
    title: 'Chemistry inside the grade limits',
    verdict,
    summary,
    threshold: Object.fromEntries(Object.entries(options.tolerances ?? {}).map(([k, v]) => [`tolerance ${k}`, v as number])),
    values: { rows },
  };
}
