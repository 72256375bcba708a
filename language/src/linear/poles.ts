// Poles of a linear system (the eigenvalues of A) with their damping, natural frequency and time
// constant, and a stability verdict.
//
// Continuous time, pole λ = σ + jω (common practice, e.g. Ogata, Modern Control Engineering §5-3
// [memory]): natural frequency ωn = |λ|, damping ζ = −σ/|λ| (ζ = 1 for a pole at the origin, the
// limit along the negative real axis), time constant 1/|σ| (null on the imaginary axis).
// "On the axis" means |σ| ≤ tol with tol = axisTolerance·max(1, ‖A‖₁) (default 1e-9 relative).
// Verdict: 'unstable' when a pole lies right of the axis, or when a pole on the axis is repeated
// with a Jordan block (e.g. a double integrator, whose response grows like t); 'marginal' when
// poles lie on the axis, each with a full set of eigenvectors; 'stable' otherwise.
// Dominant poles: those whose real part is within tol of the largest real part (one real pole or
// a complex pair). The 2 % settling estimate 4/(ζωn) = 4/|σ| of the dominant pole (common
// practice, see REFERENCES.md) is null unless the system is stable.
//
// Discrete time (sampled controllers, period T): pole z, stable inside the unit circle, on the
// circle when ||z| − 1| ≤ tol (tol = axisTolerance·max(1, ‖Ad‖₁)). PoleInfo re/im are the z-plane
// location; damping, natural frequency and time constant are those of the equivalent continuous
// pole s = ln(z)/T (z = 0 gives damping 1, natural frequency Infinity, time constant 0).
// Dominant poles: the largest |z|.
//
// API
//   poleInfo(λ), polesOf(A, opts?) → PoleReport;  discretePolesOf(Ad, T, opts?) → PoleReport

import { cAbs, cLog, type Complex } from './complex';
import { eigenvalues } from './eig';
import { norm1, type Mat } from './dense';
import { SingularValueDecomposition, Matrix } from 'ml-matrix';
import type { PoleInfo } from '../protocol';

export type Verdict = 'stable' | 'marginal' | 'unstable';

export interface PoleOptions {
  /** Relative tolerance for "on the stability boundary", scaled by max(1, ‖A‖₁). Default 1e-9. */
  axisTolerance?: number;
}

export interface PoleReport {
  ok: boolean;
  poles: PoleInfo[];
  verdict: Verdict;
  /** Poles strictly right of the axis (outside the unit circle in discrete time). */
  unstableCount: number;
  /** Poles on the axis (on the unit circle). */
  boundaryCount: number;
  /** True when a boundary pole is repeated without a full set of eigenvectors (grows like t^k). */
  defectiveBoundary: boolean;
  dominant: PoleInfo[];
  /** 2 % settling estimate 4/(ζωn) of the dominant pole, s; null unless stable. */
  settling: number | null;
  /** Absolute tolerance that was used. */
  tolerance: number;
  problem?: string;
}

export function poleInfo(p: Complex): PoleInfo {
  const natural = cAbs(p);
  const damping = natural === 0 ? 1 : p.re === 0 ? 0 : -p.re / natural;
  return { re: p.re, im: p.im, damping, natural, timeConstant: p.re === 0 ? null : 1 / Math.abs(p.re) };
}

const order = (a: PoleInfo, b: PoleInfo): number => b.re - a.re || b.im - a.im;

/** Nullity of (A − λI) for complex λ = σ + jω, via the real 2n×2n form
 * [[A − σI, ωI], [−ωI, A − σI]] acting on [Re x; Im x] (its nullity is twice the complex one). */
function nullity(A: Mat, lam: Complex): number {
  const n = A.length;
  const M: number[][] = Array.from({ length: 2 * n }, () => new Array<number>(2 * n).fill(0));
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      const a = A[i][j] - (i === j ? lam.re : 0);
      M[i][j] = a; M[n + i][n + j] = a;
    }
    M[i][n + i] = lam.im; M[n + i][i] = -lam.im;
  }
  const sv = new SingularValueDecomposition(new Matrix(M), { autoTranspose: true }).diagonal;
  const floor = DEFECT_RELATIVE * Math.max(1, norm1(A));
  return sv.filter((v) => v <= floor).length / 2;
}

/** Relative size below which a singular value of A − λI counts as zero, and below which two
 * boundary eigenvalues count as one repeated eigenvalue (a Jordan block of size k perturbs its
 * eigenvalue by about ε^(1/k), so the separation must be far looser than the rounding level). */
