// Shared types of the hardenability domain (plain data; no behaviour).

/**
 * Distance systems along an end-quench specimen:
 * - 'mm': ISO 642 positions in millimetres;
 * - 'sixteenths': ASTM A255 / SAE J406 "J" positions in sixteenths of an inch (1/16 in = 1.5875 mm).
 */
export type DistanceSystem = 'mm' | 'sixteenths';

/** A distance from the quenched end, canonical in mm, with the value and label in its own system. */
export interface Distance {
  /** Exact distance in millimetres. */
  mm: number;
  system: DistanceSystem;
  /** The number in the system's unit (mm, or sixteenths of an inch). */
  value: number;
  /** Canonical label: "J9", "J1.5/16" (sixteenths) or "9 mm", "1.5 mm". */
  label: string;
}

/** One hardness reading of an end-quench test. */
export interface Reading {
  mm: number;
  hrc: number;
  /** Label as written on the certificate, if known. */
  label?: string;
  /** Off the scale: 'below' ("<20": the hardness is under `hrc`) or 'above' (">65": over it). */
  censored?: 'below' | 'above';
}

/** Who produced an end-quench test. */
export type TestSource = 'mill_certificate' | 'receiving_inspection' | 'outside_lab';

export interface EndQuenchTest {
  id: string;
  source: TestSource;
  /** ISO date, YYYY-MM-DD. */
  testDate: string;
  readings: readonly Reading[];
}

export type ChemicalElement =
  | 'C' | 'Mn' | 'Si' | 'P' | 'S' | 'Cr' | 'Ni' | 'Mo' | 'Cu' | 'V' | 'Al' | 'B' | 'Ti' | 'Nb' | 'N';

/** Chemistry in wt%. Elements not reported are absent (not zero). */
export type Chemistry = Partial<Record<ChemicalElement, number>>;

/** A quantity outside the validity range of a method or a limit. */
export interface RangeFlag {
  quantity: string;
  value: number;
  min?: number;
  max?: number;
  /** Plain-language note, e.g. which source gives the range. */
  note: string;
}

/** Result of a published predictor of the end-quench curve. */
export interface PredictedPoint {
  mm: number;
  hrc: number;
  /** True when PAVA changed this point to keep the curve non-increasing. */
  adjustedForMonotonicity: boolean;
}

export interface PredictedCurve {
  method: string;
  /** Published source of the method, as a citation. */
  source: string;
  points: PredictedPoint[];
  /** Requested distances outside the method's distance range: omitted, never extrapolated. */
  omitted: { mm: number; reason: string }[];
  /** Ideal critical diameter when the method gives one. */
  idealDiameter: { mm: number; inches: number } | null;
  /** Inputs outside the method's validity range (the prediction is still given, but flagged). */
  outOfRange: RangeFlag[];
  warnings: string[];
  /** True when the chemistry is outside the method altogether (e.g. a boron steel for A255). */
  outsideMethod: boolean;
}

export type CheckVerdict = 'pass' | 'warn' | 'fail' | 'not_applicable';

/** Evidence a person can read: what was checked, on which values, against which threshold. */
export interface CheckEvidence<V = Record<string, unknown>> {
  /** Machine name of the check, e.g. 'curve_non_increasing'. */
  check: string;
  /** What was checked, in plain words. */
  title: string;
  verdict: CheckVerdict;
  /** One or two sentences explaining the verdict with the numbers. */
  summary: string;
  threshold: Record<string, number | string>;
  values: V;
}
