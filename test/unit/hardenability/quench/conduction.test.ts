// The finite-volume solver against analytic solutions with constant properties (Carslaw & Jaeger 1959,
// see analytic.ts), the lumped limit, and the energy balance with temperature-dependent properties.
import { describe, expect, it } from 'vitest';
import { constantMaterial, FERRITE_PEARLITE_EN1993, AUSTENITE, enthalpyTable } from '../../../../src/hardenability/quench/materials.ts';
import { gradedFaces, solveConduction, type ConductionProblem } from '../../../../src/hardenability/quench/conduction.ts';
import { cylinderTheta, rodTheta, erf, besselJ, cylinderRoots } from './analytic.ts';

const k = 25;
const cp = 600;
const rho = 7850;
const alpha = k / (rho * cp);
const steel = constantMaterial(k, cp, rho);

function cylinderRun(bi: number, R: number, fo: number[], nr = 40) {
  const h = (bi * k) / R;
  const problem: ConductionProblem = {
    material: steel,
    grid: { rFaces: gradedFaces(R, nr), zFaces: [0, 1] },
    initial: 850,
    outer: bi === Infinity ? { kind: 'fixed', temperature: 50 } : { kind: 'film', ambient: 50, h: () => h },
    bottom: { kind: 'insulated' },
    top: { kind: 'insulated' },
    probes: [{ r: 0, z: 0.5 }, { r: 0.5 * R, z: 0.5 }, { r: R, z: 0.5 }],
    time: { dt0: 1e-3, dtMax: 0.5, targetChange: 2, endTime: 1, stopBelow: undefined },
    watch: [],
  };
  return fo.map((f) => {
    const res = solveConduction({ ...problem, time: { ...problem.time, endTime: (f * R * R) / alpha } });
    const T = res.temperatures;
    return { fo: f, centre: (T[0] - 50) / 800, imbalance: res.energy.relativeImbalance };
  });
}

describe('helpers of the analytic solutions', () => {
  it('Bessel functions and roots match the printed tables', () => {
    // Abramowitz & Stegun Table 9.1: J0(1) = 0.7651976866, J1(1) = 0.4400505857; Table 9.5: first zeros of J0 2.4048255577, 5.5200781103.
    expect(besselJ(0, 1)).toBeCloseTo(0.7651976866, 9);
    expect(besselJ(1, 1)).toBeCloseTo(0.4400505857, 9);
    const [a, b] = cylinderRoots(Infinity, 2);
    expect(a).toBeCloseTo(2.4048255577, 8);
    expect(b).toBeCloseTo(5.5200781103, 8);
    // Carslaw & Jaeger Appendix IV (roots of βJ1(β) = Bi·J0(β)): Bi = 1 first root 1.2558 (also Incropera Table 5.1: 1.2558).
    expect(cylinderRoots(1, 1)[0]).toBeCloseTo(1.2558, 4);
    // A&S 7.1: erf(0.5) = 0.5204998778.
    expect(erf(0.5)).toBeCloseTo(0.5204998778, 9);
  });
});

describe('long cylinder against the series solution (Carslaw & Jaeger §7.4, §7.6)', () => {
  const R = 0.025;
  it('surface held at the bath temperature: centre within 0.3 % of the initial difference', () => {
    for (const r of cylinderRun(Infinity, R, [0.05, 0.1, 0.2, 0.4])) {
      expect(Math.abs(r.centre - cylinderTheta(Infinity, 0, r.fo))).toBeLessThan(3e-3);
    }
  });
  it('film coefficient, Bi = 1 and Bi = 5: centre within 0.3 %', () => {
    for (const bi of [1, 5]) {
      for (const r of cylinderRun(bi, R, [0.1, 0.3, 0.6])) {
        expect(Math.abs(r.centre - cylinderTheta(bi, 0, r.fo))).toBeLessThan(3e-3);
      }
    }
  });
  it('refining the grid and the time step moves the answer towards the series (convergence)', () => {
    const exact = cylinderTheta(5, 0, 0.2);
    const coarse = Math.abs(cylinderRun(5, R, [0.2], 10)[0].centre - exact);
    const fine = Math.abs(cylinderRun(5, R, [0.2], 40)[0].centre - exact);
    expect(fine).toBeLessThan(coarse);
  });
  it('lumped limit (Bi = 0.01): T − T∞ decays as exp(−2h·t/(ρ·c·R)) (Incropera & DeWitt §5.2)', () => {
    const bi = 0.01;
    const h = (bi * k) / R;
    const t = 2000;
    const res = solveConduction({
      material: steel,
      grid: { rFaces: gradedFaces(R, 10), zFaces: [0, 1] },
      initial: 850,
      outer: { kind: 'film', ambient: 50, h: () => h },
      bottom: { kind: 'insulated' },
      top: { kind: 'insulated' },
      probes: [],
      time: { dt0: 0.1, dtMax: 5, targetChange: 2, endTime: t },
      watch: [],
    });
    const lumped = Math.exp((-2 * h * t) / (rho * cp * R));
    expect(Math.abs((res.temperatures[0] - 50) / 800 - lumped)).toBeLessThan(0.01 * lumped);
  });
});

