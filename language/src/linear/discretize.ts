// Discrete-time equivalents x[k+1] = Ad x[k] + Bd u[k], y[k] = Cd x[k] + Dd u[k] of a continuous
// system (A, B, C, D) for a sample period T, by the three methods a `sample every` clause names.
//
//  zoh      zero-order hold, exact for piecewise-constant inputs:
//           Ad = e^{AT}, Bd = ∫₀ᵀ e^{Aτ}dτ B (one block exponential, see expm.ts), Cd = C, Dd = D.
//  tustin   bilinear substitution s = (2/T)(z − 1)/(z + 1). With M = (I − (T/2)A)⁻¹:
//             Ad = M (I + (T/2)A),  Bd = T·M B,  Cd = C M,  Dd = D + (T/2)·C M B,
//           so that Cd (zI − Ad)⁻¹ Bd + Dd = G((2/T)(z − 1)/(z + 1)) exactly (the scalar case:
//           c b T (z + 1) / ((2 − aT) z − (2 + aT)); the matrix case follows by the same algebra).
//           Fails when 2/T is an eigenvalue of A (I − (T/2)A singular).
//  forward  forward Euler: Ad = I + A T, Bd = B T, Cd = C, Dd = D.
//
// API
//   discretize(ss, T, method) → DiscreteResult;  zoh(ss, T), tustin(ss, T), forward(ss, T)

import { hasShape, identity, matAdd, matMul, matScale, solve, copy } from './dense';
import { zohIntegrals } from './expm';
import { checkStateSpace, ssDims, type StateSpace } from './lti';

export type DiscretizeMethod = 'zoh' | 'tustin' | 'forward';

export interface DiscreteResult {
  ok: boolean;
  /** The discrete system (absent when not ok). */
  ss?: StateSpace;
  T: number;
  method: DiscretizeMethod;
  problem?: 'shape' | 'bad-period' | 'singular' | 'overflow' | 'non-finite';
  message?: string;
}

function guard(ss: StateSpace, T: number, method: DiscretizeMethod): DiscreteResult | null {
  const bad = checkStateSpace(ss);
  if (bad) return { ok: false, T, method, problem: 'shape', message: bad };
  if (!Number.isFinite(T) || !(T > 0)) return { ok: false, T, method, problem: 'bad-period', message: 'the sample period must be positive and finite' };
  return null;
}

const copySs = (ss: StateSpace): StateSpace => ({ A: copy(ss.A), B: copy(ss.B), C: copy(ss.C), D: copy(ss.D) });

export function zoh(ss: StateSpace, T: number): DiscreteResult {
  const g = guard(ss, T, 'zoh');
  if (g) return g;
  if (ssDims(ss).n === 0) return { ok: true, ss: copySs(ss), T, method: 'zoh' };
  const r = zohIntegrals(ss.A, ss.B, T);
  if (!r.ok) return { ok: false, T, method: 'zoh', problem: r.problem === 'overflow' ? 'overflow' : 'non-finite', message: r.message };
  return { ok: true, ss: { A: r.Ad, B: r.Bd, C: copy(ss.C), D: copy(ss.D) }, T, method: 'zoh' };
}

export function tustin(ss: StateSpace, T: number): DiscreteResult {
  const g = guard(ss, T, 'tustin');
  if (g) return g;
  const { n } = ssDims(ss);
  if (n === 0) return { ok: true, ss: copySs(ss), T, method: 'tustin' };
  const I = identity(n), half = matScale(ss.A, T / 2);
  const Mi = matAdd(I, half, -1); // I − (T/2)A
  // M·[I + (T/2)A, B] in one solve; C M from the transposed system Miᵀ (C M)ᵀ = Cᵀ.
  const rhs = matAdd(I, half).map((r, i) => r.concat(ss.B[i]));
  const X = solve(Mi, rhs);
  const Mt = Mi[0].map((_, j) => Mi.map((r) => r[j]));
  const Ct = ss.C[0] ? ss.C[0].map((_, j) => ss.C.map((r) => r[j])) : [];
  const Y = ss.C.length > 0 ? solve(Mt, Ct) : [];
  if (!X || !Y) return { ok: false, T, method: 'tustin', problem: 'singular', message: `2/T = ${2 / T} rad/s is an eigenvalue of A` };
  const Ad = X.map((r) => r.slice(0, n));
  const MB = X.map((r) => r.slice(n));
  const CM = ss.C.length > 0 ? Y[0].map((_, j) => Y.map((r) => r[j])) : [];
  const Bd = matScale(MB, T);
  const Dd = hasShape(ss.C, 0, 0) || ss.C.length === 0 ? copy(ss.D) : matAdd(ss.D, matMul(ss.C, MB), T / 2);
  return { ok: true, ss: { A: Ad, B: Bd, C: CM, D: Dd }, T, method: 'tustin' };
}

export function forward(ss: StateSpace, T: number): DiscreteResult {
  const g = guard(ss, T, 'forward');
  if (g) return g;
  const { n } = ssDims(ss);
  if (n === 0) return { ok: true, ss: copySs(ss), T, method: 'forward' };
  return {
    ok: true,
    ss: { A: matAdd(identity(n), ss.A, T), B: matScale(ss.B, T), C: copy(ss.C), D: copy(ss.D) },
    T,
    method: 'forward',
  };
}

export function discretize(ss: StateSpace, T: number, method: DiscretizeMethod = 'tustin'): DiscreteResult {
  if (method === 'zoh') return zoh(ss, T);
  if (method === 'forward') return forward(ss, T);
  if (method === 'tustin') return tustin(ss, T);
  return { ok: false, T, method, problem: 'shape', message: `unknown method ${String(method)}` };
}
