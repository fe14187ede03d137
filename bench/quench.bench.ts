// Benchmark: the heat-conduction runs behind the part-to-band estimate, and the grid/time-step refinement
// study (the issue asks for refinement until the equivalent distance changes by less than 0.5 mm).
// Run: node --import tsx bench/quench.bench.ts   (prints timings and differences; no assertions on time)
import { timeBest } from './timing.ts';
import { specimenCooling } from '../src/hardenability/quench/cooling.ts';
import { barCooling } from '../src/hardenability/quench/cooling.ts';
import { barEquivalence, criticalDiameter } from '../src/hardenability/quench/equivalence.ts';
import { estimatePart } from '../src/analysis/partRequirement.ts';

const spec = timeBest('end-quench specimen, default grid (10 × 80 cells)', 3, () => specimenCooling()).result;
console.log(`  steps ${spec.steps}, energy imbalance ${spec.energyImbalance.toExponential(1)}`);
timeBest('long round bar 45 mm, oil H 0.275 (40 cells)', 5, () => barCooling({ diameterMm: 45, severity: 0.275 }));
timeBest('part estimate 45 mm oil centre (3 bar runs; specimen cached)', 5, () => estimatePart({ diameterMm: 45, quench: { medium: 'oil' }, location: 'centre', requiredHrc: 40 }));
timeBest('Grossmann critical diameter DI 50.8 mm, H 0.35 (bisection)', 3, () => criticalDiameter(50.8, 0.35));

// Refinement: grid ×2 in each direction, time steps ×0.5, both; equivalent distances at surface, 3/4 radius, centre.
const cases: Array<{ name: string; d: number; H: number }> = [
  { name: '20 mm oil', d: 20, H: 0.275 },
  { name: '45 mm oil', d: 45, H: 0.275 },
  { name: '80 mm oil', d: 80, H: 0.275 },
  { name: '20 mm water', d: 20, H: 0.95 },
  { name: '45 mm water', d: 45, H: 0.95 },
  { name: '80 mm water', d: 80, H: 0.95 },
];
const settings = [
  { label: 'default', refine: 1, timeFactor: 1 },
  { label: 'grid ×2', refine: 2, timeFactor: 1 },
  { label: 'steps ×0.5', refine: 1, timeFactor: 0.5 },
  { label: 'grid ×2, steps ×0.5', refine: 2, timeFactor: 0.5 },
];
const t0 = performance.now();
let worst = 0;
const base = new Map<string, number[]>();
for (const s of settings) {
  for (const c of cases) {
    const r = barEquivalence({ diameterMm: c.d, severity: c.H, fractions: [1, 0.75, 0], refine: s.refine, timeFactor: s.timeFactor });
    const mm = r.locations.map((l) => l.byRate.mm ?? NaN);
    if (s.label === 'default') base.set(c.name, mm);
    const diff = mm.map((v, i) => Math.abs(v - base.get(c.name)![i]));
    worst = Math.max(worst, ...diff);
    console.log(`${s.label.padEnd(20)} ${c.name.padEnd(12)} surface ${mm[0].toFixed(2)}  3/4 R ${mm[1].toFixed(2)}  centre ${mm[2].toFixed(2)} mm  (|Δ| from default ≤ ${Math.max(...diff).toFixed(3)} mm)`);
  }
}
console.log(`refinement study: largest change of an equivalent distance ${worst.toFixed(3)} mm (issue limit 0.5 mm), ${((performance.now() - t0) / 1000).toFixed(1)} s`);