describe('axial conduction in the end-quench geometry', () => {
  it('insulated sides, end held: the finite-rod series (Carslaw & Jaeger §3.3) and erf near the end (§2.4)', () => {
    const L = 0.1;
    const t = 60;
    const res = solveConduction({
      material: steel,
      grid: { rFaces: gradedFaces(0.0125, 4), zFaces: gradedFaces(L, 120, 1.02) },
      initial: 850,
      outer: { kind: 'insulated' },
      top: { kind: 'insulated' },
      bottom: { kind: 'fixed', temperature: 50 },
      probes: [],
      time: { dt0: 1e-3, dtMax: 0.25, targetChange: 2, endTime: t },
      watch: [],
    });
    // Cell centres along the axis at the end time.
    const faces = gradedFaces(L, 120, 1.02);
    for (const mm of [5, 10, 20, 40]) {
      const j = faces.findIndex((f) => f > mm / 1000) - 1;
      const zc = 0.5 * (faces[j] + faces[j + 1]);
      const theta = (res.temperatures[j * 4] - 50) / 800;
      expect(Math.abs(theta - rodTheta(zc, L, alpha * t))).toBeLessThan(3e-3);
      // 100 mm is long enough at 60 s that the rod behaves as semi-infinite near the end.
      if (mm <= 20) expect(Math.abs(theta - erf(zc / (2 * Math.sqrt(alpha * t))))).toBeLessThan(4e-3);
    }
  });
});

describe('energy balance (heat removed equals the enthalpy change, issue requirement 1 %)', () => {
  it('holds with temperature-dependent k and c_p, including the latent-heat peak of EN 1993-1-2', () => {
    for (const material of [AUSTENITE, FERRITE_PEARLITE_EN1993]) {
      const res = solveConduction({
        material,
        grid: { rFaces: gradedFaces(0.0125, 8), zFaces: gradedFaces(0.1, 50, 1.05) },
        initial: 900,
        outer: { kind: 'film', ambient: 20, h: (ts) => 10 + 0.05 * ts },
        top: { kind: 'film', ambient: 20, h: () => 20 },
        bottom: { kind: 'fixed', temperature: 20 },
        probes: [{ r: 0, z: 0.05 }],
        time: { dt0: 1e-3, dtMax: 2, targetChange: 5, endTime: 300 },
        watch: [700],
      });
      expect(res.energy.relativeImbalance).toBeLessThan(0.01);
      // The enthalpy really changed (a body that did not cool would pass trivially).
      expect(res.energy.removed).toBeGreaterThan(0.2 * res.energy.initial);
    }
  });
});

describe('property formulas of EN 1993-1-2:2005', () => {
  it('print the standard values at sample temperatures', () => {
    // §3.4.1.3: k(20) = 54 − 0.666 = 53.334; k(800+) = 27.3. §3.4.1.2: c(20) = 439.8 (425 + 15.46 − 0.676 + 0.0178); c(900+) = 650.
    expect(FERRITE_PEARLITE_EN1993.conductivity(20)).toBeCloseTo(53.334, 3);
    expect(FERRITE_PEARLITE_EN1993.conductivity(900)).toBe(27.3);
    expect(FERRITE_PEARLITE_EN1993.specificHeat(20)).toBeCloseTo(439.8, 1);
    expect(FERRITE_PEARLITE_EN1993.specificHeat(1000)).toBe(650);
    // Annex C: k(20) = 14.854, k(800) = 24.76; c(20) = 455.5.
    expect(AUSTENITE.conductivity(800)).toBeCloseTo(24.76, 2);
    expect(AUSTENITE.specificHeat(20)).toBeCloseTo(455.48, 1);
  });
  it('the enthalpy table integrates c_p (a polynomial integrated exactly by hand)', () => {
    const e = enthalpyTable(AUSTENITE);
    // ∫_20^800 (450 + 0.28T − 2.91e-4T² + 1.34e-7T³) dT by the antiderivative.
    const F = (T: number) => 450 * T + 0.14 * T * T - (2.91e-4 / 3) * T ** 3 + (1.34e-7 / 4) * T ** 4;
    expect(e.value(800) - e.value(20)).toBeCloseTo(F(800) - F(20), -1);
  });
});
