// Pieces shared by the integrators: validation, the error norm, the initial step size, counted and
// checked evaluation of f, failure records. Nothing here allocates per step.

import type { FailureReason, IntegratorOptions, IntegratorStats, OdeProblem, SegmentFailure } from './solver';

/** Unit roundoff of IEEE double precision. */
export const UROUND = Number.EPSILON;
export const DEFAULT_MAX_STEPS = 100_000;

export function newStats(): IntegratorStats {
  return { steps: 0, rejected: 0, evaluations: 0, jacobians: 0, differenceJacobians: 0, decompositions: 0 };
}

export function clearStats(s: IntegratorStats): void {
  s.steps = 0;
  s.rejected = 0;
  s.evaluations = 0;
  s.jacobians = 0;
  s.differenceJacobians = 0;
  s.decompositions = 0;
}

/** Compact number text for messages. */
export function fmt(v: number): string {
  if (!Number.isFinite(v)) return String(v);
  return String(Number(v.toPrecision(10)));
}

export function failure(reason: FailureReason, t: number, message: string, component?: number): SegmentFailure {
  const f: SegmentFailure = { reason, t, message };
  if (component !== undefined && component >= 0) f.component = component;
  return f;
}

/** Index of the first entry of v[0..n) that is NaN or infinite, or -1. */
export function firstNonFinite(v: ArrayLike<number>, n: number): number {
  for (let i = 0; i < n; i++) {
    const a = v[i];
    if (a - a !== 0) return i; // NaN and ±Infinity give NaN here
  }
  return -1;
}

/** Checks a problem and its options once, at creation. Returns why they are unusable, or null. */
export function validateSetup(problem: OdeProblem, options: IntegratorOptions): string | null {
  if (!problem || typeof problem.f !== 'function') return 'the problem has no right-hand side f';
  const n = problem.n;
  if (!Number.isInteger(n) || n < 0) return `the number of states must be a non-negative integer (got ${String(n)})`;
  if (!options) return 'no integrator options';
  const { rtol, atol } = options;
  if (!(typeof rtol === 'number' && Number.isFinite(rtol) && rtol > 0)) return `rtol must be a positive number (got ${String(rtol)})`;
  if (rtol < 10 * UROUND) return `rtol ${fmt(rtol)} is below what double precision can deliver (use at least ${fmt(10 * UROUND)})`;
  if (typeof atol === 'number') {
    if (!(Number.isFinite(atol) && atol >= 0)) return `atol must be a non-negative number (got ${String(atol)})`;
  } else if (atol instanceof Float64Array) {
    if (atol.length !== n) return `atol has ${atol.length} entries for ${n} states`;
    const i = firstNonFinite(atol, n);
    if (i >= 0) return `atol[${i}] is not finite`;
    for (let j = 0; j < n; j++) if (atol[j] < 0) return `atol[${j}] is negative`;
  } else {
    return 'atol must be a number or a Float64Array';
  }
  if (options.hMax !== undefined && !(options.hMax > 0)) return `hMax must be positive (got ${String(options.hMax)})`;
  if (options.h0 !== undefined && !(options.h0 > 0)) return `h0 must be positive (got ${String(options.h0)})`;
  if (options.maxSteps !== undefined && !(Number.isInteger(options.maxSteps) && options.maxSteps > 0)) {
    return `maxSteps must be a positive integer (got ${String(options.maxSteps)})`;
  }
  return null;
}

/** Checks the arguments of one segment. Returns why they are unusable, or null. */
export function validateSegment(n: number, t0: number, x0: Float64Array, t1: number): string | null {
  if (!Number.isFinite(t0) || !Number.isFinite(t1)) return `segment bounds must be finite (got ${fmt(t0)} to ${fmt(t1)})`;
  if (t1 < t0) return `segment end ${fmt(t1)} lies before its start ${fmt(t0)}`;
  if (!x0 || x0.length < n) return `initial state has ${x0 ? x0.length : 0} entries for ${n} states`;
  return null;
}

/** Per-state absolute tolerances, expanded once. */
export function expandAtol(options: IntegratorOptions, n: number): Float64Array {
  const out = new Float64Array(n);
  if (typeof options.atol === 'number') out.fill(options.atol);
  else if (options.atol instanceof Float64Array && options.atol.length === n) out.set(options.atol);
  return out;
}

