// Eigenvalues of a real square matrix: balancing by powers of two (Parlett & Reinsch, "Balancing a
// matrix for calculation of eigenvalues and eigenvectors", Numer. Math. 13, 1969), then the
// Hessenberg QR algorithm of ml-matrix's EigenvalueDecomposition. Balancing is a diagonal
// similarity, so the eigenvalues are unchanged; it reduces the norm and with it the rounding error
// for badly scaled matrices such as companion matrices of polynomials.
//
// API
// The matrix is first scaled by a power of two (exact) so that its 1-norm lies near 1: this keeps
// the QR iteration away from overflow and underflow for extreme entries.
//
//   eigenvalues(A) → { ok, values: Complex[], problem? }   never throws; non-finite or
//                    non-square input gives ok false and no values.

import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import type { Complex } from './complex';
import { copy, hasShape, norm1, type Mat } from './dense';

export interface EigenResult {
  ok: boolean;
  values: Complex[];
  problem?: 'shape' | 'non-finite' | 'failed';
  message?: string;
}

/** Diagonal similarity D⁻¹ A D with D a power of two per index, so row and column norms match. */
export function balance(A: Mat): Mat {
  const n = A.length;
  const B = copy(A);
  const radix = 2, sq = radix * radix;
  let done = false;
  for (let sweep = 0; !done && sweep < 100; sweep++) {
    done = true;
    for (let i = 0; i < n; i++) {
      let c = 0, r = 0;
      for (let j = 0; j < n; j++) {
        if (j === i) continue;
        c += Math.abs(B[j][i]);
        r += Math.abs(B[i][j]);
      }
      if (c === 0 || r === 0) continue;
      let g = r / radix, f = 1;
      const s = c + r;
      while (c < g) { f *= radix; c *= sq; }
      g = r * radix;
      while (c > g) { f /= radix; c /= sq; }
      if ((c + r) / f < 0.95 * s) {
        done = false;
        for (let j = 0; j < n; j++) B[i][j] /= f;
        for (let j = 0; j < n; j++) B[j][i] *= f;
      }
    }
  }
  return B;
}

export function eigenvalues(A: Mat): EigenResult {
  const n = Array.isArray(A) ? A.length : -1;
  if (n < 0 || !hasShape(A, n, n)) return { ok: false, values: [], problem: 'shape', message: 'the matrix is not square' };
  if (n === 0) return { ok: true, values: [] };
  if (!A.every((r) => r.every((v) => Number.isFinite(v))))
    return { ok: false, values: [], problem: 'non-finite', message: 'the matrix has a non-finite entry' };
  if (n === 1) return { ok: true, values: [{ re: A[0][0], im: 0 }] };
  const norm = norm1(A);
  if (norm === 0) return { ok: true, values: A.map(() => ({ re: 0, im: 0 })) };
  const s2 = 2 ** Math.round(Math.log2(norm));
  const scale = s2 > 0 && Number.isFinite(s2) ? s2 : 1;
  try {
    const scaled = A.map((r) => r.map((v) => v / scale));
    const evd = new EigenvalueDecomposition(new Matrix(balance(scaled)), { assumeSymmetric: false });
    const re = evd.realEigenvalues, im = evd.imaginaryEigenvalues;
    const values = re.map((v, i) => ({ re: v * scale, im: im[i] * scale }));
    if (!values.every((z) => Number.isFinite(z.re) && Number.isFinite(z.im)))
      return { ok: false, values: [], problem: 'failed', message: 'the eigenvalue iteration did not converge' };
    return { ok: true, values };
  } catch (e) {
    return { ok: false, values: [], problem: 'failed', message: String(e) };
  }
}
