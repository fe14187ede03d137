// Distance systems of the end-quench (Jominy) test and conversion of curves between them.
// Sources: ISO 642 (positions 1.5, 3, 5, 7, 9, 11, 13, 15 mm, then every 5 mm);
// ASTM A255 and SAE J406 (J1..J16 sixteenths of an inch, then 18, 20, 22, 24, 28, 32; index
// notation such as "J 4/16 in (6.4 mm)"); the inch is exactly 25.4 mm, so 1/16 in = 1.5875 mm.
// Curves are converted by Fritsch & Carlson (1980) monotone cubic interpolation, never extrapolated.

import { monotoneCubic } from '../stats/monotoneInterpolation.ts';
import { AmbiguousDistanceError, HardenabilityInputError } from './errors.ts';
import type { Distance, DistanceSystem, Reading } from './types.ts';

/** Exact: 25.4 mm / 16. */
export const MM_PER_SIXTEENTH = 1.5875;
/**
 * The quenched-end position of both standards: ISO 642 reads it at 1.5 mm, ASTM A255 at J1 = 1.5875 mm,
 * 0.09 mm apart, inside either standard's placing tolerance of the first indentation (about ±0.1 mm,
 * from memory). Distances at or below this are that one position.
 */
export const QUENCHED_END_MAX_MM = 1.6;
/** Length of the standard specimen (ISO 642: 100 mm; ASTM A255: 4 in = 101.6 mm). */
export const SPECIMEN_LENGTH_MM = 101.6;

export const sixteenthsToMm = (sixteenths: number): number => sixteenths * MM_PER_SIXTEENTH;
export const mmToSixteenths = (mm: number): number => mm / MM_PER_SIXTEENTH;

/** ISO 642 positions in mm: 1.5, 3, 5, 7, 9, 11, 13, 15, then every 5 mm up to maxMm (default 80). */
export function iso642PositionsMm(maxMm = 80): number[] {
  const out = [1.5, 3, 5, 7, 9, 11, 13, 15].filter((p) => p <= maxMm);
  for (let p = 20; p <= maxMm; p += 5) out.push(p);
  return out;
}

/** ASTM A255 / SAE J406 positions in sixteenths of an inch. */
export const A255_POSITIONS_SIXTEENTHS: readonly number[] = [
  1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16, 18, 20, 22, 24, 28, 32,
];

const formatNumber = (v: number): string => String(Number(v.toFixed(6)));

/**
 * Canonical label of a distance: "J9" in whole sixteenths, "J1.5/16" for a fraction of one (a decimal
 * after J reads as mm, see parseDistanceLabel), "9 mm" / "1.5 mm" in mm.
 */
export function distanceLabel(value: number, system: DistanceSystem): string {
  if (system === 'mm') return `${formatNumber(value)} mm`;
  return Number.isInteger(Number(value.toFixed(6))) ? `J${formatNumber(value)}` : `J${formatNumber(value)}/16`;
}

/**
 * A distance for a sentence a person reads: its certificate label when known; otherwise a whole
 * sixteenth that is not a whole millimetre reads "J3 (4.76 mm)", and anything else in mm to 0.01.
 */
export function describeDistance(mm: number, label?: string): string {
  if (label) return label;
  const sixteenths = mmToSixteenths(mm);
  const round = (v: number) => String(Number(v.toFixed(2)));
  if (Math.abs(sixteenths - Math.round(sixteenths)) < 1e-9 && Math.abs(mm - Math.round(mm * 2) / 2) > 1e-9) {
    return `J${Math.round(sixteenths)} (${round(mm)} mm)`;
  }
  return `${round(mm)} mm`;
}

/** Build a Distance from a number in a given system. */
export function makeDistance(value: number, system: DistanceSystem): Distance {
  if (!Number.isFinite(value) || value <= 0) {
    throw new HardenabilityInputError(`a distance from the quenched end must be a positive number (got ${value})`);
  }
  const mm = system === 'mm' ? value : sixteenthsToMm(value);
  if (mm > SPECIMEN_LENGTH_MM + 1e-9) {
    throw new HardenabilityInputError(`${formatNumber(mm)} mm is longer than the end-quench specimen (${SPECIMEN_LENGTH_MM} mm)`);
  }
  return { mm, system, value, label: distanceLabel(value, system) };
}

