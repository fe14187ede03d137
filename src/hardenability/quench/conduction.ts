// Transient heat conduction in an axisymmetric body (r–z), implicit finite volumes.
//
// Method (S. V. Patankar, Numerical Heat Transfer and Fluid Flow, 1980, ch. 3–4; the enthalpy form as in
// V. R. Voller & C. R. Swaminathan, Numer. Heat Transfer B 19 (1991) 175–189):
//   ρ·V_P·(e(T_P^{n+1}) − e(T_P^n))/Δt = Σ_nb G_P,nb·(T_nb^{n+1} − T_P^{n+1}) + Σ_faces U_f·(T_∞,f − T_P^{n+1})
// backward Euler in time (unconditionally stable), e(T) = ∫c_p dT the specific enthalpy, conductances
// from series resistances between cell centres with k at each cell's temperature:
//   radial face at r_f between centres r_a < r_f < r_b: R = ln(r_f/r_a)/(2π·k_a·Δz) + ln(r_b/r_f)/(2π·k_b·Δz)
//   (exact for steady radial conduction; Carslaw & Jaeger, Conduction of Heat in Solids, 2nd ed., §7.2),
//   axial face: R = d_a/(k_a·A) + d_b/(k_b·A), A = π(r_out² − r_in²);
//   a surface: the half-cell resistance plus 1/(h·A) for a film coefficient h, or the half cell alone
//   when the surface is held at a fixed temperature (an ideal quench).
// The non-linearity (k(T), c_p(T), h(T_surface)) is resolved at each step by iterating on the
// linearisation e(T) ≈ e(T*) + e'(T*)(T − T*) with conductances at T*, until the largest change is below
// 1e-4 K. Interior fluxes cancel in pairs, so the heat leaving through the surfaces equals the change of
// the body's enthalpy up to that tolerance: the solver reports both.
//
// Time steps adapt: each step aims at a largest cell change of `targetChange` kelvin, a step that changes
// a cell by more than twice that is repeated with half the step. Pure: no I/O.
import { BandMatrix, solveBanded, solveTridiagonal } from './bandSolve.ts';
import { enthalpyTable, type ThermalMaterial } from './materials.ts';
import { HardenabilityInputError } from '../errors.ts';

/** A surface: insulated, held at a temperature (ideal quench), or cooled by a film coefficient h(T_surface) in W/(m²·K). */
export type SurfaceCondition =
  | { kind: 'insulated' }
  | { kind: 'fixed'; temperature: number }
  | { kind: 'film'; ambient: number; h: (surfaceTemperature: number) => number };

export interface ConductionGrid {
  /** Radial cell faces (m), from 0 up to the radius, strictly increasing. */
  rFaces: readonly number[];
  /** Axial cell faces (m), from 0 up to the length, strictly increasing; two faces for a long bar (one cell). */
  zFaces: readonly number[];
}

export interface ConductionProblem {
  material: ThermalMaterial;
  grid: ConductionGrid;
  /** Uniform starting temperature (°C). */
  initial: number;
  outer: SurfaceCondition;
  /** Face z = 0 and face z = length. */
  bottom: SurfaceCondition;
  top: SurfaceCondition;
  /** Points (m) whose temperature history is followed. */
  probes: ReadonlyArray<{ r: number; z: number }>;
  time: {
    /** First step (s). */
    dt0: number;
    /** Largest step (s). */
    dtMax: number;
    /** Wanted largest change of a cell in one step (K). */
    targetChange: number;
    /** Stop at this time (s) at the latest. */
    endTime: number;
    /** Stop once every probe is below this temperature (°C). */
    stopBelow?: number;
  };
  /** Temperatures at which each probe's crossing time and cooling rate are recorded (°C). */
  watch: readonly number[];
}

export interface ProbeHistory {
  r: number;
  z: number;
  /** Per watched temperature: time of crossing (s) and cooling rate there (K/s, positive when cooling); null if not reached. */
  crossings: Array<{ temperature: number; time: number | null; rate: number | null }>;
  /** Lowest temperature reached (°C). */
  final: number;
}

export interface ConductionResult {
  time: number;
  steps: number;
  rejectedSteps: number;
  probes: ProbeHistory[];
  energy: {
    /** J: body enthalpy at start and end (per radian of the axisymmetric body times 2π, i.e. the whole body). */
    initial: number;
    final: number;
    /** J: heat that left through the surfaces. */
    removed: number;
    /** |(initial − final) − removed| / (initial − final). */
    relativeImbalance: number;
  };
  /** Final temperatures by cell, index j·nr + i. */
  temperatures: Float64Array;
  cells: { nr: number; nz: number };
}

const TOLERANCE_K = 1e-4;
const MAX_ITERATIONS = 30;

