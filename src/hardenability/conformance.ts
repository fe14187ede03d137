// Conformance of end-quench tests and heats to a hardenability band.
// Bands as specified for H-steels (SAE J1268, ASTM A304, EN 10084 +H). Readings are compared with the
// limits after rounding them to the limits' own places by the rounding method of ASTM E29 (§6.4: to
// the nearest, a 5 followed by nothing goes to the even digit), the band's default (its `rounding`
// setting may say 'as_reported' instead); a reading on a limit conforms. The quenched-end positions of
// ISO 642 (1.5 mm) and ASTM A255 (J1 = 1/16 in = 1.5875 mm) are judged as one position: they differ by
// 0.09 mm, inside either standard's placing tolerance of the first indentation (about ±0.1 mm, from
// memory). Where a test has no reading at a band distance the value is interpolated with Fritsch &
// Carlson (1980) monotone cubics between the neighbouring readings, and marked so; a band point outside
// the test's measured range is "not tested", never a pass, and says why.

import { monotoneCubic } from '../stats/monotoneInterpolation.ts';
import { validateBand } from './bands.ts';
import type { Band, BandRounding } from './bands.ts';
import { QUENCHED_END_MAX_MM, sortedReadings } from './distances.ts';
import { HardenabilityInputError } from './errors.ts';
import type { EndQuenchTest, TestSource } from './types.ts';

export type PointVerdict = 'pass' | 'fail' | 'not_tested';
export type TestVerdict = 'pass' | 'fail' | 'incomplete';

export interface PointConformance {
  mm: number;
  label?: string;
  minHrc?: number;
  maxHrc?: number;
  /** Hardness used for the decision, after rounding (null when not tested). */
  hrc: number | null;
  /** The reading (or interpolated value) before rounding, when rounding changed it. */
  reported?: number;
  basis: 'measured' | 'interpolated' | 'not_tested';
  /** Set when the reading came from the other standard's quenched-end position (J1 for 1.5 mm, or back). */
  position?: string;
  /** Why a point was not tested. */
  reason?: string;
  /** The reading was off the scale: 'below' ("<20") or 'above' (">65"); hrc holds the bound. */
  censored?: 'below' | 'above';
  verdict: PointVerdict;
  /**
   * Signed distance in HRC to the nearer limit: min(hrc - min, max - hrc) over the limits present.
   * Positive inside the band, zero on a limit, negative outside (by how much it misses).
   */
  margin: number | null;
  /** The limit that sets the margin. */
  governingLimit: 'min' | 'max' | null;
}

export interface TestConformance {
  testId: string;
  source: TestSource;
  testDate: string;
  /** fail if any point fails; incomplete if none fails but some band point was not tested. */
  verdict: TestVerdict;
  points: PointConformance[];
  /** Smallest margin over the tested points (null if nothing was tested). */
  minMargin: number | null;
  counts: { pass: number; fail: number; notTested: number; interpolated: number };
  /** How readings were compared with the limits. */
  rounding: BandRounding;
}


/**
 * A value rounded to `places` decimals by ASTM E29 §6.4 (round half to even). Decimal halves are
 * recognised on the value's shortest decimal form, so 34.45 at one place is a half (gives 34.4).
 */
export function roundE29(value: number, places: number): number {
  const scale = 10 ** places;
  const scaled = Number((value * scale).toPrecision(12));
  const floor = Math.floor(scaled);
  const fraction = scaled - floor;
  let rounded: number;
  if (Math.abs(fraction - 0.5) < 1e-9) rounded = floor % 2 === 0 ? floor : floor + 1;
  else rounded = Math.round(scaled);
  return rounded / scale;
}

/** Decimal places of a limit as written (35 -> 0, 35.5 -> 1). */
const placesOf = (limit: number): number => {
  const text = String(Number(limit.toPrecision(12)));
  const dot = text.indexOf('.');
  return dot < 0 ? 0 : text.length - dot - 1;
};

export interface TestConformanceOptions {
  /** Readings within this distance (mm) of a band point count as measured there. Default 1e-6 mm. */
  matchToleranceMm?: number;
}

