// Alerts counted by rule, stacked by severity.
import { frame, PALETTE, type VegaLiteSpec } from './theme.ts';

export function alertCountSpec(rows: ReadonlyArray<{ rule: string; severity: string; status: string; count: number }>): VegaLiteSpec {
  return frame(
    {
      data: { values: rows },
      mark: { type: 'bar' },
      encoding: {
        y: { field: 'rule', type: 'nominal', title: null },
        x: { field: 'count', type: 'quantitative', aggregate: 'sum', title: 'Alerts' },
        color: { field: 'severity', type: 'nominal', title: 'Severity', scale: { domain: ['info', 'warning', 'critical'], range: [PALETTE.sky, PALETTE.plum, PALETTE.amber] } },
        tooltip: [
          { field: 'rule', title: 'Rule' },
          { field: 'severity', title: 'Severity' },
          { field: 'status', title: 'Status' },
          { field: 'count', title: 'Alerts' },
        ],
      },
    },
    { height: Math.max(90, new Set(rows.map((r) => r.rule)).size * 26), description: 'Alerts by rule and severity' },
  );
}
