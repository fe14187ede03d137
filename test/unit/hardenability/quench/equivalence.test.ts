// Equivalent end-quench distances, cooling parameter and critical diameter: against analytic solutions
// with constant properties (Carslaw & Jaeger 1959, analytic.ts), the physics the issue lists, grid and
// time-step refinement, and the published end-quench cooling-rate scale (from memory).
import { describe, expect, it } from 'vitest';
import { constantMaterial } from '../../../../src/hardenability/quench/materials.ts';
import { gradedFaces, solveConduction } from '../../../../src/hardenability/quench/conduction.ts';
import { barCooling, specimenCooling, type CoolingRun } from '../../../../src/hardenability/quench/cooling.ts';
import { barEquivalence, criticalDiameter, matchDistance } from '../../../../src/hardenability/quench/equivalence.ts';
import { lambdaOf, meanRate85 } from '../../../../src/hardenability/quench/coolingParameter.ts';
import { filmCoefficient, severityFor, SEVERITY_TABLE } from '../../../../src/hardenability/quench/severity.ts';
import { bisect, cylinderFoAt, cylinderThetaRate, erf } from './analytic.ts';

const k = 25;
const cp = 600;
const rho = 7850;
const alpha = k / (rho * cp);
const steel = constantMaterial(k, cp, rho);
const T0 = 850;
const TW = 20;
const theta700 = (700 - TW) / (T0 - TW);

/** Cooling rate at 700 °C (K/s) at the centre of a long cylinder of radius R, Biot number bi (series solution). */
function analyticCentreRate(bi: number, R: number): number {
  const fo = cylinderFoAt(bi, 0, theta700);
  return (-cylinderThetaRate(bi, 0, fo) * (T0 - TW) * alpha) / (R * R);
}

/** Distance (m) in a semi-infinite solid with its face held at TW where the rate at 700 °C equals `rate` (erf solution). */
function analyticSemiInfiniteDistance(rate: number): number {
  const eta = bisect((x) => erf(x) - theta700, 0.01, 3);
  // θ = erf(η), η = z/(2√(αt)): rate = ΔT·(η/√π)·e^{−η²}/t with t = z²/(4αη²).
  return Math.sqrt(((T0 - TW) * 4 * alpha * eta ** 3 * Math.exp(-eta * eta)) / (Math.sqrt(Math.PI) * rate));
}

describe('Lamont equivalence with constant properties, against the analytic solutions', () => {
  it('the centre of a 75 mm bar under the ideal quench matches the erf solution of the end-quench bar within 0.3 mm', () => {
    const R = 0.0375;
    const rate = analyticCentreRate(Infinity, R);
    const zExact = analyticSemiInfiniteDistance(rate) * 1000;
    // The solver: the bar, and a 100 mm specimen with insulated sides (no side loss, as the analytic case).
    const bar = barCooling({ diameterMm: 75, severity: Infinity, material: steel, austenitize: T0, bathTemperature: TW, fractions: [0] });
    // Backward Euler is first order in time: 1.2 % low at the default steps, 0.4 % at 0.3× (measured); the
    // specimen carries the same lag, so the matched distance is closer than the rates.
    expect(Math.abs(bar.points[0].rate700! - rate) / rate).toBeLessThan(0.02);
    const distances = Array.from({ length: 160 }, (_, i) => (i + 1) * 0.25);
    const res = solveConduction({
      material: steel,
      grid: { rFaces: gradedFaces(0.0125, 4), zFaces: gradedFaces(0.1, 80, 1.04) },
      initial: T0,
      outer: { kind: 'insulated' },
      top: { kind: 'insulated' },
      bottom: { kind: 'fixed', temperature: TW },
      probes: distances.map((d) => ({ r: 0.012, z: d / 1000 })),
      time: { dt0: 1e-3, dtMax: 1, targetChange: 5, endTime: 600, stopBelow: 650 },
      watch: [800, 700, 500],
    });
    const run: CoolingRun = { points: res.probes.map((p, i) => ({ at: distances[i], rate700: p.crossings[1].rate, rate500: null, t85: null, lambda: null })), energyImbalance: 0, steps: res.steps, cells: res.cells, seconds: 0 };
    const matched = matchDistance(run, bar.points[0].rate700, 'rate700');
    expect(matched.status).toBe('matched');
    expect(Math.abs(matched.mm! - zExact)).toBeLessThan(0.3);
    // Carslaw & Jaeger series and erf together put it near 0.456 R (17 mm): a figure to compare charts with.
    expect(zExact).toBeGreaterThan(16);
    expect(zExact).toBeLessThan(18);
  });
});

