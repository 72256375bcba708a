// Matrix exponential (language/src/linear/expm.ts).
import { describe, expect, it } from 'vitest';
import { expm, PADE_COEFFS, PADE_THETA, zohIntegrals } from '../../language/src/linear/expm';
import fixture from '../reference/linear/expm.json';
import { expectMatClose } from './helpers';

const E = Math.exp;

describe('expm', () => {
  it('Moler & Van Loan (SIAM Review 45(1), 2003) example A = [[−49, 24], [−64, 31]]', () => {
    // e^A = X diag(e⁻¹, e⁻¹⁷) X⁻¹ with X = [[1, 3], [2, 4]] (the paper's closed form).
    const r = expm([[-49, 24], [-64, 31]]);
    expect(r.ok).toBe(true);
    const ref = [
      [-2 * E(-1) + 3 * E(-17), 1.5 * (E(-1) - E(-17))],
      [-4 * (E(-1) - E(-17)), 3 * E(-1) - 2 * E(-17)],
    ];
    expectMatClose(r.E, ref, 1e-13);
    expect(r.squarings).toBeGreaterThan(0);
  });

  it('upper triangular 2×2 [[λ, α], [0, μ]] (Moler & Van Loan 2003, closed form)', () => {
    for (const [l, a, m] of [[-1, 2, -3], [0.5, -4, 0.2], [-20, 100, -0.01], [1e-3, 1, -1e-3]]) {
      const r = expm([[l, a], [0, m]]);
      const ref = [[E(l), (a * (E(l) - E(m))) / (l - m)], [0, E(m)]];
      expectMatClose(r.E, ref, 1e-14);
    }
  });

  it('nilpotent matrix: the series stops, e^N = I + N + N²/2 [derived]', () => {
    const N = [[0, 2, -1], [0, 0, 3], [0, 0, 0]]; // N² = [[0, 0, 6], 0, 0], N³ = 0
    const ref = [[1, 2, -1 + 3], [0, 1, 3], [0, 0, 1]];
    expectMatClose(expm(N).E, ref, 1e-15);
    const big = N.map((r) => r.map((v) => 40 * v)); // forces scaling and squaring
    const refBig = [[1, 80, -40 + 0.5 * 80 * 120], [0, 1, 120], [0, 0, 1]];
    expectMatClose(expm(big).E, refBig, 1e-13);
  });

  it('exp([[0, θ], [−θ, 0]]) is the rotation [[cos θ, sin θ], [−sin θ, cos θ]] (Moler & Van Loan 2003)', () => {
    for (const th of [1e-4, 0.3, 1, Math.PI, 10, 100]) {
      const r = expm([[0, th], [-th, 0]]);
      expectMatClose(r.E, [[Math.cos(th), Math.sin(th)], [-Math.sin(th), Math.cos(th)]], 1e-13);
    }
  });

  it('agrees with scipy.linalg.expm on matrices of widely different norms (fixture)', () => {
    // test/reference/linear/make_fixtures.py; relative error on the matrix scale.
    const degrees = new Set<number>();
    for (const c of fixture.cases) {
      const r = expm(c.A);
      expect(r.ok, c.name).toBe(true);
      degrees.add(r.degree);
      expectMatClose(r.E, c.expA, 1e-12);
    }
    expect([...degrees].sort((a, b) => a - b)).toEqual([3, 5, 7, 9, 13]);
  });

  it('Padé coefficients follow b_j ∝ (2m − j)! m! / ((2m)! j! (m − j)!) (Higham 2005, §2)', () => {
    const fact = (k: number): number => (k <= 1 ? 1 : k * fact(k - 1));
    for (const m of [3, 5, 7, 9, 13] as const) {
      const c = (j: number): number => (fact(2 * m - j) * fact(m)) / (fact(2 * m) * fact(j) * fact(m - j));
      const b = PADE_COEFFS[m];
      for (let j = 0; j <= m; j++) expect(Math.abs(b[j] / b[m] - c(j) / c(m)) / (c(j) / c(m))).toBeLessThan(1e-14);
    }
    expect(PADE_THETA[13]).toBeGreaterThan(PADE_THETA[9]);
  });

  it('odd input gives a result with a problem, never a throw', () => {
    expect(expm([]).ok).toBe(true);
    expect(expm([[NaN]]).problem).toBe('non-finite');
    expect(expm([[1, 2]]).problem).toBe('shape');
    expect(expm([[800]]).problem).toBe('overflow');
  });
});

describe('zohIntegrals (Van Loan 1978 block exponential)', () => {
  it('scalar lag: Ad = e^{aT}, Bd = (e^{aT} − 1)/a · b [derived]', () => {
    const r = zohIntegrals([[-2]], [[3]], 0.4);
    expect(r.Ad[0][0]).toBeCloseTo(E(-0.8), 15);
    expect(r.Bd[0][0]).toBeCloseTo(((E(-0.8) - 1) / -2) * 3, 15);
  });
});
