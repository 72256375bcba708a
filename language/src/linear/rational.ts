// Rational functions of the Laplace variable s, num(s)/den(s), coefficients highest power first.
// The model compiler evaluates a transfer relation such as `kp + kd*s/(1 + s/wf)` with these
// operations. Every result is normalised: leading exact zeros trimmed and the denominator made
// monic. Common factors are not cancelled (num and den keep the degrees the expression implies).
// Invalid steps never throw: division by the zero function gives a zero denominator and a
// non-integer power gives NaN coefficients; `ratProblem` reports either.
//
// API
//   interface Rational { num: number[]; den: number[] }
//   ratConst(k), ratS(), ratFromPoly(num, den?)
//   ratAdd(a, b), ratSub(a, b), ratMul(a, b), ratDiv(a, b), ratNeg(a), ratScale(a, k), ratPow(a, k ∈ ℤ)
//   ratNormalize(a)            trim, monic denominator (unchanged when the denominator is zero)
//   ratProblem(a)              null | 'zero-denominator' | 'non-finite'
//   ratDegrees(a)              { num, den } polynomial degrees (−Infinity for a zero polynomial)
//   relativeDegree(a)          deg den − deg num (Infinity for the zero function)
//   isProper(a), isStrictlyProper(a)
//   ratEval(a, z)              value at a complex point

import { cDiv, type Complex } from './complex';
import { isZeroPoly, polyAdd, polyDegree, polyEvalComplex, polyMul, polyNeg, polyPow, polyScale, polyTrim, type Poly } from './poly';

export interface Rational {
  num: Poly;
  den: Poly;
}

export function ratNormalize(a: Rational): Rational {
  const num = polyTrim(a.num), den = polyTrim(a.den);
  if (isZeroPoly(den) || !num.every(Number.isFinite) || !den.every(Number.isFinite)) return { num, den };
  if (isZeroPoly(num)) return { num: [0], den: [1] };
  const lead = den[0];
  return { num: num.map((c) => c / lead), den: den.map((c) => c / lead) };
}

export const ratConst = (k: number): Rational => ratNormalize({ num: [k], den: [1] });
/** The Laplace variable s itself. */
export const ratS = (): Rational => ({ num: [1, 0], den: [1] });
export const ratFromPoly = (num: Poly, den: Poly = [1]): Rational => ratNormalize({ num, den });

export function ratProblem(a: Rational): null | 'zero-denominator' | 'non-finite' {
  if (!a.num.every(Number.isFinite) || !a.den.every(Number.isFinite)) return 'non-finite';
  if (isZeroPoly(a.den)) return 'zero-denominator';
  return null;
}

export function ratAdd(a: Rational, b: Rational): Rational {
  // Equal denominators (common after normalisation, e.g. kp + ki/s) need no cross-multiplication.
  const da = polyTrim(a.den), db = polyTrim(b.den);
  if (da.length === db.length && da.every((c, i) => c === db[i])) return ratNormalize({ num: polyAdd(a.num, b.num), den: da });
  return ratNormalize({ num: polyAdd(polyMul(a.num, b.den), polyMul(b.num, a.den)), den: polyMul(a.den, b.den) });
}

export const ratNeg = (a: Rational): Rational => ratNormalize({ num: polyNeg(a.num), den: a.den });
export const ratSub = (a: Rational, b: Rational): Rational => ratAdd(a, ratNeg(b));
export const ratScale = (a: Rational, k: number): Rational => ratNormalize({ num: polyScale(a.num, k), den: a.den });
export const ratMul = (a: Rational, b: Rational): Rational =>
  ratNormalize({ num: polyMul(a.num, b.num), den: polyMul(a.den, b.den) });
export const ratDiv = (a: Rational, b: Rational): Rational =>
  ratNormalize({ num: polyMul(a.num, b.den), den: polyMul(a.den, b.num) });

/** a^k for an integer k; a negative k inverts. A non-integer k gives NaN coefficients. */
export function ratPow(a: Rational, k: number): Rational {
  if (!Number.isInteger(k)) return { num: [NaN], den: [1] };
  const num = polyPow(a.num, Math.abs(k)), den = polyPow(a.den, Math.abs(k));
  return ratNormalize(k >= 0 ? { num, den } : { num: den, den: num });
}

export function ratDegrees(a: Rational): { num: number; den: number } {
  return { num: polyDegree(a.num), den: polyDegree(a.den) };
}

export function relativeDegree(a: Rational): number {
  const d = ratDegrees(a);
  if (d.num === -Infinity) return Infinity;
  return d.den - d.num;
}

export const isProper = (a: Rational): boolean => ratProblem(a) === null && relativeDegree(a) >= 0;
export const isStrictlyProper = (a: Rational): boolean => ratProblem(a) === null && relativeDegree(a) > 0;

export function ratEval(a: Rational, z: Complex): Complex {
  return cDiv(polyEvalComplex(a.num, z), polyEvalComplex(a.den, z));
}