export interface ParseDistanceOptions {
  /** Unit of a bare number such as "9". Without it a bare number is refused as ambiguous. */
  bareNumberUnit?: DistanceSystem;
  /**
   * Unit of "J" followed by a whole number without unit ("J9"). Default 'sixteenths' (ASTM A255 usage).
   * A decimal ("J1.5", "J1,5") is never a sixteenth position (A255 positions are whole sixteenths): it
   * reads as mm (ISO 642 writes "J 1,5") unless this says sixteenths, when it is refused as ambiguous.
   */
  jPrefixUnit?: DistanceSystem;
}

/** Read "1,5" or "1.5" as 1.5; refuse "1,500" (thousands separator or decimal comma?). */
function readNumber(text: string, original: string): number {
  if (/^\d+,\d{3}$/.test(text)) {
    throw new AmbiguousDistanceError(`"${original}": "${text}" could be a decimal comma or a thousands separator`);
  }
  const v = Number(text.replace(',', '.'));
  if (!Number.isFinite(v)) throw new HardenabilityInputError(`"${original}" is not a distance`);
  return v;
}

const NUM = '(\\d+(?:[.,]\\d+)?)';
const INCH_UNIT = '(?:in\\.?|inch|inches|")';

/**
 * Parse a distance label as written on certificates: "J9", "J 9/16", "J1.5" (mm), "J 4/16 in",
 * "J 4/16 in (6.4 mm)", "9 mm", "9mm", "1,5 mm", '0.5 in', "9/16\"". Lenient about spaces, case and
 * decimal commas, but never guesses: a bare number needs `bareNumberUnit`, and a millimetre hint in
 * parentheses must agree with the inch value to its printed precision.
 */
export function parseDistanceLabel(label: string, options: ParseDistanceOptions = {}): Distance {
  const original = label;
  let s = label
    .normalize('NFKC')
    .replace(/[\u2044\u2215]/g, '/')
    .replace(/[\u201d\u2033]/g, '"')
    .trim()
    .toLowerCase()
    .replace(/\s+/g, ' ');
  if (s === '') throw new HardenabilityInputError('empty distance label');

  // Optional millimetre hint of the A255 index notation: "(6.4 mm)".
  let mmHint: { value: number; decimals: number } | null = null;
  const hint = s.match(new RegExp(`\\(\\s*${NUM}\\s*mm\\s*\\)$`));
  if (hint) {
    const decimals = (hint[1].split(/[.,]/)[1] ?? '').length;
    mmHint = { value: readNumber(hint[1], original), decimals };
    s = s.slice(0, hint.index).trim();
  }

  let hasJ = false;
  const j = s.match(/^j\s*[-:]?\s*/);
  if (j) {
    hasJ = true;
    s = s.slice(j[0].length);
  }

  let result: Distance;
  const fraction = s.match(new RegExp(`^${NUM}\\s*/\\s*(\\d+)\\s*${INCH_UNIT}?$`));
  const plain = s.match(new RegExp(`^${NUM}\\s*(mm\\.?|${INCH_UNIT})?$`));
  if (fraction) {
    const num = readNumber(fraction[1], original);
    const den = Number(fraction[2]);
    if (den <= 0) throw new HardenabilityInputError(`"${original}": zero denominator`);
    result = makeDistance((16 * num) / den, 'sixteenths');
  } else if (plain) {
    const v = readNumber(plain[1], original);
    const unit = plain[2];
    if (unit !== undefined && unit.startsWith('mm')) result = makeDistance(v, 'mm');
    else if (unit !== undefined) result = makeDistance(16 * v, 'sixteenths');
    else if (hasJ && !Number.isInteger(v)) {
      if (options.jPrefixUnit === 'sixteenths') {
        throw new AmbiguousDistanceError(`"${original}": ASTM A255 positions are whole sixteenths of an inch; write "${plain[1]} mm" if millimetres are meant`);
      }
      result = makeDistance(v, 'mm');
    } else if (hasJ) result = makeDistance(v, options.jPrefixUnit ?? 'sixteenths');
    else if (options.bareNumberUnit) result = makeDistance(v, options.bareNumberUnit);
    else {
      throw new AmbiguousDistanceError(
        `"${original}" has no unit: say whether it is in mm or in sixteenths of an inch`,
      );
    }
  } else {
    throw new HardenabilityInputError(`"${original}" is not a distance label this parser understands`);
  }

  if (mmHint) {
    const tolerance = 0.5 * 10 ** -mmHint.decimals + 1e-9;
    if (Math.abs(result.mm - mmHint.value) > tolerance) {
      throw new AmbiguousDistanceError(
        `"${original}": ${result.label} is ${formatNumber(result.mm)} mm, which disagrees with the ${mmHint.value} mm written beside it`,
      );
    }
  }
  return result;
}