/** Conformance of one end-quench test to one band, with the margin at every band point. */
export function testConformance(test: EndQuenchTest, band: Band, options: TestConformanceOptions = {}): TestConformance {
  const b = validateBand(band);
  const readings = sortedReadings(test.readings);
  if (readings.length === 0) throw new HardenabilityInputError(`test ${test.id} has no readings`);
  const tol = options.matchToleranceMm ?? 1e-6;
  // Built on first need only: most tests are measured at every band distance.
  let interpolant: ReturnType<typeof monotoneCubic> | null | undefined;
  const interpolateAt = (mm: number): number | null => {
    if (interpolant === undefined) {
      interpolant =
        readings.length >= 2
          ? monotoneCubic(
              readings.map((r) => r.mm),
              readings.map((r) => r.hrc),
            )
          : null;
    }
    return interpolant?.at(mm) ?? null;
  };

  const rounding: BandRounding = b.rounding ?? 'astm_e29';
  const first = readings[0].mm;
  const last = readings[readings.length - 1].mm;
  const points = b.points.map((p): PointConformance => {
    let exact = readings.find((r) => Math.abs(r.mm - p.mm) <= tol);
    let position: string | undefined;
    if (!exact && p.mm <= QUENCHED_END_MAX_MM) {
      exact = readings.find((r) => r.mm <= QUENCHED_END_MAX_MM);
      if (exact) {
        position = `the reading at ${describeQuenchedEnd(exact.mm)} judged at ${describeQuenchedEnd(p.mm)}: the same quenched-end position (ISO 642 and ASTM A255)`;
      }
    }
    if (exact?.censored) return censoredPoint(p, exact.hrc, exact.censored, position);
    let hrc: number | null = exact ? exact.hrc : interpolateAt(p.mm);
    const basis: PointConformance['basis'] = exact ? 'measured' : hrc === null ? 'not_tested' : 'interpolated';
    if (hrc === null) {
      const reason =
        readings.length < 2
          ? 'the test has a single reading, and one reading cannot be interpolated'
          : p.mm < first
            ? `nearer the quenched end than the test's first reading (${first} mm)`
            : `beyond the test's last reading (${last} mm)`;
      return { ...limits(p), hrc: null, basis, verdict: 'not_tested', margin: null, governingLimit: null, reason };
    }
    hrc = exact ? hrc : Math.round(hrc * 1e9) / 1e9;
    let reported: number | undefined;
    if (rounding === 'astm_e29') {
      const places = Math.max(...[p.minHrc, p.maxHrc].filter((v): v is number => v !== undefined).map(placesOf));
      const rounded = roundE29(hrc, places);
      if (rounded !== hrc) reported = hrc;
      hrc = rounded;
    }
    let margin = Infinity;
    let governingLimit: 'min' | 'max' | null = null;
    if (p.minHrc !== undefined && hrc - p.minHrc < margin) {
      margin = hrc - p.minHrc;
      governingLimit = 'min';
    }
    if (p.maxHrc !== undefined && p.maxHrc - hrc < margin) {
      margin = p.maxHrc - hrc;
      governingLimit = 'max';
    }
    return {
      ...limits(p),
      hrc,
      ...(reported !== undefined ? { reported } : {}),
      basis,
      ...(position ? { position } : {}),
      verdict: margin >= 0 ? 'pass' : 'fail',
      margin,
      governingLimit,
    };
  });

  const tested = points.filter((p) => p.margin !== null);
  const counts = {
    pass: points.filter((p) => p.verdict === 'pass').length,
    fail: points.filter((p) => p.verdict === 'fail').length,
    notTested: points.filter((p) => p.verdict === 'not_tested').length,
    interpolated: points.filter((p) => p.basis === 'interpolated').length,
  };
  return {
    testId: test.id,
    source: test.source,
    testDate: test.testDate,
    verdict: counts.fail > 0 ? 'fail' : counts.notTested > 0 ? 'incomplete' : 'pass',
    points,
    minMargin: tested.length ? Math.min(...tested.map((p) => p.margin as number)) : null,
    counts,
    rounding,
  };
}

const describeQuenchedEnd = (mm: number) => (Math.abs(mm - 1.5875) < 1e-6 ? 'J1 (1.5875 mm)' : `${Number(mm.toFixed(4))} mm`);

const limits = (p: Band['points'][number]) => ({ mm: p.mm, label: p.label, minHrc: p.minHrc, maxHrc: p.maxHrc });

/**
 * A reading off the scale ("<20", ">65") at a band point: "<v" fails a minimum of v or more (the hardness
 * is under it) and meets any maximum of v or more; ">v" fails a maximum of v or less and meets any
 * minimum of v or less. Where a limit lies beyond the bound ("<20" against a minimum of 18) the reading
 * cannot decide, and the point is not tested, with the reason. The margin is the bound's distance to the
 * limit it fails (negative), or null.
 */
