// Matrix exponential by scaling and squaring with diagonal Padé approximants, following
// N. J. Higham, "The Scaling and Squaring Method for the Matrix Exponential Revisited",
// SIAM J. Matrix Anal. Appl. 26(4):1179–1193, 2005, Algorithm 2.3: choose the smallest Padé
// degree m ∈ {3, 5, 7, 9} whose θ_m bounds ‖A‖₁; otherwise scale A by 2^−s so that
// ‖A/2^s‖₁ ≤ θ₁₃, use degree 13 and square s times.
//
// Plus the zero-order-hold integrals by one exponential of a block matrix (C. F. Van Loan,
// "Computing integrals involving the matrix exponential", IEEE Trans. Automat. Control 23(3),
// 1978): exp([[A, B], [0, 0]]·T) = [[e^{AT}, ∫₀ᵀ e^{Aτ} dτ B], [0, I]].
//
// API
//   expm(A)          → { ok, E, problem?, degree, squarings }
//   zohIntegrals(A, B, T) → { ok, Ad, Bd, problem? }

import { allFinite, hasShape, identity, matAdd, matMul, matScale, norm1, solve, zeros, type Mat } from './dense';

/** θ_m of Higham (2005), Table 2.3: the largest ‖A‖₁ for which degree m meets unit roundoff 2^−53. */
export const PADE_THETA: Readonly<Record<3 | 5 | 7 | 9 | 13, number>> = {
  3: 1.495585217958292e-2,
  5: 2.539398330063230e-1,
  7: 9.504178996162932e-1,
  9: 2.097847961257068e0,
  13: 5.371920351148152e0,
};

/** Coefficients b_0 … b_m of the [m/m] Padé numerator of e^x, scaled so b_m = 1 (Higham 2005, §2;
 * b_j ∝ (2m − j)! m! / ((2m)! j! (m − j)!)). The denominator is the same with x → −x. */
export const PADE_COEFFS: Readonly<Record<3 | 5 | 7 | 9 | 13, readonly number[]>> = {
  3: [120, 60, 12, 1],
  5: [30240, 15120, 3360, 420, 30, 1],
  7: [17297280, 8648640, 1995840, 277200, 25200, 1512, 56, 1],
  9: [17643225600, 8821612800, 2075673600, 302702400, 30270240, 2162160, 110880, 3960, 90, 1],
  13: [
    64764752532480000, 32382376266240000, 7771770303897600, 1187353796428800, 129060195264000,
    10559470521600, 670442572800, 33522128640, 1323241920, 40840800, 960960, 16380, 182, 1,
  ],
};

export interface ExpmResult {
  ok: boolean;
  /** e^A (n×n); NaN-filled when not ok. */
  E: Mat;
  problem?: 'shape' | 'non-finite' | 'overflow' | 'singular';
  message?: string;
  /** Padé degree used and the number of squarings. */
  degree: number;
  squarings: number;
}

/** U (odd part) and V (even part) of the degree-m Padé approximant: r_m(A) = (V − U)⁻¹ (V + U). */
function padeUV(A: Mat, m: 3 | 5 | 7 | 9 | 13): { U: Mat; V: Mat } {
  const n = A.length, b = PADE_COEFFS[m], I = identity(n);
  const A2 = matMul(A, A);
  if (m === 13) {
    const A4 = matMul(A2, A2), A6 = matMul(A4, A2);
    const lin = (c: number[], Ms: Mat[]): Mat => Ms.reduce((acc, M, i) => matAdd(acc, M, c[i]), zeros(n, n));
    const U1 = matMul(A6, lin([b[13], b[11], b[9]], [A6, A4, A2]));
    const U = matMul(A, matAdd(U1, lin([b[7], b[5], b[3], b[1]], [A6, A4, A2, I])));
    const V1 = matMul(A6, lin([b[12], b[10], b[8]], [A6, A4, A2]));
    const V = matAdd(V1, lin([b[6], b[4], b[2], b[0]], [A6, A4, A2, I]));
    return { U, V };
  }
  const pows: Mat[] = [I, A2];
  for (let k = 2; 2 * k <= m; k++) pows.push(matMul(pows[k - 1], A2));
  let Uin = zeros(n, n), V = zeros(n, n);
  for (let k = 0; 2 * k <= m; k++) {
    V = matAdd(V, pows[k], b[2 * k]);
    if (2 * k + 1 <= m) Uin = matAdd(Uin, pows[k], b[2 * k + 1]);
  }
  return { U: matMul(A, Uin), V };
}

export function expm(A: Mat): ExpmResult {
  const n = Array.isArray(A) ? A.length : 0;
  const fail = (problem: ExpmResult['problem'], message: string, degree = 0, squarings = 0): ExpmResult => ({
    ok: false, E: zeros(n, n).map((r) => r.fill(NaN)), problem, message, degree, squarings,
  });
  if (!hasShape(A, n, n)) return { ok: false, E: [], problem: 'shape', message: 'the matrix is not square', degree: 0, squarings: 0 };
  if (n === 0) return { ok: true, E: [], degree: 0, squarings: 0 };
  if (!allFinite(A)) return fail('non-finite', 'the matrix has a non-finite entry');
  const norm = norm1(A);
  let m: 3 | 5 | 7 | 9 | 13 = 13, s = 0;
  const small = ([3, 5, 7, 9] as const).find((k) => norm <= PADE_THETA[k]);
  if (small !== undefined) m = small;
  else s = Math.max(0, Math.ceil(Math.log2(norm / PADE_THETA[13])));
  const As = s > 0 ? matScale(A, 2 ** -s) : A;
  const { U, V } = padeUV(As, m);
  let E = solve(matAdd(V, U, -1), matAdd(V, U));
  if (!E) return fail('singular', 'the Padé denominator is singular', m, s);
  for (let k = 0; k < s; k++) {
    E = matMul(E, E);
    if (!allFinite(E)) return fail('overflow', `e^A overflows (‖A‖₁ = ${norm})`, m, s);
  }
  return { ok: true, E, degree: m, squarings: s };
}

export interface ZohIntegrals {
  ok: boolean;
  /** e^{AT} */
  Ad: Mat;
  /** ∫₀ᵀ e^{Aτ} dτ · B */
  Bd: Mat;
  problem?: ExpmResult['problem'];
  message?: string;
}

/** e^{AT} and ∫₀ᵀ e^{Aτ}dτ B from one exponential of the (n+m)×(n+m) block [[A, B], [0, 0]]·T. */
export function zohIntegrals(A: Mat, B: Mat, T: number): ZohIntegrals {
  const n = A.length, m = n > 0 ? (B[0]?.length ?? 0) : 0;
  const M = zeros(n + m, n + m);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) M[i][j] = A[i][j] * T;
    for (let j = 0; j < m; j++) M[i][n + j] = B[i][j] * T;
  }
  const r = expm(M);
  if (!r.ok) return { ok: false, Ad: [], Bd: [], problem: r.problem, message: r.message };
  return {
    ok: true,
    Ad: r.E.slice(0, n).map((row) => row.slice(0, n)),
    Bd: r.E.slice(0, n).map((row) => row.slice(n, n + m)),
  };
}