describe('Grossmann critical diameter with constant properties, against the series solution', () => {
  it('matches the D solving rate(centre; Bi = H·D) = rate(centre of DI; Bi = ∞) within 1 %', () => {
    const di = 0.0508; // 2 in
    for (const H of [0.35, 1.0]) {
      const hPerM = H / 0.0254;
      const target = analyticCentreRate(Infinity, di / 2);
      const dExact = Math.exp(bisect((lnD) => analyticCentreRate(hPerM * Math.exp(lnD), Math.exp(lnD) / 2) - target, Math.log(0.002), Math.log(di)));
      const ours = criticalDiameter(di * 1000, H, { material: steel, austenitize: T0, bathTemperature: TW });
      expect(Math.abs(ours.mm / 1000 - dExact) / dExact).toBeLessThan(0.01);
      expect(ours.mm).toBeLessThan(di * 1000);
    }
  });
  it('grows with H and equals DI under the ideal quench', () => {
    const a = criticalDiameter(50.8, 0.35).mm;
    const b = criticalDiameter(50.8, 1.0).mm;
    const c = criticalDiameter(50.8, 5.0).mm;
    expect(a).toBeLessThan(b);
    expect(b).toBeLessThan(c);
    expect(c).toBeLessThan(50.8);
    expect(criticalDiameter(50.8, Infinity).mm).toBe(50.8);
  });
});

describe('cooling parameter λ (common practice)', () => {
  it('λ = 3 is 300 s from 800 to 500 °C; λ = 9 is about 20 °C/min over that range', () => {
    expect(lambdaOf(300)).toBe(3);
    expect(meanRate85(3) * 60).toBeCloseTo(60, 9);
    expect(meanRate85(9) * 60).toBeCloseTo(20, 9);
  });
  it('oil cools about twice as slowly as water and still air tens of times more slowly than oil (45 mm bar centre)', () => {
    const centre = (medium: 'water' | 'oil' | 'air') => {
      const s = severityFor(medium, 'none');
      return barCooling({ diameterMm: 45, severity: (s.low + s.high) / 2, bathTemperature: 20, fractions: [0] }).points[0].t85!;
    };
    const water = centre('water');
    const oil = centre('oil');
    const air = centre('air');
    expect(oil / water).toBeGreaterThan(1.5);
    expect(oil / water).toBeLessThan(3);
    expect(air / oil).toBeGreaterThan(10);
    expect(air / oil).toBeLessThan(100);
  });
});

describe('physics of the equivalence (issue 18 invariants)', () => {
  const eq = (d: number, H: number) => barEquivalence({ diameterMm: d, severity: H, fractions: [1, 0.75, 0] }).locations.map((l) => l.byRate.mm);
  it('distance grows from surface to centre and with diameter', () => {
    let previous = [0, 0, 0];
    for (const d of [20, 30, 45, 60, 80]) {
      const [s, q, c] = eq(d, 0.35);
      expect(s!).toBeLessThan(q!);
      expect(q!).toBeLessThan(c!);
      expect(s!).toBeGreaterThan(previous[0]);
      expect(c!).toBeGreaterThan(previous[2]);
      previous = [s!, q!, c!];
    }
  });
  it('falls as H rises and tends to the ideal quench', () => {
    const centres = [0.2, 0.35, 1, 2, 5, 50].map((H) => eq(45, H)[2]!);
    for (let i = 1; i < centres.length; i++) expect(centres[i]).toBeLessThan(centres[i - 1]);
    const ideal = eq(45, Infinity);
    expect(Math.abs(centres[centres.length - 1] - ideal[2]!)).toBeLessThan(0.5);
    // The ideal-quench surface cools faster than any point of the specimen.
    expect(barEquivalence({ diameterMm: 45, severity: Infinity, fractions: [1] }).locations[0].byRate.status).toBe('nearer_than_first');
  });
  it('energy is conserved in the bar and the specimen runs (within 1 %)', () => {
    const r = barEquivalence({ diameterMm: 45, severity: 0.35 });
    expect(r.bar.energyImbalance).toBeLessThan(0.01);
    expect(r.specimen.energyImbalance).toBeLessThan(0.01);
  });
  it('H converts to h = 2Hk (Grossmann; ASM Handbook Vol. 4)', () => {
    // H = 1 in⁻¹ with k = 25 W/(m·K): h = 2 × 39.37 × 25 = 1968.5 W/(m²·K).
    expect(filmCoefficient(1, steel)).toBeCloseTo(1968.5, 1);
  });
});

