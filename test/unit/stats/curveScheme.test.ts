// The curve-level scheme (src/stats/curveScheme.ts) and its series wrapper (src/analysis/curveMonitor.ts).
import { describe, expect, it } from 'vitest';
import { fitCurveReference, lag1Autocorrelation, runCurveScheme, type CurveSchemeDesign } from '../../../src/stats/curveScheme.ts';
import { fQuantile } from '../../../src/stats/distributions.ts';
import { createRng } from '../../../src/stats/random.ts';
import { episodesOf, findingsOf, heatRate, monitorSeries, type CurveMonitorSettings, type MonitoredHeat } from '../../../src/analysis/curveMonitor.ts';

const DESIGN: CurveSchemeDesign = { lambda: 0.1, targetArl: 450, locationShare: 0.5, guarantee: 0.9, autocorrelationThreshold: 0.2, shapeComponents: 12 };
const P = 8;

/** Curves with a common level factor (AR(1) over heats with phi) and independent scatter per distance. */
function curves(seed: number, n: number, phi = 0, shift: (t: number) => number[] = () => new Array(P).fill(0)): number[][] {
  const rng = createRng(seed);
  let a = rng.normal();
  return Array.from({ length: n }, (_, t) => {
    if (t > 0) a = phi * a + Math.sqrt(1 - phi * phi) * rng.normal();
    const s = shift(t);
    return Array.from({ length: P }, (_, j) => 50 - 2 * j + 1.5 * (0.8 * a + 0.6 * rng.normal()) + s[j]);
  });
}

describe('lag-1 autocorrelation', () => {
  it('r1 = c1/c0 (Box, Jenkins & Reinsel, Time Series Analysis, §2.1.4): 1..5 gives 4/10, computed by hand', () => {
    expect(lag1Autocorrelation([1, 2, 3, 4, 5])).toBeCloseTo(0.4, 15);
    expect(lag1Autocorrelation([1, -1, 1, -1])).toBeCloseTo(-0.75, 15);
  });
});

describe('fitting the reference', () => {
  it('standardises each distance by its reference mean and SD; the level has mean 0 over the reference', () => {
    const rows = curves(1, 100);
    const fit = fitCurveReference(rows, DESIGN);
    const kept = fit.kept.map((i) => rows[i]);
    const m0 = kept.reduce((s, r) => s + r[0], 0) / kept.length;
    expect(fit.means[0]).toBeCloseTo(m0, 12);
    expect(Math.abs(fit.location.mean)).toBeLessThan(1e-12);
    expect(fit.shape!.k).toBe(P - 1);
  });

  it('the shape limit is the phase II limit for individual observations, k(m+1)(m−1)/(m(m−k))·F(1−α; k, m−k) (NIST/SEMATECH e-Handbook §6.5.4.3.4), α = 1/ARL_shape', () => {
    const fit = fitCurveReference(curves(2, 100), DESIGN);
    const m = fit.kept.length;
    const k = fit.shape!.k;
    // The scheme's 450 heats shared half and half (1/450 = 1/900 + 1/900).
    expect(fit.arl).toMatchObject({ scheme: 450, location: 900, shape: 900 });
    expect(fit.shape!.ucl).toBeCloseTo(((k * (m + 1) * (m - 1)) / (m * (m - k))) * fQuantile(1 - 1 / 900, k, m - k), 10);
  });

  it('sets aside a reference heat far off the level (phase I exclusion, Montgomery §5.4)', () => {
    const rows = curves(3, 100);
    rows[40] = rows[40].map((x) => x + 12);
    const fit = fitCurveReference(rows, DESIGN);
    expect(fit.excluded).toContain(40);
  });

  it('treats autocorrelation only when the reference shows it', () => {
    expect(fitCurveReference(curves(4, 100, 0), DESIGN).location.treated).toBe(false);
    const ar = fitCurveReference(curves(4, 100, 0.6), DESIGN).location;
    expect(ar.treated).toBe(true);
    expect(ar.phi).toBeGreaterThan(0.3);
  });

  it('refuses too small a reference', () => {
    expect(() => fitCurveReference(curves(5, 20), DESIGN, 30)).toThrow(/at least 30/);
  });
});

describe('running the scheme', () => {
  const fit = fitCurveReference(curves(6, 100), DESIGN);

  it('a point depends only on the reference and the heats before it (the same points whatever the batching)', () => {
    const later = curves(7, 120);
    const whole = runCurveScheme(fit, later);
    for (const cut of [1, 3, 25, 119]) expect(runCurveScheme(fit, later.slice(0, cut))).toEqual(whole.slice(0, cut));
  });

  it('a whole-curve step of 1.5 SD shows on the level chart, high, and not as a shape change', () => {
    const later = curves(8, 80, 0, (t) => new Array(P).fill(t >= 20 ? 2.25 : 0));
    const pts = runCurveScheme(fit, later);
    const first = pts.findIndex((p) => p.level !== null);
    expect(first).toBeGreaterThanOrEqual(20);
    expect(pts[first].level).toBe('high');
    expect(pts.filter((p) => p.shape).length).toBeLessThan(3);
  });

  it('a curve with one distance up and its neighbour down shows on the shape chart', () => {
    const later = curves(9, 5);
    later[4] = later[4].map((x, j) => (j === 2 ? x + 4 : j === 3 ? x - 4 : x));
    const pts = runCurveScheme(fit, later);
    expect(pts[4].shape).toBe(true);
    expect(pts[4].level).toBeNull();
  });
});

