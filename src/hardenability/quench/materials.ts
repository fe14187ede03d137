// Thermal properties of steel for the quench computations: density, conductivity k(T) and specific heat
// c_p(T), with the enthalpy e(T) = ∫ c_p dT tabulated once per material (the solver conserves it).
//
// Sources (the formulas are those printed in the standard; T in °C, k in W/(m·K), c_p in J/(kg·K)):
//  - EN 1993-1-2:2005 (Eurocode 3, structural fire design), §3.4.1 carbon steel:
//      k = 54 − 3.33e-2·T (20 ≤ T < 800), 27.3 (800 ≤ T ≤ 1200);
//      c_p = 425 + 7.73e-1·T − 1.69e-3·T² + 2.22e-6·T³ (20 ≤ T < 600), 666 + 13002/(738 − T) (600–735),
//            545 + 17820/(T − 731) (735–900), 650 (900–1200); density 7850 kg/m³.
//    The peak near 735 °C is the latent heat of the ferrite–austenite change as met on heating.
//  - EN 1993-1-2:2005 Annex C, austenitic stainless steel: k = 14.6 + 1.27e-2·T,
//    c_p = 450 + 0.280·T − 2.91e-4·T² + 1.34e-7·T³ (20–1200 °C); density 7900 kg/m³.
//
// Our choice for a quench (documented in docs/part-to-band.md): a hardenable low-alloy steel cooled from
// austenitizing stays austenite down to well below 700 °C at the cooling rates of interest, so the default
// set "austenite" takes the Annex C austenite formulas (conductivity rising with temperature, no latent
// heat). The BISRA (1953) tables for low-alloy steels were not at hand; at 800–1000 °C Annex C gives
// 24.8–27.3 W/(m·K), the same as EN 1993-1-2's carbon-steel value 27.3 for austenite above 800 °C. The
// set "ferrite_pearlite_en1993" (the carbon-steel formulas with their latent-heat peak) is offered to show
// how much the answer depends on this choice; the constant set is for checks against analytic solutions.
import { HardenabilityInputError } from '../errors.ts';

export interface ThermalMaterial {
  readonly id: string;
  readonly description: string;
  readonly source: string;
  /** kg/m³, constant (the mass of each cell is fixed). */
  readonly density: number;
  /** W/(m·K) at T °C. */
  conductivity(t: number): number;
  /** J/(kg·K) at T °C. */
  specificHeat(t: number): number;
}

/** Temperature range the property formulas cover (°C); outside it the end values are held. */
export const PROPERTY_RANGE = { min: 20, max: 1200 } as const;

const clampT = (t: number) => Math.min(PROPERTY_RANGE.max, Math.max(PROPERTY_RANGE.min, t));

export const AUSTENITE: ThermalMaterial = {
  id: 'austenite',
  description: 'austenite (no transformation on cooling): conductivity rising with temperature',
  source: 'EN 1993-1-2:2005 Annex C (austenitic steel) formulas for k(T) and c_p(T)',
  density: 7900,
  conductivity: (t) => 14.6 + 1.27e-2 * clampT(t),
  specificHeat: (t) => {
    const x = clampT(t);
    return 450 + 0.28 * x - 2.91e-4 * x * x + 1.34e-7 * x * x * x;
  },
};

export const FERRITE_PEARLITE_EN1993: ThermalMaterial = {
  id: 'ferrite_pearlite_en1993',
  description: 'carbon steel as heated: ferrite–pearlite below 735 °C with the latent-heat peak, austenite above',
  source: 'EN 1993-1-2:2005 §3.4.1 (carbon steel) formulas for k(T) and c_p(T)',
  density: 7850,
  conductivity: (t) => {
    const x = clampT(t);
    return x < 800 ? 54 - 3.33e-2 * x : 27.3;
  },
  specificHeat: (t) => {
    const x = clampT(t);
    if (x < 600) return 425 + 7.73e-1 * x - 1.69e-3 * x * x + 2.22e-6 * x * x * x;
    if (x < 735) return 666 + 13002 / (738 - x);
    if (x < 900) return 545 + 17820 / (x - 731);
    return 650;
  },
};

/** Constant properties (for analytic checks), defaults near austenite at 700 °C. */
export function constantMaterial(k = 23.5, cp = 560, density = 7900): ThermalMaterial {
  if (!(k > 0 && cp > 0 && density > 0)) throw new HardenabilityInputError('conductivity, specific heat and density must be positive');
  return { id: 'constant', description: `constant k = ${k} W/(m·K), c_p = ${cp} J/(kg·K)`, source: 'constant properties', density, conductivity: () => k, specificHeat: () => cp };
}

export const MATERIALS: Readonly<Record<string, ThermalMaterial>> = { austenite: AUSTENITE, ferrite_pearlite_en1993: FERRITE_PEARLITE_EN1993 };

export function materialById(id: string): ThermalMaterial {
  const m = MATERIALS[id];
  if (!m) throw new HardenabilityInputError(`unknown material "${id}"; choose ${Object.keys(MATERIALS).join(' or ')}`);
  return m;
}

/**
 * Specific enthalpy e(T) = ∫_0^T c_p dT (J/kg) tabulated every STEP °C from 0 to 1300 °C by the
 * trapezoid rule over a finer grid, and linear between the table points; `slope` is the table's own
 * slope, so that the solver's linearisation e(T) ≈ e(T*) + slope(T*)·(T − T*) is exact inside a table
 * interval. Outside 0–1300 °C the end slope continues.
 */
export interface EnthalpyTable {
  value(t: number): number;
  slope(t: number): number;
}

const STEP = 0.5;
const T_MAX = 1300;
const cache = new WeakMap<ThermalMaterial, EnthalpyTable>();

export function enthalpyTable(material: ThermalMaterial): EnthalpyTable {
  const held = cache.get(material);
  if (held) return held;
  const n = Math.round(T_MAX / STEP);
  const e = new Float64Array(n + 1);
  const sub = 8;
  for (let i = 1; i <= n; i++) {
    const a = (i - 1) * STEP;
    let s = 0;
    for (let j = 0; j < sub; j++) {
      const x0 = a + (j * STEP) / sub;
      const x1 = a + ((j + 1) * STEP) / sub;
      s += 0.5 * (material.specificHeat(x0) + material.specificHeat(x1)) * (x1 - x0);
    }
    e[i] = e[i - 1] + s;
  }
  const index = (t: number) => Math.min(n - 1, Math.max(0, Math.floor(t / STEP)));
  const table: EnthalpyTable = {
    value(t) {
      const i = index(t);
      return e[i] + ((e[i + 1] - e[i]) / STEP) * (t - i * STEP);
    },
    slope(t) {
      const i = index(t);
      return (e[i + 1] - e[i]) / STEP;
    },
  };
  cache.set(material, table);
  return table;
}
