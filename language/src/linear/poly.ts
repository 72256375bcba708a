// Real polynomials as coefficient arrays, highest power first: [1, 3, 2] is s² + 3s + 2.
// The zero polynomial is [0] (degree −∞). Every function returns fresh arrays and never throws.
//
// API
//   polyTrim(p)               drop leading exact zeros ([] and [0, 0] become [0])
//   polyDegree(p)             degree after trimming; −Infinity for the zero polynomial
//   polyAdd(a, b), polySub(a, b), polyMul(a, b), polyScale(p, k), polyNeg(p), polyPow(p, k ≥ 0)
//   polyEval(p, x), polyEvalComplex(p, z)        Horner's rule
//   polyDeriv(p)
//   polyFromRoots(roots)      real coefficients of Π (s − rᵢ) (roots closed under conjugation)
//   polyRoots(p)              { ok, roots, problem? }: companion-matrix eigenvalues (balanced,
//                             ml-matrix QR), each polished by Newton's method on p; exact zero
//                             roots split off first; ordered by real part, then imaginary part.

import { cAbs, cDiv, cSub, type Complex } from './complex';
import { eigenvalues } from './eig';

export type Poly = number[];

export function polyTrim(p: Poly): Poly {
  let i = 0;
  while (i < p.length - 1 && p[i] === 0) i++;
  const out = p.slice(i);
  return out.length === 0 ? [0] : out;
}

export function isZeroPoly(p: Poly): boolean {
  return p.every((c) => c === 0);
}

export function polyDegree(p: Poly): number {
  const t = polyTrim(p);
  return t.length === 1 && t[0] === 0 ? -Infinity : t.length - 1;
}

export function polyAdd(a: Poly, b: Poly): Poly {
  const n = Math.max(a.length, b.length);
  const out = new Array<number>(n).fill(0);
  for (let i = 0; i < a.length; i++) out[n - a.length + i] += a[i];
  for (let i = 0; i < b.length; i++) out[n - b.length + i] += b[i];
  return polyTrim(out);
}

export const polyScale = (p: Poly, k: number): Poly => polyTrim(p.map((c) => c * k));
export const polyNeg = (p: Poly): Poly => polyScale(p, -1);
export const polySub = (a: Poly, b: Poly): Poly => polyAdd(a, polyNeg(b));

export function polyMul(a: Poly, b: Poly): Poly {
  if (a.length === 0 || b.length === 0) return [0];
  const out = new Array<number>(a.length + b.length - 1).fill(0);
  for (let i = 0; i < a.length; i++) for (let j = 0; j < b.length; j++) out[i + j] += a[i] * b[j];
  return polyTrim(out);
}

/** p^k for a non-negative integer k (other k give [NaN]). */
export function polyPow(p: Poly, k: number): Poly {
  if (!Number.isInteger(k) || k < 0) return [NaN];
  let out: Poly = [1];
  for (let i = 0; i < k; i++) out = polyMul(out, p);
  return out;
}

export function polyEval(p: Poly, x: number): number {
  let acc = 0;
  for (const c of p) acc = acc * x + c;
  return acc;
}

export function polyEvalComplex(p: Poly, z: Complex): Complex {
  let re = 0, im = 0;
  for (const c of p) {
    const r = re * z.re - im * z.im + c;
    im = re * z.im + im * z.re;
    re = r;
  }
  return { re, im };
}

export function polyDeriv(p: Poly): Poly {
  const n = p.length - 1;
  if (n <= 0) return [0];
  return polyTrim(p.slice(0, n).map((c, i) => c * (n - i)));
}

/** Π (s − rᵢ); imaginary parts of the product are dropped (exact zero for conjugate-closed roots). */
export function polyFromRoots(roots: Complex[]): Poly {
  let re: number[] = [1], im: number[] = [0];
  for (const r of roots) {
    const nr = new Array<number>(re.length + 1).fill(0), ni = new Array<number>(re.length + 1).fill(0);
    for (let i = 0; i < re.length; i++) {
      nr[i] += re[i]; ni[i] += im[i];
      nr[i + 1] -= re[i] * r.re - im[i] * r.im;
      ni[i + 1] -= re[i] * r.im + im[i] * r.re;
    }
    re = nr; im = ni;
  }
  return re;
}

export interface RootsResult {
  ok: boolean;
  roots: Complex[];
  problem?: 'zero-polynomial' | 'non-finite' | 'failed';
}

const byPlace = (a: Complex, b: Complex): number => a.re - b.re || a.im - b.im;

/** Newton steps on p from z, kept only while |p| decreases. */
function polish(p: Poly, dp: Poly, z: Complex): Complex {
  let best = z, fBest = cAbs(polyEvalComplex(p, z));
  for (let it = 0; it < 10 && fBest > 0; it++) {
    const d = polyEvalComplex(dp, best);
    if (d.re === 0 && d.im === 0) break;
    const next = cSub(best, cDiv(polyEvalComplex(p, best), d));
    const f = cAbs(polyEvalComplex(p, next));
    if (!(f < fBest)) break;
    best = next; fBest = f;
  }
  return best;
}

export function polyRoots(p: Poly): RootsResult {
  if (!p.every((c) => Number.isFinite(c))) return { ok: false, roots: [], problem: 'non-finite' };
  let q = polyTrim(p);
  if (q.length === 1) return q[0] === 0 ? { ok: false, roots: [], problem: 'zero-polynomial' } : { ok: true, roots: [] };
  const roots: Complex[] = [];
  while (q.length > 1 && q[q.length - 1] === 0) { q = q.slice(0, -1); roots.push({ re: 0, im: 0 }); }
  const n = q.length - 1;
  if (n === 1) roots.push({ re: -q[1] / q[0], im: 0 });
  else if (n >= 2) {
    // Companion matrix of the monic polynomial: first row −a1 … −an, ones below the diagonal.
    const C = Array.from({ length: n }, () => new Array<number>(n).fill(0));
    for (let j = 0; j < n; j++) C[0][j] = -q[j + 1] / q[0];
    for (let i = 1; i < n; i++) C[i][i - 1] = 1;
    const ev = eigenvalues(C);
    if (!ev.ok) return { ok: false, roots: [], problem: 'failed' };
    const dq = polyDeriv(q);
    for (const z of ev.values) roots.push(polish(q, dq, z));
  }
  return { ok: true, roots: roots.sort(byPlace) };
}