/**
 * Weighted RMS norm of an error vector (Hairer, Nørsett & Wanner, Solving ODEs I, §II.4, (4.11)):
 * sqrt(1/n Σ (e_i / sk_i)²), sk_i = atol_i + rtol·max(|a_i|, |b_i|). Returns 0 for n = 0 and NaN when
 * e holds a non-finite value.
 */
export function errorNorm(n: number, e: Float64Array, a: Float64Array, b: Float64Array, rtol: number, atol: Float64Array): number {
  if (n === 0) return 0;
  let s = 0;
  for (let i = 0; i < n; i++) {
    const sk = atol[i] + rtol * Math.max(Math.abs(a[i]), Math.abs(b[i]));
    const q = e[i] / sk;
    s += q * q;
  }
  return Math.sqrt(s / n);
}

/** Index of the largest |e_i| / sk_i (the state that limits the step), or -1 for n = 0. */
export function worstComponent(n: number, e: Float64Array, a: Float64Array, b: Float64Array, rtol: number, atol: Float64Array): number {
  let best = -1;
  let worst = -1;
  for (let i = 0; i < n; i++) {
    const sk = atol[i] + rtol * Math.max(Math.abs(a[i]), Math.abs(b[i]));
    let q = Math.abs(e[i] / sk);
    if (q !== q) q = Infinity;
    if (q > worst) {
      worst = q;
      best = i;
    }
  }
  return best;
}

/** Counted evaluation of f with a finiteness check of the result. */
export class Evaluator {
  constructor(
    private readonly problem: OdeProblem,
    private readonly stats: IntegratorStats,
  ) {}

  /** dx = f(t, x); returns the first non-finite component of dx, or -1. */
  f(t: number, x: Float64Array, dx: Float64Array): number {
    this.stats.evaluations++;
    this.problem.f(t, x, dx);
    return firstNonFinite(dx, this.problem.n);
  }
}

/**
 * Initial step size (Hairer, Nørsett & Wanner, Solving ODEs I, §II.4, "Starting step size", as in
 * their codes' HINIT): h = 0.01·‖x0‖/‖f0‖, one explicit Euler step to estimate the second
 * derivative, then h = min(100·h, (0.01 / max(‖f0‖, ‖x''‖))^(1/order), hMax).
 * `x1` and `f1` are scratch arrays of length n.
 */
export function initialStep(
  ev: Evaluator,
  n: number,
  order: number,
  t0: number,
  x0: Float64Array,
  f0: Float64Array,
  hMax: number,
  rtol: number,
  atol: Float64Array,
  x1: Float64Array,
  f1: Float64Array,
): number {
  let dnf = 0;
  let dny = 0;
  for (let i = 0; i < n; i++) {
    const sk = atol[i] + rtol * Math.abs(x0[i]);
    const a = f0[i] / sk;
    const b = x0[i] / sk;
    dnf += a * a;
    dny += b * b;
  }
  let h = dnf <= 1e-10 || dny <= 1e-10 ? 1e-6 : Math.sqrt(dny / dnf) * 0.01;
  h = Math.min(h, hMax);
  for (let i = 0; i < n; i++) x1[i] = x0[i] + h * f0[i];
  // A non-finite trial value only means the guess is too large; the step loop shrinks it.
  if (ev.f(t0 + h, x1, f1) >= 0) return Math.min(h * 1e-3, hMax);
  let der2 = 0;
  for (let i = 0; i < n; i++) {
    const sk = atol[i] + rtol * Math.abs(x0[i]);
    const a = (f1[i] - f0[i]) / sk;
    der2 += a * a;
  }
  der2 = Math.sqrt(der2) / h;
  const der12 = Math.max(Math.abs(der2), Math.sqrt(dnf));
  const h1 = der12 <= 1e-15 ? Math.max(1e-6, h * 1e-3) : Math.pow(0.01 / der12, 1 / order);
  return Math.min(100 * h, h1, hMax);
}

export function errorText(e: unknown): string {
  if (e instanceof Error) return e.message;
  return String(e);
}
