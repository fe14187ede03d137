// Quench severity: Grossmann's H and the media it is usually quoted for.
//  - Definition: H = h/(2k) (in⁻¹), h the surface heat-transfer coefficient and k the conductivity of the
//    steel (M. A. Grossmann, M. Asimow & S. F. Urban, "Hardenability, its relation to quenching and some
//    quantitative data", in Hardenability of Alloy Steels, ASM 1939; restated in ASM Handbook Vol. 4,
//    Heat Treating, 1991, "Quenching of steel"). So a bar of diameter D has the Biot number h·R/k = H·D.
//    We convert with k at 700 °C, the temperature of Lamont's cooling-rate criterion (our choice).
//  - Typical H by medium and agitation: the table reproduced in ASM Handbook Vol. 4 (1991) after Grossmann,
//    values as commonly quoted (from memory; the handbook page was not at hand). Real quenches vary with
//    agitation, bath temperature, contamination and part surface: the range is the message, not the mid value.
import { HardenabilityInputError } from '../errors.ts';
import type { ThermalMaterial } from './materials.ts';

export const M_PER_INCH = 0.0254;

export type Medium = 'air' | 'oil' | 'water' | 'brine';
export type Agitation = 'none' | 'mild' | 'moderate' | 'good' | 'strong' | 'violent';

export interface SeverityRange {
  medium: Medium;
  agitation: Agitation;
  /** Grossmann H, in⁻¹. */
  low: number;
  high: number;
  /** Bath temperature assumed (°C; common practice: oils run at 40–80 °C, water and brine near room temperature). */
  bathTemperature: number;
}

/** ASM Handbook Vol. 4 (1991) table of H values after Grossmann, as commonly reproduced (from memory). */
export const SEVERITY_TABLE: readonly SeverityRange[] = [
  { medium: 'air', agitation: 'none', low: 0.02, high: 0.02, bathTemperature: 20 },
  { medium: 'oil', agitation: 'none', low: 0.25, high: 0.3, bathTemperature: 60 },
  { medium: 'oil', agitation: 'mild', low: 0.3, high: 0.35, bathTemperature: 60 },
  { medium: 'oil', agitation: 'moderate', low: 0.35, high: 0.4, bathTemperature: 60 },
  { medium: 'oil', agitation: 'good', low: 0.4, high: 0.5, bathTemperature: 60 },
  { medium: 'oil', agitation: 'strong', low: 0.5, high: 0.8, bathTemperature: 60 },
  { medium: 'oil', agitation: 'violent', low: 0.8, high: 1.1, bathTemperature: 60 },
  { medium: 'water', agitation: 'none', low: 0.9, high: 1.0, bathTemperature: 20 },
  { medium: 'water', agitation: 'mild', low: 1.0, high: 1.1, bathTemperature: 20 },
  { medium: 'water', agitation: 'moderate', low: 1.2, high: 1.3, bathTemperature: 20 },
  { medium: 'water', agitation: 'good', low: 1.4, high: 1.5, bathTemperature: 20 },
  { medium: 'water', agitation: 'strong', low: 1.6, high: 2.0, bathTemperature: 20 },
  { medium: 'water', agitation: 'violent', low: 4.0, high: 4.0, bathTemperature: 20 },
  { medium: 'brine', agitation: 'none', low: 2.0, high: 2.0, bathTemperature: 20 },
  { medium: 'brine', agitation: 'mild', low: 2.0, high: 2.2, bathTemperature: 20 },
  { medium: 'brine', agitation: 'violent', low: 5.0, high: 5.0, bathTemperature: 20 },
];

export function severityFor(medium: Medium, agitation: Agitation = 'none'): SeverityRange {
  const row = SEVERITY_TABLE.find((r) => r.medium === medium && r.agitation === agitation);
  if (!row) {
    const offered = SEVERITY_TABLE.filter((r) => r.medium === medium).map((r) => r.agitation);
    throw new HardenabilityInputError(`no typical H for ${medium} with ${agitation} agitation; the table has ${offered.join(', ') || 'no row for this medium'}`);
  }
  return row;
}

/** Mid value of a range (what a calculation uses by default). */
export const midSeverity = (r: SeverityRange) => (r.low + r.high) / 2;

/** Temperature (°C) at which H is turned into h. */
export const SEVERITY_REFERENCE_TEMPERATURE = 700;

/** h (W/(m²·K)) for a Grossmann H (in⁻¹): h = 2·H·k, k at 700 °C. */
export function filmCoefficient(hInPerInch: number, material: ThermalMaterial): number {
  if (!(hInPerInch > 0) || !Number.isFinite(hInPerInch)) throw new HardenabilityInputError(`the quench severity H must be a positive number of in⁻¹ (got ${hInPerInch})`);
  return (2 * hInPerInch * material.conductivity(SEVERITY_REFERENCE_TEMPERATURE)) / M_PER_INCH;
}
