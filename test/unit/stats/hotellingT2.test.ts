import { describe, expect, it } from 'vitest';
import { applyT2, freezeT2, hotellingT2PhaseOne, TooFewObservationsError, SingularCovarianceError } from '../../../src/stats/hotellingT2.ts';
import { betaQuantile, fQuantile } from '../../../src/stats/distributions.ts';

describe('Hotelling T² for individual observations', () => {
  it('hand example: square of four points, S = (4/3)I, every T² = 1.5', () => {
    const r = hotellingT2PhaseOne([[0, 0], [2, 0], [0, 2], [2, 2]], { alpha: 0.05 });
    expect(r.mean).toEqual([1, 1]);
    r.t2.forEach((t) => expect(t).toBeCloseTo(1.5, 12));
  });
  // Rows of our own: a smooth deterministic "curve" family with a scrambled perturbation.
  const rows = Array.from({ length: 30 }, (_, i) =>
    [0, 1, 2, 3].map((j) => 50 - 4 * j + Math.sin(i * 1.3 + j) + 0.4 * Math.cos(i * 2.1 * (j + 1))),
  );
  // Algebra: Σ dᵢᵀS⁻¹dᵢ = tr(S⁻¹ Σ dᵢdᵢᵀ) = tr(S⁻¹(m − 1)S) = (m − 1)p.
  it('Σ T²_i = (m − 1)p with the sample covariance (trace identity)', () => {
    const r = hotellingT2PhaseOne(rows);
    const sum = r.t2.reduce((a, b) => a + b, 0);
    expect(sum).toBeCloseTo(29 * 4, 9);
  });
  it('phase I UCL from Beta (Tracy, Young & Mason 1992), phase II from F (NIST e-Handbook §6.5.4.3.4)', () => {
    const r = hotellingT2PhaseOne(rows, { alpha: 0.01 });
    expect(r.ucl).toBeCloseTo(((29 * 29) / 30) * betaQuantile(0.99, 2, 25 / 2), 10);
    const frozen = freezeT2(r);
    expect(frozen.ucl).toBeCloseTo(((4 * 31 * 29) / (900 - 120)) * fQuantile(0.99, 4, 26), 10);
    // The phase II limit is the wider one for this m and p (classic mistake: using F in phase I).
    expect(frozen.ucl).toBeGreaterThan(r.ucl);
  });
  it('a disturbed heat signals and its contributions point to the disturbed distance', () => {
    const bad = rows.map((r) => r.slice());
    bad[12][2] += 8;
    const r = hotellingT2PhaseOne(bad);
    expect(r.signals).toContain(12);
    const c = r.contributions.find((x) => x.index === 12)!;
    const argmax = (v: number[]) => v.indexOf(Math.max(...v));
    expect(argmax(c.conditional)).toBe(2);
    expect(argmax(c.unconditional)).toBe(2);
  });
  it('clear errors: m <= p + 1 with the sample covariance; a singular covariance', () => {
    expect(() => hotellingT2PhaseOne(rows.slice(0, 5))).toThrow(TooFewObservationsError);
    const collinear = rows.map((r) => [r[0], r[1], r[0] + r[1]]);
    expect(() => hotellingT2PhaseOne(collinear)).toThrow(SingularCovarianceError);
  });
  it('Ledoit–Wolf allows m <= p and flags the result', () => {
    const r = hotellingT2PhaseOne(rows.slice(0, 4), { covariance: 'ledoit-wolf' });
    expect(r.flags.shrinkageCovariance).toBe(true);
    expect(r.flags.approximateLimit).toBe(true);
    expect(r.uclMethod).toBe('chi-square-approximate');
    expect(r.shrinkage).toBeGreaterThan(0);
  });
  it('phase II applies the frozen mean and covariance; frozen limits survive JSON', () => {
    const frozen = JSON.parse(JSON.stringify(freezeT2(hotellingT2PhaseOne(rows))));
    const out = applyT2(frozen, [rows[0], rows[0].map((v, j) => (j === 1 ? v + 10 : v))]);
    expect(out.signals).toEqual([1]);
    expect(() => applyT2(frozen, [[1, 2, 3]])).toThrow(/variables/);
  });
});
