// Transfer function and transmission zeros of one input-output path (A, b, c, d) of a
// state-space system.
//
// Denominator: the characteristic polynomial det(sI − A) = Π (s − λᵢ) from the eigenvalues.
// Numerator N(s) = det(sI − A)·(c (sI − A)⁻¹ b + d):
//  - d ≠ 0: by the matrix determinant lemma N(s) = d·det(sI − (A − b c / d)), so the zeros are the
//    eigenvalues of A − b c / d.
//  - d = 0: from the Markov parameters h_k = c A^k b (the Laurent expansion
//    c (sI − A)⁻¹ b = Σ h_k s^{−k−1}): with det(sI − A) = Σ a_i s^{n−i}, a_0 = 1, the coefficient of
//    s^{n−1−j} in N is Σ_{i≤j} a_i h_{j−i}. Structural zeros (c A^k b = 0 exactly) stay exact;
//    a leading coefficient below 1e-10 of its own rounding scale Σ |a_i|·(|c| |A|^{j−i} |b|) is
//    dropped, which fixes the relative degree. The zeros are the roots of N.
// Zeros that coincide with poles (uncontrollable or unobservable modes) are kept: N and the
// denominator are not cancelled.
//
// API
//   sisoTransfer(ss, out?, input?) → { ok, G: Rational, problem? }
//   zerosOf(ss, out?, input?)      → { ok, zeros: Complex[], problem? }

import type { Complex } from './complex';
import { eigenvalues } from './eig';
import { checkStateSpace, ssDims, type StateSpace } from './lti';
import { polyFromRoots, polyRoots, polyScale, polyTrim, type Poly } from './poly';
import type { Rational } from './rational';

export interface SisoTransfer {
  ok: boolean;
  G: Rational;
  problem?: string;
}

const NEGLIGIBLE = 1e-10;

export function sisoTransfer(ss: StateSpace, out = 0, input = 0): SisoTransfer {
  const fail = (problem: string): SisoTransfer => ({ ok: false, G: { num: [NaN], den: [1] }, problem });
  const bad = checkStateSpace(ss);
  if (bad) return fail(bad);
  const { n, m, p } = ssDims(ss);
  if (!(out >= 0 && out < p && input >= 0 && input < m)) return fail('no such input-output path');
  const A = ss.A, b = A.map((_, i) => ss.B[i][input]), c = ss.C[out] ?? [], d = ss.D[out][input];
  const ev = eigenvalues(A);
  if (!ev.ok) return fail(ev.message ?? 'no eigenvalues');
  const den = polyFromRoots(ev.values);
  if (n === 0) return { ok: true, G: { num: [d], den: [1] } };
  if (d !== 0) {
    const Az = A.map((r, i) => r.map((v, j) => v - (b[i] * c[j]) / d));
    const ez = eigenvalues(Az);
    if (!ez.ok) return fail(ez.message ?? 'no eigenvalues');
    return { ok: true, G: { num: polyScale(polyFromRoots(ez.values), d), den } };
  }
  // Markov parameters and their absolute rounding scales.
  const h: number[] = [], hs: number[] = [];
  let v = b.slice(), va = b.map(Math.abs);
  for (let k = 0; k < n; k++) {
    h.push(c.reduce((acc, ci, i) => acc + ci * v[i], 0));
    hs.push(c.reduce((acc, ci, i) => acc + Math.abs(ci) * va[i], 0));
    v = A.map((r) => r.reduce((acc, aij, j) => acc + aij * v[j], 0));
    va = A.map((r) => r.reduce((acc, aij, j) => acc + Math.abs(aij) * va[j], 0));
  }
  const num: Poly = [], scale: number[] = [];
  for (let j = 0; j < n; j++) {
    let acc = 0, sc = 0;
    for (let i = 0; i <= j; i++) { acc += den[i] * h[j - i]; sc += Math.abs(den[i]) * hs[j - i]; }
    num.push(acc); scale.push(sc);
  }
  let lead = 0;
  while (lead < n && Math.abs(num[lead]) <= NEGLIGIBLE * scale[lead]) lead++;
  const N = lead === n ? [0] : polyTrim(num.slice(lead));
  return { ok: true, G: { num: N, den } };
}

export interface ZerosResult {
  ok: boolean;
  zeros: Complex[];
  problem?: string;
}

export function zerosOf(ss: StateSpace, out = 0, input = 0): ZerosResult {
  const t = sisoTransfer(ss, out, input);
  if (!t.ok) return { ok: false, zeros: [], problem: t.problem };
  if (t.G.num.length === 1) return { ok: true, zeros: [] };
  const r = polyRoots(t.G.num);
  return r.ok ? { ok: true, zeros: r.roots } : { ok: false, zeros: [], problem: r.problem };
}
