import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { quadraticRss, smoothnessTest, terminalDigitTest } from '../../../src/hardenability/dataQuality.ts';
import type { TerminalDigitResult, SmoothnessResult } from '../../../src/hardenability/dataQuality.ts';
import { predictJust1969 } from '../../../src/hardenability/just1969.ts';
import { HardenabilityInputError } from '../../../src/hardenability/errors.ts';
import type { Reading } from '../../../src/hardenability/types.ts';

// Reference: scipy 1.10.1 scipy.stats.chisquare / chi2.cdf and numpy 1.24.2 polyfit; generator
// test/reference/data_quality_reference.py (versions recorded in the fixture).
const ref = JSON.parse(readFileSync(new URL('../../reference/data_quality.json', import.meta.url), 'utf8')) as {
  versions: Record<string, string>;
  digits: { name: string; values: number[]; lastDigit: { chiSquare: number; pValue: number }; evenOdd: { chiSquare: number; pValue: number } }[];
  quadraticWindows: { x: number[]; y: number[]; rss: number }[];
  chi2Lower: { x: number; df: number; cdf: number }[];
};

const closeP = (p: number, expected: number) => {
  // 1 - CDF loses relative precision below about 1e-12; compare absolutely there.
  if (expected < 1e-10) expect(p).toBeLessThan(1e-9);
  else expect(p / expected).toBeCloseTo(1, 6);
};

describe('terminal-digit preference (Pearson chi-square)', () => {
  it('fixture records the versions used', () => {
    expect(ref.versions.scipy).toBe('1.10.1');
  });

  for (const c of ref.digits) {
    it(`last digits and even/odd match scipy.stats.chisquare: ${c.name}`, () => {
      // Reference: scipy.stats.chisquare on the same counts (fixture).
      const last = terminalDigitTest(c.values, { mode: 'last_digit' }).values as TerminalDigitResult;
      expect(last.chiSquare).toBeCloseTo(c.lastDigit.chiSquare, 9);
      closeP(last.pValue, c.lastDigit.pValue);
      expect(last.degreesOfFreedom).toBe(9);
      const eo = terminalDigitTest(c.values, { mode: 'even_odd' }).values as TerminalDigitResult;
      expect(eo.chiSquare).toBeCloseTo(c.evenOdd.chiSquare, 9);
      closeP(eo.pValue, c.evenOdd.pValue);
    });
  }

  it('verdicts: honest data pass, edited data fail, with the counts in the evidence', () => {
    const honest = ref.digits.find((d) => d.name === 'honest')!;
    const biased = ref.digits.find((d) => d.name === 'even_bias')!;
    const fives = ref.digits.find((d) => d.name === 'zero_five')!;
    expect(terminalDigitTest(honest.values, { mode: 'last_digit' }).verdict).toBe('pass');
    const b = terminalDigitTest(biased.values);
    expect(b.verdict).toBe('fail');
    expect(b.summary).toMatch(/even \d+, odd \d+/);
    expect(terminalDigitTest(fives.values, { mode: 'last_digit' }).verdict).toBe('fail');
  });

  it('needs at least 5 expected per cell (Cochran 1954) and values on the reporting step', () => {
    expect(terminalDigitTest([30, 31, 32, 33, 34, 35, 36, 37, 38, 39], { mode: 'last_digit' }).verdict).toBe('not_applicable');
    expect(() => terminalDigitTest([30.5, 31], { step: 1 })).toThrow(HardenabilityInputError);
    // Halves: 30.5 is step 61 (odd), 31 is step 62 (even).
    const h = terminalDigitTest(Array.from({ length: 20 }, (_, i) => 30 + i * 0.5), { step: 0.5 }).values as TerminalDigitResult;
    expect(h.observed).toEqual([10, 10]);
  });
});

// Small seeded generator for the simulation (mulberry32 + Box-Muller), local to this test.
function rng(seed: number) {
  let a = seed >>> 0;
  const u = () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
  return { u, normal: () => Math.sqrt(-2 * Math.log(1 - u())) * Math.cos(2 * Math.PI * u()) };
}