/** A point of a converted curve. */
export interface ConvertedPoint extends Distance {
  hrc: number;
  /** False only when the target position coincides with a measured one. */
  interpolated: boolean;
}

export interface ConvertedCurve {
  system: DistanceSystem;
  method: string;
  points: ConvertedPoint[];
  /** Target positions outside the measured range, omitted (never extrapolated). */
  omitted: { distance: Distance; reason: 'before_first_reading' | 'beyond_last_reading' }[];
}

export interface ConvertCurveOptions {
  /** Target positions in the target system's unit; default: that system's standard positions. */
  positions?: readonly number[];
  /** Readings this close (mm) to a target position count as measured there. Default 1e-6 mm. */
  matchToleranceMm?: number;
}

/** Sort readings by distance and refuse duplicates or non-finite values. */
export function sortedReadings(readings: readonly Reading[]): Reading[] {
  const r = [...readings].sort((a, b) => a.mm - b.mm);
  r.forEach((p, i) => {
    if (!Number.isFinite(p.mm) || !Number.isFinite(p.hrc)) {
      throw new HardenabilityInputError(`reading ${i} is not a pair of finite numbers`);
    }
    if (i > 0 && p.mm === r[i - 1].mm) {
      throw new HardenabilityInputError(`two readings at the same distance (${formatNumber(p.mm)} mm)`);
    }
  });
  return r;
}

/**
 * Convert an end-quench curve (readings in mm) to the positions of another distance system by
 * monotone cubic interpolation (Fritsch & Carlson 1980). Every converted point says whether it was
 * interpolated; positions outside the measured range are omitted and listed, never extrapolated.
 */
export function convertCurve(
  readings: readonly Reading[],
  target: DistanceSystem,
  options: ConvertCurveOptions = {},
): ConvertedCurve {
  const r = sortedReadings(readings);
  if (r.length < 2) throw new HardenabilityInputError('converting a curve needs at least two readings');
  const tol = options.matchToleranceMm ?? 1e-6;
  const positions = options.positions ?? (target === 'mm' ? iso642PositionsMm(80) : A255_POSITIONS_SIXTEENTHS);
  const f = monotoneCubic(
    r.map((p) => p.mm),
    r.map((p) => p.hrc),
  );
  const points: ConvertedPoint[] = [];
  const omitted: ConvertedCurve['omitted'] = [];
  for (const v of positions) {
    const d = makeDistance(v, target);
    const exact = r.find((p) => Math.abs(p.mm - d.mm) <= tol);
    if (exact) {
      points.push({ ...d, hrc: exact.hrc, interpolated: false });
      continue;
    }
    const hrc = f.at(d.mm);
    if (hrc === null) {
      omitted.push({ distance: d, reason: d.mm < r[0].mm ? 'before_first_reading' : 'beyond_last_reading' });
    } else {
      points.push({ ...d, hrc, interpolated: true });
    }
  }
  return { system: target, method: 'Fritsch-Carlson (1980) monotone cubic interpolation', points, omitted };
}
