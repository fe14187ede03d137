// The whole-curve charts drawn on Trends and in the report carry exactly the scheme's points and signals
// (src/analysis/curveCharts.ts), so a page shows the signals the drift alerts raise and no others.
import { describe, expect, it } from 'vitest';
import { curveCharts } from '../../../src/analysis/curveCharts.ts';
import type { SeriesMonitoringView } from '../../../src/analysis/monitoringView.ts';

const point = (i: number, ewma: number, levelSignal: 'high' | 'low' | null, shapeSignal = false) => ({
  heatId: i + 1,
  heatNumber: `H${i + 1}`,
  castDate: `2024-01-${String(i + 1).padStart(2, '0')}`,
  level: ewma,
  ewma,
  limit: 0.8,
  levelSignal,
  t2: shapeSignal ? 50 : 10,
  t2Ucl: 40,
  shapeSignal,
});

const view = {
  grade: 'G',
  mill: 'M',
  source: 'mill_certificate',
  enabled: true,
  status: 'monitoring',
  reason: null,
  settings: { lambda: 0.1 },
  distances: [],
  incompleteHeats: [],
  reference: { origin: { type: 'first_heats', heats: 100 }, heats: 100, from: '2023-01-01', to: '2023-12-31', used: 100, excludedHeats: [], heatsPerYear: 150, lag1Autocorrelation: 0.05, autocorrelationTreated: false, phi: 0, level: { L: 3.6, knownParameterL: 3, limit: 0.8, guarantee: 0.9, shortfallShare: 0.1, expectedFalseAlarmsPerYear: 0.1 }, shape: { components: 7, alpha: 0.0011, ucl: 40 }, arl: { scheme: 450, location: 900, shape: 900 } },
  statements: [],
  points: [point(0, 0.1, null), point(1, 0.9, 'high'), point(2, -0.9, 'low', true), point(3, 0.2, null)],
  episodes: [],
} as unknown as SeriesMonitoringView;

describe('whole-curve charts', () => {
  it('the level chart plots the EWMA against ± the designed limit and signals exactly where the scheme does', () => {
    const c = curveCharts(view)!;
    expect(c.level.points.map((p) => p.plotted)).toEqual([0.1, 0.9, -0.9, 0.2]);
    expect([c.level.ucl, c.level.lcl]).toEqual([0.8, -0.8]);
    expect(c.level.signals.map((s) => [s.rule, s.points])).toEqual([
      ['curve_level_high', [1]],
      ['curve_level_low', [2]],
    ]);
    expect(c.shape!.signals.map((s) => [s.rule, s.points])).toEqual([['curve_shape', [2]]]);
  });

  it('draws nothing while the series is not monitored', () => {
    expect(curveCharts({ ...view, status: 'collecting_reference' } as SeriesMonitoringView)).toBeNull();
  });
});
