// Linear time-invariant systems in state-space form, x' = A x + B u, y = C x + D u, with
// n states, m inputs and p outputs (n may be 0: a pure gain D). Matrices are row-major
// `number[][]`; an n×0 or 0×m block is written with empty rows or as [] respectively.
//
// API
//   interface StateSpace { A; B; C; D }
//   ssDims(ss)               → { n, m, p } read from A and D
//   checkStateSpace(ss)      → null when the shapes agree and every entry is finite, else a message
//   evalTransfer(ss, s)      → { ok, G: p×m complex matrix, problem? }, G(s) = C (sI − A)⁻¹ B + D,
//                              solving (sI − A) X = B by complex LU with partial pivoting.
//   evalSiso(ss, s, out, in) → one entry of G(s) as a Complex (non-finite parts at a pole).
//   sisoEvaluator(ss, out, in) → (s) => Complex: the same value as evalSiso, checked once and
//                              evaluated on preallocated arrays (for frequency sweeps).
//   siso(ss, out, in)        → the single-input single-output path as its own StateSpace.
//   gain(k, m?, p?)          → a state-less system D = k.

import { cAdd, cMul, type Complex } from './complex';
import { cols, hasShape, rows, solveComplex, zeros, type Mat } from './dense';

export interface StateSpace {
  A: Mat;
  B: Mat;
  C: Mat;
  D: Mat;
}

export interface SsDims {
  n: number;
  m: number;
  p: number;
}

export function ssDims(ss: StateSpace): SsDims {
  const n = Array.isArray(ss.A) ? ss.A.length : 0;
  const p = Array.isArray(ss.D) ? ss.D.length : 0;
  let m = p > 0 ? cols(ss.D) : 0;
  if (p === 0 && n > 0 && Array.isArray(ss.B)) m = cols(ss.B);
  return { n, m, p };
}

/** Null when A (n×n), B (n×m), C (p×n), D (p×m) agree and are finite; otherwise what is wrong. */
export function checkStateSpace(ss: StateSpace): string | null {
  if (!ss || typeof ss !== 'object') return 'not a state-space system';
  const { n, m, p } = ssDims(ss);
  if (!hasShape(ss.A, n, n)) return `A must be square (${n}×${n})`;
  if (n === 0) {
    if (!Array.isArray(ss.B) || ss.B.length !== 0) return 'B must be empty when there are no states';
    if (!Array.isArray(ss.C) || !(ss.C.length === 0 || hasShape(ss.C, p, 0))) return `C must be ${p}×0`;
  } else {
    if (!hasShape(ss.B, n, m)) return `B must be ${n}×${m}`;
    if (!hasShape(ss.C, p, n)) return `C must be ${p}×${n}`;
  }
  if (!hasShape(ss.D, p, m)) return `D must be ${p}×${m}`;
  for (const [name, M] of [['A', ss.A], ['B', ss.B], ['C', ss.C], ['D', ss.D]] as const) {
    if (Array.isArray(M) && !M.every((r) => r.every((v) => Number.isFinite(v)))) return `${name} has a non-finite entry`;
  }
  return null;
}

export interface TransferValue {
  ok: boolean;
  /** p×m complex matrix; entries are NaN when not ok. */
  G: Complex[][];
  problem?: 'shape' | 'pole';
  message?: string;
}

/** G(s) = C (sI − A)⁻¹ B + D at one complex frequency. At an eigenvalue of A: ok false, problem 'pole'. */
export function evalTransfer(ss: StateSpace, s: Complex): TransferValue {
  const bad = checkStateSpace(ss);
  const { n, m, p } = bad ? { n: 0, m: 0, p: 0 } : ssDims(ss);
  const nan = (): Complex[][] => Array.from({ length: p }, () => Array.from({ length: m }, () => ({ re: NaN, im: NaN })));
  if (bad) return { ok: false, G: [], problem: 'shape', message: bad };
  const G: Complex[][] = ss.D.map((r) => r.map((v) => ({ re: v, im: 0 })));
  if (n === 0) return { ok: true, G };
  const M: Complex[][] = ss.A.map((r, i) => r.map((v, j) => ({ re: (i === j ? s.re : 0) - v, im: i === j ? s.im : 0 })));
  const X = solveComplex(M, ss.B.map((r) => r.map((v) => ({ re: v, im: 0 }))));
  if (!X) return { ok: false, G: nan(), problem: 'pole', message: 's is an eigenvalue of A' };
  for (let i = 0; i < p; i++) {
    for (let j = 0; j < m; j++) {
      let acc = G[i][j];
      for (let k = 0; k < n; k++) if (ss.C[i][k] !== 0) acc = cAdd(acc, cMul({ re: ss.C[i][k], im: 0 }, X[k][j]));
      G[i][j] = acc;
    }
  }
  return { ok: true, G };
}

