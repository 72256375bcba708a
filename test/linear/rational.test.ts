// Rational functions of s (language/src/linear/rational.ts).
import { describe, expect, it } from 'vitest';
import {
  isProper, isStrictlyProper, ratAdd, ratConst, ratDiv, ratEval, ratMul, ratPow, ratProblem, ratS, ratSub, relativeDegree,
} from '../../language/src/linear/rational';
import { expectComplexClose } from './helpers';

describe('rational arithmetic', () => {
  it('kp + kd·s/(1 + s/wf) = ((kp/wf + kd)s + kp)/(s/wf + 1), made monic [derived]', () => {
    const kp = 2, kd = 0.5, wf = 10, s = ratS();
    const G = ratAdd(ratConst(kp), ratDiv(ratMul(ratConst(kd), s), ratAdd(ratConst(1), ratDiv(s, ratConst(wf)))));
    // Monic denominator s + wf; numerator (kp + kd·wf)s + kp·wf.
    expect(G.den).toEqual([1, wf]);
    expect(G.num[0]).toBeCloseTo(kp + kd * wf, 14);
    expect(G.num[1]).toBeCloseTo(kp * wf, 14);
    expect(relativeDegree(G)).toBe(0);
    expect(isProper(G)).toBe(true);
    expect(isStrictlyProper(G)).toBe(false);
    // Value check at s = 1 + 2j against the expression evaluated directly.
    const z = { re: 1, im: 2 };
    const direct = { re: kp, im: 0 };
    const frac = ratEval({ num: [kd, 0], den: [1 / wf, 1] }, z);
    expectComplexClose(ratEval(G, z), { re: direct.re + frac.re, im: frac.im }, 1e-15);
  });

  it('integer powers, negation, subtraction and degree bookkeeping [derived]', () => {
    const s = ratS();
    const lag = ratDiv(ratConst(1), ratAdd(s, ratConst(1)));
    const cube = ratPow(lag, 3);
    expect(cube.num).toEqual([1]);
    expect(cube.den).toEqual([1, 3, 3, 1]);
    expect(relativeDegree(cube)).toBe(3);
    const inv = ratPow(lag, -2);
    expect(inv.num).toEqual([1, 2, 1]);
    expect(isProper(inv)).toBe(false);
    expect(relativeDegree(ratSub(s, s))).toBe(Infinity);
    expect(ratPow(lag, 0)).toEqual({ num: [1], den: [1] });
  });

  it('division by zero and non-integer powers are reported, not thrown', () => {
    expect(ratProblem(ratDiv(ratConst(1), ratConst(0)))).toBe('zero-denominator');
    expect(ratProblem(ratPow(ratS(), 0.5))).toBe('non-finite');
    expect(isProper(ratDiv(ratConst(1), ratConst(0)))).toBe(false);
  });
});