const DEFECT_RELATIVE = 1e-6;

/** True when some repeated boundary eigenvalue has fewer eigenvectors than its multiplicity. */
function isDefective(A: Mat, pts: Complex[]): boolean {
  const sep = DEFECT_RELATIVE * Math.max(1, norm1(A));
  const used = new Array<boolean>(pts.length).fill(false);
  for (let i = 0; i < pts.length; i++) {
    if (used[i]) continue;
    let k = 0;
    for (let j = i; j < pts.length; j++) {
      if (!used[j] && Math.hypot(pts[j].re - pts[i].re, pts[j].im - pts[i].im) <= sep) { used[j] = true; k++; }
    }
    if (k > 1 && nullity(A, pts[i]) < k) return true;
  }
  return false;
}

function emptyReport(problem: string): PoleReport {
  return { ok: false, poles: [], verdict: 'unstable', unstableCount: 0, boundaryCount: 0, defectiveBoundary: false, dominant: [], settling: null, tolerance: 0, problem };
}

export function polesOf(A: Mat, opts: PoleOptions = {}): PoleReport {
  const ev = eigenvalues(A);
  if (!ev.ok) return emptyReport(ev.message ?? 'no eigenvalues');
  const tol = (opts.axisTolerance ?? 1e-9) * Math.max(1, norm1(A));
  const poles = ev.values.map(poleInfo).sort(order);
  const unstableCount = poles.filter((p) => p.re > tol).length;
  const onAxis = ev.values.filter((p) => Math.abs(p.re) <= tol);
  const defectiveBoundary = isDefective(A, onAxis.map((p) => ({ re: 0, im: p.im })));
  const verdict: Verdict = unstableCount > 0 || defectiveBoundary ? 'unstable' : onAxis.length > 0 ? 'marginal' : 'stable';
  const top = poles.length ? poles[0].re : 0;
  const dominant = poles.filter((p) => p.re >= top - tol);
  const settling = verdict === 'stable' && dominant.length ? 4 / Math.abs(dominant[0].re) : null;
  return { ok: true, poles, verdict, unstableCount, boundaryCount: onAxis.length, defectiveBoundary, dominant, settling, tolerance: tol };
}

/** Discrete-time poles of Ad for sample period T: stability by the unit circle. */
export function discretePolesOf(Ad: Mat, T: number, opts: PoleOptions = {}): PoleReport {
  if (!Number.isFinite(T) || !(T > 0)) return emptyReport('the sample period must be positive and finite');
  const ev = eigenvalues(Ad);
  if (!ev.ok) return emptyReport(ev.message ?? 'no eigenvalues');
  const tol = (opts.axisTolerance ?? 1e-9) * Math.max(1, norm1(Ad));
  const info = (z: Complex): PoleInfo => {
    const r = cAbs(z);
    if (r === 0) return { re: z.re, im: z.im, damping: 1, natural: Infinity, timeConstant: 0 };
    const s = cLog(z);
    const p = poleInfo({ re: s.re / T, im: s.im / T });
    return { ...p, re: z.re, im: z.im };
  };
  const mags = ev.values.map(cAbs);
  const poles = ev.values.map(info).sort((a, b) => Math.hypot(b.re, b.im) - Math.hypot(a.re, a.im) || b.im - a.im);
  const unstableCount = mags.filter((r) => r > 1 + tol).length;
  const boundaryCount = mags.filter((r) => Math.abs(r - 1) <= tol).length;
  // A repeated pole on the unit circle with a Jordan block grows like k^j.
  const defectiveBoundary = isDefective(Ad, ev.values.filter((z) => Math.abs(cAbs(z) - 1) <= tol));
  const verdict: Verdict = unstableCount > 0 || defectiveBoundary ? 'unstable' : boundaryCount > 0 ? 'marginal' : 'stable';
  const top = poles.length ? Math.hypot(poles[0].re, poles[0].im) : 0;
  const dominant = poles.filter((p) => Math.hypot(p.re, p.im) >= top - tol);
  const settling = verdict === 'stable' && dominant.length && dominant[0].timeConstant !== null ? 4 * dominant[0].timeConstant : null;
  return { ok: true, poles, verdict, unstableCount, boundaryCount, defectiveBoundary, dominant, settling, tolerance: tol };
}
