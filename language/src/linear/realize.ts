// State-space realizations of transfer relations and PID laws.
//
// Controllable canonical form. A proper G(s) is first normalised to a monic denominator and split
// into its direct term and a strictly proper rest,
//     G(s) = D + (b1 s^{n−1} + … + bn) / (s^n + a1 s^{n−1} + … + an),
// realized as the companion form (n states):
//     A = [ 0 1 0 … 0 ; 0 0 1 … 0 ; … ; −an −a(n−1) … −a1 ]   (ones above the diagonal)
//     B = e_n = [0 … 0 1]ᵀ,   C = [bn … b1],   D = [direct term].
// The first state is the "phase variable" whose derivatives are the later states; the eigenvalues
// of A are the roots of the denominator (common practice; see e.g. any state-space text).
//
// PID law u = kp·e + ki ∫e + kd·s/(1 + s/rolloff)·e, states in this order:
//   1. integrator xi (only when ki ≠ 0):         xi' = e,                 contributes ki·xi
//   2. derivative filter xf (only when kd ≠ 0):  xf' = rolloff·(e − xf),  contributes kd·rolloff·(e − xf)
// so xf is the error passed through a first-order low-pass of corner `rolloff` (rad/s), and
//   D = kp + kd·rolloff,  C = [ki, −kd·rolloff].
// kd ≠ 0 without a finite positive rolloff is an improper law and is reported, not realized.
//
// API
//   realizeRational(G)            → RealizeResult
//   realizePid({ kp, ki, kd, rolloff }) → RealizeResult (1 input e, 1 output u)
//   type RealizeResult = { ok: true; ss; order } | { ok: false; problem; message; relativeDegree? }

import type { StateSpace } from './lti';
import { polyScale, polySub, polyTrim } from './poly';
import { ratNormalize, ratProblem, relativeDegree, type Rational } from './rational';

export type RealizeProblem = 'improper' | 'zero-denominator' | 'non-finite' | 'bad-rolloff';

export type RealizeResult =
  | { ok: true; ss: StateSpace; order: number; states: string[] }
  | { ok: false; problem: RealizeProblem; message: string; relativeDegree?: number };

export function realizeRational(G: Rational): RealizeResult {
  const g = ratNormalize(G);
  const bad = ratProblem(g);
  if (bad) return { ok: false, problem: bad, message: bad === 'zero-denominator' ? 'the denominator is zero' : 'a coefficient is not finite' };
  const rel = relativeDegree(g);
  if (rel < 0) return { ok: false, problem: 'improper', message: `the numerator degree exceeds the denominator degree by ${-rel}`, relativeDegree: rel };
  const den = g.den; // monic
  const n = den.length - 1;
  let num = polyTrim(g.num);
  let d = 0;
  if (num.length === n + 1) {
    d = num[0];
    num = polySub(num, polyScale(den, d));
  }
  // b1 … bn, padded on the left to n coefficients.
  const b = new Array<number>(n).fill(0);
  const tail = num.length === 1 && num[0] === 0 ? [] : num.slice(Math.max(0, num.length - n));
  for (let i = 0; i < tail.length; i++) b[n - tail.length + i] = tail[i];
  const A: number[][] = Array.from({ length: n }, (_, i) => Array.from({ length: n }, (_, j) => (j === i + 1 ? 1 : 0)));
  if (n > 0) for (let j = 0; j < n; j++) A[n - 1][j] = -den[n - j];
  const B = Array.from({ length: n }, (_, i) => [i === n - 1 ? 1 : 0]);
  const C = [Array.from({ length: n }, (_, j) => b[n - 1 - j])];
  const states = Array.from({ length: n }, (_, i) => (i === 0 ? 'x' : `x${"'".repeat(i)}`));
  return { ok: true, ss: { A, B, C, D: [[d]] }, order: n, states };
}

export interface PidGains {
  kp?: number;
  ki?: number;
  kd?: number;
  /** Derivative filter corner in rad/s; required (finite, > 0) when kd ≠ 0. */
  rolloff?: number;
}

export function realizePid(g: PidGains): RealizeResult {
  const kp = g.kp ?? 0, ki = g.ki ?? 0, kd = g.kd ?? 0;
  if (![kp, ki, kd].every(Number.isFinite)) return { ok: false, problem: 'non-finite', message: 'a PID gain is not finite' };
  const hasI = ki !== 0, hasD = kd !== 0;
  let N = 0;
  if (hasD) {
    const r = g.rolloff;
    if (r === undefined || r === Infinity) return { ok: false, problem: 'improper', message: 'kd ≠ 0 needs a finite rolloff: a pure derivative is improper', relativeDegree: -1 };
    if (!Number.isFinite(r) || !(r > 0)) return { ok: false, problem: 'bad-rolloff', message: 'rolloff must be a positive finite frequency' };
    N = r;
  }
  const states: string[] = [];
  const diag: number[] = [], bcol: number[] = [], crow: number[] = [];
  if (hasI) { states.push('integral'); diag.push(0); bcol.push(1); crow.push(ki); }
  if (hasD) { states.push('filter'); diag.push(-N); bcol.push(N); crow.push(-kd * N); }
  const n = states.length;
  const A = Array.from({ length: n }, (_, i) => Array.from({ length: n }, (_, j) => (i === j ? diag[i] : 0)));
  return {
    ok: true,
    ss: { A, B: bcol.map((v) => [v]), C: [crow], D: [[kp + kd * N]] },
    order: n,
    states,
  };
}