/** One entry of G(s); NaN parts when s is a pole or the indices are out of range. */
export function evalSiso(ss: StateSpace, s: Complex, out = 0, input = 0): Complex {
  const r = evalTransfer(ss, s);
  const v = r.ok ? r.G[out]?.[input] : undefined;
  return v ?? { re: NaN, im: NaN };
}

/** The path from input `input` to output `out` as a one-input one-output system. */
export function siso(ss: StateSpace, out = 0, input = 0): StateSpace {
  const { n } = ssDims(ss);
  return {
    A: ss.A.map((r) => r.slice()),
    B: Array.from({ length: n }, (_, i) => [ss.B[i]?.[input] ?? NaN]),
    C: [Array.from({ length: n }, (_, k) => ss.C[out]?.[k] ?? NaN)],
    D: [[ss.D[out]?.[input] ?? NaN]],
  };
}

/** A state-less system y = k u (p×m, all entries k). */
export function gain(k: number, m = 1, p = 1): StateSpace {
  return { A: [], B: [], C: Array.from({ length: p }, () => []), D: zeros(p, m).map((r) => r.fill(k)) };
}

export { rows, cols };

/** A fast evaluator of one entry of G(s) for repeated use; NaN parts at a pole or for a bad system. */
export function sisoEvaluator(ss: StateSpace, out = 0, input = 0): (s: Complex) => Complex {
  const bad = checkStateSpace(ss);
  const { n, m, p } = bad ? { n: 0, m: 0, p: 0 } : ssDims(ss);
  if (bad || !(out >= 0 && out < p && input >= 0 && input < m)) return () => ({ re: NaN, im: NaN });
  const d = ss.D[out][input];
  if (n === 0) return () => ({ re: d, im: 0 });
  const A = Float64Array.from(ss.A.flat());
  const b = Float64Array.from(ss.B.map((r) => r[input]));
  const c = Float64Array.from(ss.C[out]);
  const mr = new Float64Array(n * n), mi = new Float64Array(n * n);
  const xr = new Float64Array(n), xi = new Float64Array(n);
  return (s) => {
    for (let k = 0; k < n * n; k++) { mr[k] = -A[k]; mi[k] = 0; }
    for (let k = 0; k < n; k++) { mr[k * n + k] += s.re; mi[k * n + k] = s.im; xr[k] = b[k]; xi[k] = 0; }
    // Gaussian elimination with partial pivoting on (sI − A) x = b.
    for (let k = 0; k < n; k++) {
      let piv = k, best = -1;
      for (let i = k; i < n; i++) {
        const v = Math.abs(mr[i * n + k]) + Math.abs(mi[i * n + k]);
        if (v > best) { best = v; piv = i; }
      }
      if (!(best > 0)) return { re: NaN, im: NaN };
      if (piv !== k) {
        for (let j = 0; j < n; j++) {
          let t = mr[k * n + j]; mr[k * n + j] = mr[piv * n + j]; mr[piv * n + j] = t;
          t = mi[k * n + j]; mi[k * n + j] = mi[piv * n + j]; mi[piv * n + j] = t;
        }
        let t = xr[k]; xr[k] = xr[piv]; xr[piv] = t;
        t = xi[k]; xi[k] = xi[piv]; xi[piv] = t;
      }
      const pr = mr[k * n + k], pi = mi[k * n + k], den = pr * pr + pi * pi;
      const ir = pr / den, ii = -pi / den;
      for (let i = k + 1; i < n; i++) {
        const ar = mr[i * n + k], ai = mi[i * n + k];
        if (ar === 0 && ai === 0) continue;
        const fr = ar * ir - ai * ii, fi = ar * ii + ai * ir;
        for (let j = k; j < n; j++) {
          const br = mr[k * n + j], bi = mi[k * n + j];
          mr[i * n + j] -= fr * br - fi * bi;
          mi[i * n + j] -= fr * bi + fi * br;
        }
        const yr = xr[k], yi = xi[k];
        xr[i] -= fr * yr - fi * yi;
        xi[i] -= fr * yi + fi * yr;
      }
    }
    let gr = d, gi = 0;
    for (let i = n - 1; i >= 0; i--) {
      let sr = xr[i], si = xi[i];
      for (let j = i + 1; j < n; j++) {
        sr -= mr[i * n + j] * xr[j] - mi[i * n + j] * xi[j];
        si -= mr[i * n + j] * xi[j] + mi[i * n + j] * xr[j];
      }
      const pr = mr[i * n + i], pi = mi[i * n + i], den = pr * pr + pi * pi;
      xr[i] = (sr * pr + si * pi) / den;
      xi[i] = (si * pr - sr * pi) / den;
      gr += c[i] * xr[i];
      gi += c[i] * xi[i];
    }
    return { re: gr, im: gi };
  };
}
