// Conformance of end-quench tests and heats to a hardenability band.
// Bands as specified for H-steels (SAE J1268, ASTM A304, EN 10084 +H). Our convention, which no
// source fixes: readings are compared as reported (no rounding) and a reading on a limit conforms.
// Where a test has no reading at a band distance the value is interpolated with Fritsch & Carlson
// (1980) monotone cubics between the neighbouring readings, and marked so; a band point outside the
// test's measured range is "not tested", never a pass.

import { monotoneCubic } from '../stats/monotoneInterpolation.ts';
import { validateBand } from './bands.ts';
import type { Band } from './bands.ts';
import { sortedReadings } from './distances.ts';
import { HardenabilityInputError } from './errors.ts';
import type { EndQuenchTest, TestSource } from './types.ts';

export type PointVerdict = 'pass' | 'fail' | 'not_tested';
export type TestVerdict = 'pass' | 'fail' | 'incomplete';

export interface PointConformance {
  mm: number;
  label?: string;
  minHrc?: number;
  maxHrc?: number;
  /** Hardness used for the decision (null when not tested). */
  hrc: number | null;
  basis: 'measured' | 'interpolated' | 'not_tested';
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
}

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

  const points = b.points.map((p): PointConformance => {
    const exact = readings.find((r) => Math.abs(r.mm - p.mm) <= tol);
    let hrc: number | null = exact ? exact.hrc : interpolateAt(p.mm);
    const basis: PointConformance['basis'] = exact ? 'measured' : hrc === null ? 'not_tested' : 'interpolated';
    if (hrc === null) {
      return { ...limits(p), hrc: null, basis, verdict: 'not_tested', margin: null, governingLimit: null };
    }
    hrc = exact ? hrc : Math.round(hrc * 1e9) / 1e9;
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
    return { ...limits(p), hrc, basis, verdict: margin >= 0 ? 'pass' : 'fail', margin, governingLimit };
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
  };
}

const limits = (p: Band['points'][number]) => ({ mm: p.mm, label: p.label, minHrc: p.minHrc, maxHrc: p.maxHrc });

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
