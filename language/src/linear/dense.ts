// Small dense-matrix helpers on row-major `number[][]`, the shape every linear-analysis API takes.
// ml-matrix does the heavy decompositions; these are the copies, products and checks around them.
// Nothing here throws: shape checks return a message instead.

import { LuDecomposition, Matrix } from 'ml-matrix';
import type { Complex } from './complex';

export type Mat = number[][];

export const zeros = (r: number, c: number): Mat => Array.from({ length: r }, () => new Array<number>(c).fill(0));

export function identity(n: number): Mat {
  const I = zeros(n, n);
  for (let i = 0; i < n; i++) I[i][i] = 1;
  return I;
}

export const rows = (M: Mat): number => M.length;
/** Column count; an n×0 matrix is written as n empty rows, a 0×m matrix as [] (then 0 is returned). */
export const cols = (M: Mat): number => (M.length > 0 ? M[0].length : 0);

export const copy = (M: Mat): Mat => M.map((r) => r.slice());

export function matMul(A: Mat, B: Mat): Mat {
  const n = rows(A), k = cols(A), m = cols(B);
  const C = zeros(n, m);
  for (let i = 0; i < n; i++) {
    const Ai = A[i], Ci = C[i];
    for (let l = 0; l < k; l++) {
      const a = Ai[l];
      if (a === 0) continue;
      const Bl = B[l];
      for (let j = 0; j < m; j++) Ci[j] += a * Bl[j];
    }
  }
  return C;
}

export function matAdd(A: Mat, B: Mat, beta = 1): Mat {
  return A.map((r, i) => r.map((v, j) => v + beta * B[i][j]));
}

export const matScale = (A: Mat, k: number): Mat => A.map((r) => r.map((v) => v * k));

/** Induced 1-norm: the largest absolute column sum. */
export function norm1(A: Mat): number {
  const n = rows(A), m = cols(A);
  let best = 0;
  for (let j = 0; j < m; j++) {
    let s = 0;
    for (let i = 0; i < n; i++) s += Math.abs(A[i][j]);
    if (s > best || Number.isNaN(s)) best = s;
  }
  return best;
}

export function allFinite(A: Mat): boolean {
  return A.every((r) => r.every((v) => Number.isFinite(v)));
}

/** A rectangular array of numbers with `r` rows and `c` columns (r = 0 accepts []). */
export function hasShape(A: unknown, r: number, c: number): boolean {
  if (!Array.isArray(A) || A.length !== r) return false;
  return A.every((row) => Array.isArray(row) && row.length === c && row.every((v) => typeof v === 'number'));
}

/** Solve A X = B with partial-pivoting LU (ml-matrix). Null when A is singular or the result is not finite. */
export function solve(A: Mat, B: Mat): Mat | null {
  const n = rows(A);
  if (n === 0) return [];
  const lu = new LuDecomposition(new Matrix(A));
  if (lu.isSingular()) return null;
  const X = lu.solve(new Matrix(B)).to2DArray();
  return allFinite(X) ? X : null;
}

/** Solve (Ar + i·Ai) X = (Br + i·Bi) by Gaussian elimination with partial pivoting in complex arithmetic.
 * Returns null on an exactly singular pivot. */
export function solveComplex(A: Complex[][], B: Complex[][]): Complex[][] | null {
  const n = A.length;
  const m = B.length > 0 ? B[0].length : 0;
  const ar = A.map((r) => r.map((z) => z.re)), ai = A.map((r) => r.map((z) => z.im));
  const br = B.map((r) => r.map((z) => z.re)), bi = B.map((r) => r.map((z) => z.im));
  for (let k = 0; k < n; k++) {
    let p = k, best = -1;
    for (let i = k; i < n; i++) {
      const mag = Math.hypot(ar[i][k], ai[i][k]);
      if (mag > best) { best = mag; p = i; }
    }
    if (!(best > 0)) return null;
    if (p !== k) {
      [ar[p], ar[k]] = [ar[k], ar[p]]; [ai[p], ai[k]] = [ai[k], ai[p]];
      [br[p], br[k]] = [br[k], br[p]]; [bi[p], bi[k]] = [bi[k], bi[p]];
    }
    const d = ar[k][k] * ar[k][k] + ai[k][k] * ai[k][k];
    const invR = ar[k][k] / d, invI = -ai[k][k] / d;
    for (let i = k + 1; i < n; i++) {
      const fr = ar[i][k] * invR - ai[i][k] * invI;
      const fi = ar[i][k] * invI + ai[i][k] * invR;
      if (fr === 0 && fi === 0) continue;
      for (let j = k; j < n; j++) {
        ar[i][j] -= fr * ar[k][j] - fi * ai[k][j];
        ai[i][j] -= fr * ai[k][j] + fi * ar[k][j];
      }
      for (let j = 0; j < m; j++) {
        br[i][j] -= fr * br[k][j] - fi * bi[k][j];
        bi[i][j] -= fr * bi[k][j] + fi * br[k][j];
      }
    }
  }
  const X: Complex[][] = Array.from({ length: n }, () => new Array<Complex>(m));
  for (let j = 0; j < m; j++) {
    for (let i = n - 1; i >= 0; i--) {
      let sr = br[i][j], si = bi[i][j];
      for (let l = i + 1; l < n; l++) {
        sr -= ar[i][l] * X[l][j].re - ai[i][l] * X[l][j].im;
        si -= ar[i][l] * X[l][j].im + ai[i][l] * X[l][j].re;
      }
      const d = ar[i][i] * ar[i][i] + ai[i][i] * ai[i][i];
      X[i][j] = { re: (sr * ar[i][i] + si * ai[i][i]) / d, im: (si * ar[i][i] - sr * ai[i][i]) / d };
    }
  }
  return X;
}