describe('curves too smooth to be measured', () => {
  it('quadratic residual sum of squares matches numpy.polyfit', () => {
    for (const w of ref.quadraticWindows) {
      // Reference: numpy.polyfit(x, y, 2, full=True) residuals (fixture).
      expect(quadraticRss(w.x, w.y)).toBeCloseTo(w.rss, 9);
    }
  });

  // A mill history: Just (1969) curves for varied chemistry at J4..J32 in sixteenths.
  const positions = [4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16, 18, 20, 22, 24, 28, 32].map((s) => s * 1.5875);
  const history = (seed: number, noiseSd: number, roundTo: number | null): Reading[][] => {
    const g = rng(seed);
    return Array.from({ length: 40 }, () => {
      const chem = { C: 0.18 + 0.06 * g.u(), Mn: 0.7 + 0.3 * g.u(), Cr: 0.4 + 0.3 * g.u(), Ni: 0.5, Mo: 0.2 };
      const c = predictJust1969(chem, { distancesMm: positions });
      return c.points.map((p) => {
        const v = p.hrc + noiseSd * g.normal();
        return { mm: p.mm, hrc: roundTo ? Math.round(v / roundTo) * roundTo : v };
      });
    });
  };

  it('flags calculated curves reported to whole HRC (scatter is rounding only)', () => {
    const r = smoothnessTest(history(1, 0, 1));
    const v = r.values as SmoothnessResult;
    expect(r.verdict).toBe('fail');
    expect(v.ratio).toBeLessThan(0.8);
    expect(r.summary).toMatch(/too smooth/);
  });

  it('passes simulated measured curves (repeatability 0.5 HRC, then rounded)', () => {
    const r = smoothnessTest(history(2, 0.5, 1));
    expect(r.verdict).toBe('pass');
    expect((r.values as SmoothnessResult).ratio).toBeGreaterThan(0.8);
  });

  it('a lab better than the assumed repeatability (0.3 HRC) is not flagged: the ratio stays above 0.7', () => {
    const r = smoothnessTest(history(3, 0.3, 1), { alpha: 0.01 });
    const v = r.values as SmoothnessResult;
    expect(v.pValueLower).toBeLessThan(0.01); // the chi-square alone would flag it at 1 % ...
    expect(v.ratio).toBeGreaterThan(0.7); // ... but the scatter is not far below the expected one
    expect(r.verdict).toBe('pass');
  });

  it('unrounded calculated curves are flagged however the threshold is set', () => {
    const r = smoothnessTest(history(4, 0, null), { maxRatio: 0.2 });
    expect(r.verdict).toBe('fail');
  });

  it('lower-tail p-value is the chi-square CDF of the statistic (scipy.stats.chi2.cdf)', () => {
    // Build windows whose RSS/sigma^2 equals a chosen statistic: one reading off a line by delta in
    // each 4-point window gives RSS = delta^2 * (1 - h), checked against quadraticRss directly.
    const target = ref.chi2Lower[0]; // x = 20 on 60 df
    const xs = [1, 2, 3, 4];
    const unit = quadraticRss(xs, [0, 1, 0, 0]); // RSS for a unit bump
    const sigma2 = 0.4 ** 2 + 1 / 12;
    const perWindow = target.x / target.df; // each window contributes 1 df
    const delta = Math.sqrt((perWindow * sigma2) / unit);
    const curves = Array.from({ length: target.df }, () => xs.map((mm, i) => ({ mm, hrc: 50 - mm + (i === 1 ? delta : 0) })));
    const r = smoothnessTest(curves, { window: 4 });
    const v = r.values as SmoothnessResult;
    expect(v.degreesOfFreedom).toBe(60);
    expect(v.statistic).toBeCloseTo(20, 9);
    expect(v.pValueLower / target.cdf).toBeCloseTo(1, 6);
  });

  it('not applicable with too little history; refuses bad settings', () => {
    expect(smoothnessTest([[{ mm: 1.5, hrc: 40 }, { mm: 3, hrc: 39 }, { mm: 5, hrc: 37 }, { mm: 7, hrc: 35 }]]).verdict).toBe('not_applicable');
    expect(() => smoothnessTest([], { window: 3 })).toThrow(/at least 4/);
    expect(() => smoothnessTest([], { repeatabilitySdHrc: 0, step: 0 })).toThrow(/both be zero/);
  });
});