function censoredPoint(p: Band['points'][number], bound: number, side: 'below' | 'above', position: string | undefined): PointConformance {
  const written = `${side === 'below' ? '<' : '>'}${bound}`;
  const base = { ...limits(p), hrc: bound, basis: 'measured' as const, censored: side, ...(position ? { position } : {}) };
  if (side === 'below') {
    const failsMin = p.minHrc !== undefined && p.minHrc >= bound;
    if (failsMin) return { ...base, verdict: 'fail', margin: bound - p.minHrc!, governingLimit: 'min' };
    const maxOk = p.maxHrc === undefined || p.maxHrc >= bound;
    if (p.minHrc === undefined && maxOk) return { ...base, verdict: 'pass', margin: null, governingLimit: null };
    return { ...base, verdict: 'not_tested', margin: null, governingLimit: null, reason: undecided(written, p) };
  }
  const failsMax = p.maxHrc !== undefined && p.maxHrc <= bound;
  if (failsMax) return { ...base, verdict: 'fail', margin: p.maxHrc! - bound, governingLimit: 'max' };
  const minOk = p.minHrc === undefined || p.minHrc <= bound;
  if (p.maxHrc === undefined && minOk) return { ...base, verdict: 'pass', margin: null, governingLimit: null };
  return { ...base, verdict: 'not_tested', margin: null, governingLimit: null, reason: undecided(written, p) };
}

const undecided = (written: string, p: Band['points'][number]) =>
  `the reading ${written} HRC is off the scale and cannot show whether ${[p.minHrc !== undefined ? `the minimum of ${p.minHrc}` : '', p.maxHrc !== undefined ? `the maximum of ${p.maxHrc}` : ''].filter(Boolean).join(' and ')} HRC is met`;

/**
 * How to decide a heat with several tests:
 * - 'source_precedence' (default): the tests of the highest-ranked source present decide, all of
 *   them must pass; default order receiving inspection, then outside lab, then mill certificate
 *   (so a receiving inspection overrides the mill certificate);
 * - 'all_must_pass': every test must pass;
 * - 'latest_wins': the test(s) with the latest test date decide (ties broken by source order).
 */
export type HeatPolicy =
  | { kind: 'source_precedence'; order?: readonly TestSource[] }
  | { kind: 'all_must_pass' }
  | { kind: 'latest_wins'; order?: readonly TestSource[] };

export const DEFAULT_SOURCE_ORDER: readonly TestSource[] = ['receiving_inspection', 'outside_lab', 'mill_certificate'];
export const DEFAULT_HEAT_POLICY: HeatPolicy = { kind: 'source_precedence', order: DEFAULT_SOURCE_ORDER };

export interface HeatConformance {
  verdict: TestVerdict | 'no_tests';
  policy: HeatPolicy;
  /** Tests whose results decided the verdict. */
  deciding: TestConformance[];
  /** Tests set aside by the policy (kept so a disagreement stays visible). */
  setAside: TestConformance[];
  /** True when a set-aside test reached a different verdict from the deciding ones. */
  disagreement: boolean;
  explanation: string;
}

const combine = (results: readonly TestConformance[]): TestVerdict =>
  results.some((r) => r.verdict === 'fail') ? 'fail' : results.some((r) => r.verdict === 'incomplete') ? 'incomplete' : 'pass';

const rank = (order: readonly TestSource[], s: TestSource): number => {
  const i = order.indexOf(s);
  return i < 0 ? order.length : i;
};

/** Conformance of a heat with one or more end-quench tests under a stated policy. */
export function heatConformance(
  tests: readonly EndQuenchTest[],
  band: Band,
  policy: HeatPolicy = DEFAULT_HEAT_POLICY,
  options: TestConformanceOptions = {},
): HeatConformance {
  if (tests.length === 0) {
    return { verdict: 'no_tests', policy, deciding: [], setAside: [], disagreement: false, explanation: 'no end-quench test for this heat' };
  }
  const results = tests.map((t) => testConformance(t, band, options));
  let deciding: TestConformance[];
  let explanation: string;
  if (policy.kind === 'all_must_pass') {
    deciding = results;
    explanation = `all ${results.length} test(s) must pass`;
  } else {
    const order = policy.order ?? DEFAULT_SOURCE_ORDER;
    if (policy.kind === 'source_precedence') {
      const best = Math.min(...results.map((r) => rank(order, r.source)));
      deciding = results.filter((r) => rank(order, r.source) === best);
      explanation = `the ${deciding[0].source.replace('_', ' ')} test(s) decide (source order: ${order.join(' > ')})`;
    } else {
      const latest = results.reduce((m, r) => (r.testDate > m ? r.testDate : m), results[0].testDate);
      const onLatest = results.filter((r) => r.testDate === latest);
      const best = Math.min(...onLatest.map((r) => rank(order, r.source)));
      deciding = onLatest.filter((r) => rank(order, r.source) === best);
      explanation = `the latest test date (${latest}) decides`;
    }
  }
  const setAside = results.filter((r) => !deciding.includes(r));
  const verdict = combine(deciding);
  const disagreement = setAside.some((r) => r.verdict !== verdict);
  if (disagreement) explanation += '; a set-aside test reached a different verdict';
  return { verdict, policy, deciding, setAside, disagreement, explanation };
}