describe('quench severity table (ASM Handbook Vol. 4 after Grossmann, from memory)', () => {
  it('states ranges that rise with agitation and from air to oil, water and brine', () => {
    const order = ['none', 'mild', 'moderate', 'good', 'strong', 'violent'];
    for (const row of SEVERITY_TABLE) expect(row.low).toBeLessThanOrEqual(row.high);
    for (const medium of ['oil', 'water', 'brine'] as const) {
      const rows = SEVERITY_TABLE.filter((r) => r.medium === medium).sort((a, b) => order.indexOf(a.agitation) - order.indexOf(b.agitation));
      for (let i = 1; i < rows.length; i++) expect(rows[i].low).toBeGreaterThanOrEqual(rows[i - 1].low);
    }
    const none = (m: 'air' | 'oil' | 'water' | 'brine') => severityFor(m, 'none').high;
    expect(none('air')).toBeLessThan(none('oil'));
    expect(none('oil')).toBeLessThan(none('water'));
    expect(none('water')).toBeLessThan(none('brine'));
    // Table values as commonly quoted: still air 0.02; oil without agitation 0.25–0.30; water without agitation 0.9–1.0.
    expect(severityFor('air').low).toBe(0.02);
    expect([severityFor('oil').low, severityFor('oil').high]).toEqual([0.25, 0.3]);
    expect([severityFor('water').low, severityFor('water').high]).toEqual([0.9, 1.0]);
  });
  it('t8/5 equivalence also grows from surface to centre', () => {
    const l = barEquivalence({ diameterMm: 60, severity: 0.35, fractions: [1, 0.75, 0] }).locations.map((x) => x.byT85.mm!);
    expect(l[0]).toBeLessThan(l[1]);
    expect(l[1]).toBeLessThan(l[2]);
  });
});

describe('grid and time-step refinement (issue: the answer changes by less than 0.5 mm)', () => {
  it('halving the time steps moves no equivalent distance by 0.5 mm (45 mm bar in oil and water; the doubled grid is in bench/quench.bench.ts)', () => {
    for (const H of [0.35, 1.0]) {
      const a = barEquivalence({ diameterMm: 45, severity: H });
      const b = barEquivalence({ diameterMm: 45, severity: H, timeFactor: 0.5 });
      a.locations.forEach((l, i) => expect(Math.abs(l.byRate.mm! - b.locations[i].byRate.mm!)).toBeLessThan(0.5));
    }
  });
});

describe('bar-centre equivalence against a textbook chart (secondary copy, medium-low confidence)', () => {
  // Readings of a textbook figure "equivalent Jominy positions and bar diameter, where the cooling rate for
  // the bar centre is the same as that for the point in the Jominy specimen", as quoted in a secondary copy
  // (the printed figure was not at hand): ideal quench, 75 mm bar → 12.5 mm; still water (H = 1), 50 mm bar →
  // about 12 mm; still oil (H = 0.3), 51 mm bar → 19 mm. Matched at 700 °C ours are 4–8 mm farther
  // (docs/part-to-band.md §4); matched at 500 °C they agree within 2 mm, which is what this checks.
  it('equal cooling rate at 500 °C agrees within 2 mm at the three readings', () => {
    const readings: Array<[number, number, number]> = [
      [75, Infinity, 12.5],
      [50, 1.0, 12],
      [51, 0.3, 19],
    ];
    for (const [d, H, mm] of readings) {
      const r = barEquivalence({ diameterMm: d, severity: H, bathTemperature: 20, fractions: [0] });
      expect(Math.abs(r.locations[0].byRate500.mm! - mm)).toBeLessThan(2);
    }
  });
});

describe('end-quench specimen against the cooling-rate scale of ASTM A255 / SAE J406 (from memory)', () => {
  it('cooling rate at 700 °C within 15 % at J4, J6, J12 and J16 (austenitized at 870 °C)', () => {
    // Scale printed beside the end-quench chart (°F/s at 1300 °F, from memory): J4 125, J6 56, J12 16.3, J16 10.
    const scale: Array<[number, number]> = [
      [4, 125],
      [6, 56],
      [12, 16.3],
      [16, 10],
    ];
    const run = specimenCooling({ austenitize: 870, distancesMm: scale.map(([j]) => j * 1.5875) });
    run.points.forEach((p, i) => {
      const expected = scale[i][1] / 1.8;
      expect(Math.abs(p.rate700! - expected) / expected).toBeLessThan(0.15);
    });
  });
});
