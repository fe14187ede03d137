import { describe, expect, it } from 'vitest';
import { integrate, IntegrationError } from '../../../src/stats/integrate.ts';
import { lnGamma } from '../../../src/stats/gamma.ts';

describe('adaptive Gauss–Kronrod', () => {
  // Exact integrals (calculus): ∫0^π sin = 2; ∫0^1 √x = 2/3 (endpoint singularity in the derivative);
  // ∫−8^8 φ(x) dx = 1 − 2Φ(−8) ≈ 1 − 1.2442e-15.
  it('integrates smooth and awkward functions to 1e-12', () => {
    expect(integrate(Math.sin, 0, Math.PI).value).toBeCloseTo(2, 13);
    expect(integrate(Math.sqrt, 0, 1).value).toBeCloseTo(2 / 3, 11);
    const phi = (x: number) => Math.exp(-0.5 * x * x) / Math.sqrt(2 * Math.PI);
    expect(integrate(phi, -8, 8).value).toBeCloseTo(1, 13);
  });
  it('reports non-convergence and infinite limits', () => {
    expect(() => integrate((x) => 1 / x, 0, 1, { maxIntervals: 20 })).toThrow(IntegrationError);
    expect(() => integrate(Math.exp, 0, Infinity)).toThrow(IntegrationError);
  });
});

describe('lnGamma (Lanczos)', () => {
  // Γ(1/2) = √π, Γ(10) = 9! = 362880, Γ(1) = Γ(2) = 1 (exact values).
  it('hits exact values', () => {
    expect(lnGamma(0.5)).toBeCloseTo(0.5 * Math.log(Math.PI), 14);
    expect(lnGamma(10)).toBeCloseTo(Math.log(362880), 12);
    expect(lnGamma(1)).toBeCloseTo(0, 14);
    expect(lnGamma(2)).toBeCloseTo(0, 14);
    expect(lnGamma(0.1) - lnGamma(1.1)).toBeCloseTo(Math.log(10), 13); // Γ(x+1) = xΓ(x)
  });
  it('rejects non-positive arguments', () => {
    expect(() => lnGamma(0)).toThrow(RangeError);
  });
});