function checkFaces(faces: readonly number[], name: string) {
  if (faces.length < 2 || faces[0] !== 0) throw new HardenabilityInputError(`${name} faces must start at 0 and hold at least two values`);
  for (let i = 1; i < faces.length; i++) if (!(faces[i] > faces[i - 1])) throw new HardenabilityInputError(`${name} faces must increase strictly`);
}

/** Faces 0..length in n cells, the cells growing by a constant ratio from `first` at 0 (ratio 1: uniform). */
export function gradedFaces(length: number, n: number, ratio = 1): number[] {
  if (!(length > 0) || !(n >= 1) || !(ratio > 0)) throw new HardenabilityInputError('a grid needs a positive length, at least one cell and a positive ratio');
  const weights = Array.from({ length: n }, (_, i) => ratio ** i);
  const total = weights.reduce((a, b) => a + b, 0);
  const faces = [0];
  for (const w of weights) faces.push(faces[faces.length - 1] + (length * w) / total);
  faces[n] = length;
  return faces;
}

interface Boundary {
  cell: number;
  area: number;
  /** Conduction resistance from the cell centre to the face, per unit k (the caller divides by k). */
  geometric: (k: number) => number;
  condition: SurfaceCondition;
}

export function solveConduction(problem: ConductionProblem): ConductionResult {
  const { material, grid } = problem;
  checkFaces(grid.rFaces, 'radial');
  checkFaces(grid.zFaces, 'axial');
  const nr = grid.rFaces.length - 1;
  const nz = grid.zFaces.length - 1;
  const n = nr * nz;
  const rf = grid.rFaces;
  const zf = grid.zFaces;
  const R = rf[nr];
  const L = zf[nz];
  const rc = Array.from({ length: nr }, (_, i) => 0.5 * (rf[i] + rf[i + 1]));
  const zc = Array.from({ length: nz }, (_, j) => 0.5 * (zf[j] + zf[j + 1]));
  const ring = Array.from({ length: nr }, (_, i) => Math.PI * (rf[i + 1] ** 2 - rf[i] ** 2));
  const dz = Array.from({ length: nz }, (_, j) => zf[j + 1] - zf[j]);
  const volume = new Float64Array(n);
  for (let j = 0; j < nz; j++) for (let i = 0; i < nr; i++) volume[j * nr + i] = ring[i] * dz[j];
  const table = enthalpyTable(material);
  const rho = material.density;

  const boundaries: Boundary[] = [];
  for (let j = 0; j < nz; j++) {
    const area = 2 * Math.PI * R * dz[j];
    const lnPart = Math.log(R / rc[nr - 1]) / (2 * Math.PI * dz[j]);
    boundaries.push({ cell: j * nr + nr - 1, area, geometric: (k) => lnPart / k, condition: problem.outer });
  }
  for (let i = 0; i < nr; i++) {
    boundaries.push({ cell: i, area: ring[i], geometric: (k) => (zc[0] - zf[0]) / (k * ring[i]), condition: problem.bottom });
    boundaries.push({ cell: (nz - 1) * nr + i, area: ring[i], geometric: (k) => (zf[nz] - zc[nz - 1]) / (k * ring[i]), condition: problem.top });
  }

  let T: Float64Array = new Float64Array(n).fill(problem.initial);
  const kCell = new Float64Array(n);
  const surfaceT = new Float64Array(boundaries.length).fill(problem.initial);

  /** Conductance U (W/K) of a boundary and its ambient at the current iterate. */
  function boundaryConductance(b: Boundary, index: number, tCell: number, k: number): { u: number; ambient: number; rCond: number } {
    const rCond = b.geometric(k);
    const c = b.condition;
    if (c.kind === 'fixed') return { u: 1 / rCond, ambient: c.temperature, rCond };
    if (c.kind === 'film') {
      const h = c.h(surfaceT[index]);
      if (!(h >= 0) || !Number.isFinite(h)) throw new HardenabilityInputError(`the film coefficient must be a finite non-negative number (got ${h})`);
      return { u: h > 0 ? 1 / (rCond + 1 / (h * b.area)) : 0, ambient: c.ambient, rCond };
    }
    return { u: 0, ambient: tCell, rCond };
  }

  const banded = nz > 1 ? new BandMatrix(n, nr) : null;
  const lower = new Float64Array(n);
  const diag = new Float64Array(n);
  const upper = new Float64Array(n);
  const rhs = new Float64Array(n);
  const boundaryU = new Float64Array(boundaries.length);
  const boundaryAmbient = new Float64Array(boundaries.length);
  const boundaryRc = new Float64Array(boundaries.length);

  const add = (a: number, b: number, v: number) => {
    if (banded) banded.add(a, b, v);
    else if (a === b) diag[a] += v;
    else if (b === a - 1) lower[a] += v;
    else upper[a] += v;
  };

  /** One implicit step from `old` over dt; returns the new field. */
  function step(old: Float64Array, dt: number): Float64Array {
    let iterate: Float64Array = Float64Array.from(old);
    for (let it = 0; it < MAX_ITERATIONS; it++) {
      for (let c = 0; c < n; c++) kCell[c] = material.conductivity(iterate[c]);
      if (banded) banded.clear();
      diag.fill(0);
      lower.fill(0);
      upper.fill(0);
      for (let c = 0; c < n; c++) {
        const slope = table.slope(iterate[c]);
        const cap = (rho * volume[c] * slope) / dt;
        add(c, c, cap);
        rhs[c] = (rho * volume[c] * (slope * iterate[c] - (table.value(iterate[c]) - table.value(old[c])))) / dt;
      }
      for (let j = 0; j < nz; j++) {
        for (let i = 0; i < nr; i++) {
          const a = j * nr + i;
          if (i + 1 < nr) {
            const b = a + 1;
            const res = Math.log(rf[i + 1] / rc[i]) / (2 * Math.PI * kCell[a] * dz[j]) + Math.log(rc[i + 1] / rf[i + 1]) / (2 * Math.PI * kCell[b] * dz[j]);
            const g = 1 / res;
            add(a, a, g);
            add(b, b, g);
            add(a, b, -g);
            add(b, a, -g);
          }
          if (j + 1 < nz) {
            const b = a + nr;
            const res = (zf[j + 1] - zc[j]) / (kCell[a] * ring[i]) + (zc[j + 1] - zf[j + 1]) / (kCell[b] * ring[i]);
            const g = 1 / res;
            add(a, a, g);
            add(b, b, g);
            add(a, b, -g);
            add(b, a, -g);
          }
        }
      }
      boundaries.forEach((b, index) => {
        if (b.condition.kind === 'insulated') return;
        const { u, ambient, rCond } = boundaryConductance(b, index, iterate[b.cell], kCell[b.cell]);
        boundaryU[index] = u;
        boundaryAmbient[index] = ambient;
        boundaryRc[index] = rCond;
        add(b.cell, b.cell, u);
        rhs[b.cell] += u * ambient;
      });
      const next = banded ? solveBanded(banded, Float64Array.from(rhs)) : solveTridiagonal(lower, diag, upper, Float64Array.from(rhs));
      let change = 0;
      for (let c = 0; c < n; c++) change = Math.max(change, Math.abs(next[c] - iterate[c]));
      iterate = next;
      // Surface temperatures for the next film coefficients.
      boundaries.forEach((b, index) => {
        const c = b.condition;
        if (c.kind === 'insulated') surfaceT[index] = iterate[b.cell];
        else if (c.kind === 'fixed') surfaceT[index] = c.temperature;
        else surfaceT[index] = iterate[b.cell] - boundaryU[index] * (iterate[b.cell] - boundaryAmbient[index]) * boundaryRc[index];
      });
      if (change < TOLERANCE_K) break;
    }
    return iterate;
  }

  // Probes: interpolation in r over [0, centres, R] and in z over [0, centres, L] (surface values from the boundaries).
  const bottomIndex = (i: number) => nz + 2 * i; // boundaries: nz outer, then bottom/top pairs
  const topIndex = (i: number) => nz + 2 * i + 1;
  const outerIndex = (j: number) => j;
  function valueAt(field: Float64Array, r: number, z: number): number {
    const column = (j: number): number => {
      // Temperature at radius r in cell row j.
      if (r <= rc[0]) {
        if (nr === 1) return field[j * nr];
        const a = field[j * nr];
        const b = field[j * nr + 1];
        // Near the axis T ≈ α + β·r² (symmetry).
        const beta = (b - a) / (rc[1] ** 2 - rc[0] ** 2);
        return a + beta * (r * r - rc[0] ** 2);
      }
      if (r >= rc[nr - 1]) {
        const s = surfaceT[outerIndex(j)];
        const a = field[j * nr + nr - 1];
        return a + ((s - a) * (r - rc[nr - 1])) / (R - rc[nr - 1]);
      }
      let i = 0;
      while (rc[i + 1] < r) i++;
      const w = (r - rc[i]) / (rc[i + 1] - rc[i]);
      return field[j * nr + i] * (1 - w) + field[j * nr + i + 1] * w;
    };
    if (nz === 1) return column(0);
    const surfaceColumn = (which: 'bottom' | 'top'): number => {
      // Face temperature at radius r: interpolate the face values of the rings.
      const idx = (i: number) => (which === 'bottom' ? bottomIndex(i) : topIndex(i));
      if (r <= rc[0]) return surfaceT[idx(0)];
      if (r >= rc[nr - 1]) return surfaceT[idx(nr - 1)];
      let i = 0;
      while (rc[i + 1] < r) i++;
      const w = (r - rc[i]) / (rc[i + 1] - rc[i]);
      return surfaceT[idx(i)] * (1 - w) + surfaceT[idx(i + 1)] * w;
    };
    if (z <= zc[0]) {
      const s = surfaceColumn('bottom');
      return s + ((column(0) - s) * z) / zc[0];
    }
    if (z >= zc[nz - 1]) {
      const s = surfaceColumn('top');
      const a = column(nz - 1);
      return a + ((s - a) * (z - zc[nz - 1])) / (L - zc[nz - 1]);
    }
    let j = 0;
    while (zc[j + 1] < z) j++;
    const w = (z - zc[j]) / (zc[j + 1] - zc[j]);
    return column(j) * (1 - w) + column(j + 1) * w;
  }

  for (const p of problem.probes) {
    if (!(p.r >= 0 && p.r <= R + 1e-12 && p.z >= 0 && p.z <= L + 1e-12)) throw new HardenabilityInputError(`probe (r ${p.r} m, z ${p.z} m) lies outside the body`);
  }
  const watch = [...problem.watch].sort((a, b) => b - a);
  const histories = problem.probes.map((p) => ({
    r: p.r,
    z: p.z,
    last: problem.initial,
    lastSlope: null as null | { mid: number; rate: number },
    crossings: watch.map((temperature) => ({ temperature, time: null as number | null, rate: null as number | null })),
    final: problem.initial,
  }));

  const enthalpyOf = (field: Float64Array) => {
    let s = 0;
    for (let c = 0; c < n; c++) s += rho * volume[c] * table.value(field[c]);
    return s;
  };
  const initialEnergy = enthalpyOf(T);
  let removed = 0;
  let t = 0;
  let dt = problem.time.dt0;
  let steps = 0;
  let rejected = 0;
  const { dtMax, targetChange, endTime, stopBelow } = problem.time;
  if (!(dt > 0 && dtMax >= dt && targetChange > 0 && endTime > 0)) throw new HardenabilityInputError('time stepping needs dt0 > 0, dtMax ≥ dt0, a positive target change and end time');
  const savedSurface = new Float64Array(surfaceT.length);

  while (t < endTime - 1e-12) {
    const h = Math.min(dt, endTime - t);
    savedSurface.set(surfaceT);
    const next = step(T, h);
    let change = 0;
    for (let c = 0; c < n; c++) change = Math.max(change, Math.abs(next[c] - T[c]));
    if (change > 2 * targetChange && h > 1e-6) {
      surfaceT.set(savedSurface);
      dt = h / 2;
      rejected++;
      continue;
    }
    // Heat out over the step, with the conductances of the converged iterate.
    for (const [index, b] of boundaries.entries()) {
      if (b.condition.kind === 'insulated') continue;
      removed += h * boundaryU[index] * (next[b.cell] - boundaryAmbient[index]);
    }
    for (const hist of histories) {
      const v = valueAt(next, hist.r, hist.z);
      const rate = (hist.last - v) / h;
      const slope = { mid: 0.5 * (hist.last + v), rate };
      for (const cr of hist.crossings) {
        if (cr.time === null && hist.last >= cr.temperature && v < cr.temperature) cr.time = t + (h * (hist.last - cr.temperature)) / (hist.last - v);
        // Rate at the crossing: between the last chord whose mid temperature lies above it and the first at or below.
        if (cr.time !== null && cr.rate === null && slope.mid <= cr.temperature) {
          const prev = hist.lastSlope;
          if (prev && prev.mid > cr.temperature) {
            const w = (prev.mid - cr.temperature) / (prev.mid - slope.mid);
            cr.rate = prev.rate * (1 - w) + slope.rate * w;
          } else cr.rate = slope.rate;
        }
      }
      hist.last = v;
      hist.lastSlope = slope;
      hist.final = Math.min(hist.final, v);
    }
    T = next;
    t += h;
    steps++;
    dt = Math.min(dtMax, h * Math.min(1.5, Math.max(0.5, targetChange / Math.max(change, 1e-12))));
    if (stopBelow !== undefined && histories.every((hh) => hh.last < stopBelow)) break;
  }
  const finalEnergy = enthalpyOf(T);
  const drop = initialEnergy - finalEnergy;
  return {
    time: t,
    steps,
    rejectedSteps: rejected,
    probes: histories.map((h) => ({ r: h.r, z: h.z, crossings: h.crossings, final: h.final })),
    energy: { initial: initialEnergy, final: finalEnergy, removed, relativeImbalance: drop !== 0 ? Math.abs(drop - removed) / Math.abs(drop) : 0 },
    temperatures: T,
    cells: { nr, nz },
  };
}
