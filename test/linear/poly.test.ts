// Polynomials (language/src/linear/poly.ts).
import { describe, expect, it } from 'vitest';
import {
  polyAdd, polyDegree, polyDeriv, polyEval, polyEvalComplex, polyFromRoots, polyMul, polyPow, polyRoots, polySub, polyTrim,
} from '../../language/src/linear/poly';
import { expectComplexClose, sortC } from './helpers';

describe('polynomial arithmetic', () => {
  it('add, subtract, multiply, power, derivative [derived by hand]', () => {
    expect(polyAdd([1, 2], [1, 0, 3])).toEqual([1, 1, 5]);
    expect(polySub([1, 2, 3], [1, 0, 0])).toEqual([2, 3]);
    expect(polyMul([1, 1], [1, 2])).toEqual([1, 3, 2]);
    expect(polyPow([1, 1], 3)).toEqual([1, 3, 3, 1]);
    expect(polyDeriv([1, 3, 3, 1])).toEqual([3, 6, 3]);
    expect(polyTrim([0, 0, 1, 2])).toEqual([1, 2]);
    expect(polyDegree([0, 0])).toBe(-Infinity);
    expect(polyEval([1, 3, 2], 2)).toBe(12);
    // (j)² + 3j + 2 = 1 + 3j
    expect(polyEvalComplex([1, 3, 2], { re: 0, im: 1 })).toEqual({ re: 1, im: 3 });
  });
});

describe('polyRoots', () => {
  it('recovers the roots −2, −4, −8, −10 of s⁴ + 24s³ + 196s² + 624s + 640 (REFERENCES.md)', () => {
    const r = polyRoots([1, 24, 196, 624, 640]);
    expect(r.ok).toBe(true);
    const want = [-10, -8, -4, -2];
    r.roots.forEach((z, i) => expectComplexClose(z, { re: want[i], im: 0 }, 1e-13));
  });

  it('roots 3, 1, −2 of s³ − 2s² − 5s + 6 (REFERENCES.md) and a complex pair', () => {
    const r = polyRoots([1, -2, -5, 6]);
    [-2, 1, 3].forEach((w, i) => expectComplexClose(r.roots[i], { re: w, im: 0 }, 1e-14));
    // s² + 2s + 5 = (s + 1)² + 4 [derived]
    const c = sortC(polyRoots([1, 2, 5]).roots);
    expectComplexClose(c[0], { re: -1, im: -2 }, 1e-15);
    expectComplexClose(c[1], { re: -1, im: 2 }, 1e-15);
  });

  it('Wilkinson-type spread: roots 1 … 10 round-trip through polyFromRoots [derived]', () => {
    const want = Array.from({ length: 10 }, (_, i) => ({ re: i + 1, im: 0 }));
    const r = polyRoots(polyFromRoots(want));
    r.roots.forEach((z, i) => expectComplexClose(z, want[i], 1e-9));
  });

  it('zero roots are split off exactly; constants have none; bad input reports', () => {
    expect(polyRoots([1, 1, 0, 0]).roots).toEqual([{ re: -1, im: 0 }, { re: 0, im: 0 }, { re: 0, im: 0 }]);
    expect(polyRoots([5]).roots).toEqual([]);
    expect(polyRoots([0]).problem).toBe('zero-polynomial');
    expect(polyRoots([1, NaN]).problem).toBe('non-finite');
  });
});