describe('the series wrapper', () => {
  const settings: CurveMonitorSettings = { enabled: true, lambda: 0.1, yearsPerFalseAlarm: 3, heatsPerYear: null, referenceHeats: 100, minReferenceHeats: 30, guarantee: 0.9, locationShare: 0.5, shapeComponents: 12, autocorrelationThreshold: 0.2 };
  const heats = (rows: number[][]): MonitoredHeat[] =>
    rows.map((row, i) => ({ heatId: i + 1, heatNumber: `H${i + 1}`, castDate: new Date(Date.UTC(2024, 0, 1) + Math.floor((i * 365.25) / 150) * 86_400_000).toISOString().slice(0, 10), row }));

  it('collects its reference from the first heats, then keeps it', () => {
    expect(monitorSeries(heats(curves(10, 60)), settings, null).status).toBe('collecting_reference');
    const a = monitorSeries(heats(curves(10, 130)), settings, null);
    const b = monitorSeries(heats(curves(10, 200)), settings, null);
    expect(a.status).toBe('monitoring');
    expect(b.reference!.means).toEqual(a.reference!.means);
    expect(b.monitored.slice(0, 30).map((h) => h.point)).toEqual(a.monitored.map((h) => h.point));
  });

  it('uses the heats a year of its reference (150 here) for the target, and states the cost of the estimated limits', () => {
    const s = monitorSeries(heats(curves(11, 130)), settings, null);
    expect(heatRate(s.referenceHeats)).toBeCloseTo(150, -1);
    expect(s.reference!.arl.scheme).toBeCloseTo(450, -1);
    expect(s.statements.join(' ')).toMatch(/widened from L = .* at most 10 % of references/);
  });

  it('refuses a frozen baseline window with too few heats', () => {
    const s = monitorSeries(heats(curves(12, 130)), settings, { id: 7, window: { from: '2024-01-01', to: '2024-02-15' } });
    expect(s.status).toBe('refused');
    expect(s.reason).toMatch(/at least 30/);
  });

  it('findings name the new heats that signal, per cause', () => {
    const rows = curves(13, 200, 0, (t) => new Array(P).fill(t >= 130 ? 3 : 0));
    const s = monitorSeries(heats(rows), settings, null);
    const f = findingsOf(s, (id) => id > 150);
    expect(f.map((x) => x.cause)).toContain('level:high');
    expect(f.find((x) => x.cause === 'level:high')!.heats.every((h) => h.heatId > 150)).toBe(true);
  });
});

describe('signal episodes (one alert per drift)', () => {
  const point = (ewma: number, shape = false) => ({ u: 0, e: 0, ewma, limit: 1, level: ewma > 1 ? ('high' as const) : ewma < -1 ? ('low' as const) : null, t2: 0, t2Ucl: 1, shape, deviations: [] });
  const monitoring = (points: ReturnType<typeof point>[]) =>
    ({ status: 'monitoring', reason: null, origin: null, reference: null, referenceHeats: [], excludedHeats: [], heatsPerYear: 150, statements: [], monitored: points.map((p, i) => ({ heatId: i + 1, heatNumber: `H${i + 1}`, castDate: '2024-01-01', row: [], point: p })) }) as Parameters<typeof episodesOf>[0];

  it('a level episode lasts until the EWMA is back inside half its limit (our hysteresis); a new crossing after that is a new episode', () => {
    const m = monitoring([0.2, 1.2, 0.7, 1.1, 0.4, 1.3, -1.2].map((z) => point(z)));
    expect(episodesOf(m).map((e) => [e.cause, e.onset, e.signals])).toEqual([
      ['level:high', 1, [1, 3]],
      ['level:high', 5, [5]],
      ['level:low', 6, [6]],
    ]);
  });

  it('shape signals within 25 heats of the last one belong to its episode', () => {
    const pts = Array.from({ length: 80 }, (_, i) => point(0, [10, 30, 70].includes(i)));
    expect(episodesOf(monitoring(pts)).map((e) => [e.onset, e.signals])).toEqual([
      [10, [10, 30]],
      [70, [70]],
    ]);
  });

  it('findings keep the episode onset even when it came with an earlier batch', () => {
    const m = monitoring([0.2, 1.2, 1.3, 1.4].map((z) => point(z)));
    const f = findingsOf(m, (id) => id >= 3);
    expect(f).toHaveLength(1);
    expect(f[0].onset.heatNumber).toBe('H2');
    expect(f[0].heats.map((h) => h.heatNumber)).toEqual(['H3', 'H4']);
  });
});
