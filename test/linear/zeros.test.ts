// Transfer functions and zeros of state-space paths (language/src/linear/zeros.ts).
import { describe, expect, it } from 'vitest';
import { sisoTransfer, zerosOf } from '../../language/src/linear/zeros';
import { realizeRational } from '../../language/src/linear/realize';
import { expectComplexClose, sortC } from './helpers';

describe('zeros', () => {
  it('(s+3)/(s²+3s+2) realized: one zero at −3, numerator recovered (REFERENCES.md)', () => {
    const r = realizeRational({ num: [1, 3], den: [1, 3, 2] });
    if (!r.ok) throw new Error(r.message);
    const t = sisoTransfer(r.ss);
    expect(t.G.num[0]).toBeCloseTo(1, 14);
    expect(t.G.num[1]).toBeCloseTo(3, 14);
    expect(t.G.den.map((c) => Math.round(c * 1e12) / 1e12)).toEqual([1, 3, 2]);
    const z = zerosOf(r.ss);
    expect(z.zeros).toHaveLength(1);
    expectComplexClose(z.zeros[0], { re: -3, im: 0 }, 1e-14);
  });

  it('non-canonical coordinates: (s² + 2s + 5)/((s+1)(s+2)(s+4)) in a rotated basis [derived]', () => {
    const r = realizeRational({ num: [1, 2, 5], den: [1, 7, 14, 8] });
    if (!r.ok) throw new Error(r.message);
    // x = T z with T = [[1, 2, 0], [0, 1, 1], [1, 0, 1]], T⁻¹ = [[1, −2, 2], [1, 1, −1], [−1, 2, 1]] / 3
    const T = [[1, 2, 0], [0, 1, 1], [1, 0, 1]];
    const Ti = [[1, -2, 2], [1, 1, -1], [-1, 2, 1]].map((row) => row.map((v) => v / 3));
    const mul = (X: number[][], Y: number[][]): number[][] => X.map((row) => Y[0].map((_, j) => row.reduce((a, v, k) => a + v * Y[k][j], 0)));
    const ss = { A: mul(mul(Ti, r.ss.A), T), B: mul(Ti, r.ss.B), C: mul(r.ss.C, T), D: r.ss.D };
    const z = sortC(zerosOf(ss).zeros);
    expect(z).toHaveLength(2);
    expectComplexClose(z[0], { re: -1, im: -2 }, 1e-12);
    expectComplexClose(z[1], { re: -1, im: 2 }, 1e-12);
  });

  it('relative degree fixed by structural zeros: the double integrator has no zeros', () => {
    const z = zerosOf({ A: [[0, 1], [0, 0]], B: [[0], [1]], C: [[1, 0]], D: [[0]] });
    expect(z.zeros).toEqual([]);
    const t = sisoTransfer({ A: [[0, 1], [0, 0]], B: [[0], [1]], C: [[1, 0]], D: [[0]] });
    expect(t.G.num).toEqual([1]);
  });

  it('with feedthrough: zeros are the eigenvalues of A − bc/d; (s + 5)/(s + 1) = 1 + 4/(s + 1) [derived]', () => {
    const z = zerosOf({ A: [[-1]], B: [[1]], C: [[4]], D: [[1]] });
    expectComplexClose(z.zeros[0], { re: -5, im: 0 }, 1e-15);
  });

  it('bad paths and shapes are reported', () => {
    expect(zerosOf({ A: [[-1]], B: [[1]], C: [[1]], D: [[0]] }, 1, 0).ok).toBe(false);
    expect(zerosOf({ A: [[-1, 0]], B: [[1]], C: [[1]], D: [[0]] }).ok).toBe(false);
  });
});
