// Hardness numbers from the measured quantities, as defined by the ISO test standards.
// Sources: ISO 6507-1 (Vickers): HV = 0.102 x 2F sin(136 deg / 2) / d^2 ~= 0.1891 F / d^2 (F in N,
// d mean diagonal in mm); ISO 6506-1 (Brinell): HBW = 0.102 x 2F / (pi D (D - sqrt(D^2 - d^2)));
// ISO 6508-1 (Rockwell C): HRC = 100 - h / 0.002 mm (h permanent depth in mm).
// Validity ranges (flagged, not refused): ISO 6506-1 asks 0.24 D <= d <= 0.6 D; ISO 6508-1 gives the
// HRC scale as 20-70 HRC; ISO 6507-1 asks the two diagonals of an indent on a flat surface to differ
// by no more than 5 %.

import { HardenabilityInputError } from './errors.ts';

/** kgf per newton used by the ISO hardness definitions (1 / 9.80665, rounded as in the standards). */
export const KGF_PER_N = 0.102;

export interface HardnessValue {
  value: number;
  scale: 'HV' | 'HBW' | 'HRC';
  /** Standard whose definition was used. */
  definition: string;
  warnings: string[];
}

function positive(name: string, v: number): void {
  if (!Number.isFinite(v) || v <= 0) throw new HardenabilityInputError(`${name} must be a positive number (got ${v})`);
}

/** Vickers hardness from test force (N) and the two indent diagonals (mm). */
export function vickersHardness(forceN: number, diagonal1Mm: number, diagonal2Mm: number = diagonal1Mm): HardnessValue {
  positive('test force', forceN);
  positive('diagonal 1', diagonal1Mm);
  positive('diagonal 2', diagonal2Mm);
  const d = (diagonal1Mm + diagonal2Mm) / 2;
  const value = (KGF_PER_N * 2 * forceN * Math.sin((136 / 2) * (Math.PI / 180))) / (d * d);
  const warnings: string[] = [];
  const spread = Math.abs(diagonal1Mm - diagonal2Mm) / d;
  if (spread > 0.05) warnings.push(`the two diagonals differ by ${(spread * 100).toFixed(1)} % (ISO 6507-1 expects at most 5 % on a flat surface)`);
  return { value, scale: 'HV', definition: 'ISO 6507-1', warnings };
}

/** Brinell hardness (tungsten carbide ball) from force (N), ball and mean indentation diameters (mm). */
export function brinellHardness(forceN: number, ballMm: number, indentMm: number): HardnessValue {
  positive('test force', forceN);
  positive('ball diameter', ballMm);
  positive('indentation diameter', indentMm);
  if (indentMm >= ballMm) throw new HardenabilityInputError(`indentation ${indentMm} mm cannot be as wide as the ball (${ballMm} mm)`);
  const value = (KGF_PER_N * 2 * forceN) / (Math.PI * ballMm * (ballMm - Math.sqrt(ballMm ** 2 - indentMm ** 2)));
  const warnings: string[] = [];
  const ratio = indentMm / ballMm;
  if (ratio < 0.24 || ratio > 0.6) warnings.push(`d/D = ${ratio.toFixed(3)} is outside 0.24-0.6 (ISO 6506-1): choose another force-diameter ratio`);
  return { value, scale: 'HBW', definition: 'ISO 6506-1', warnings };
}

/** Rockwell C from the permanent indentation depth h (mm) under the preliminary force. */
export function rockwellCFromDepth(depthMm: number): HardnessValue {
  if (!Number.isFinite(depthMm) || depthMm < 0) throw new HardenabilityInputError(`depth must be a non-negative number (got ${depthMm})`);
  const value = 100 - depthMm / 0.002;
  const warnings: string[] = [];
  if (value < 20 || value > 70) warnings.push(`${value.toFixed(1)} HRC is outside the 20-70 HRC range of the scale (ISO 6508-1)`);
  return { value, scale: 'HRC', definition: 'ISO 6508-1', warnings };
}
