/**
 * ODE integrators: the contract between the integrators and the run driver.
 *
 * An integrator solves x' = f(t, x) for one `OdeProblem` with fixed tolerances. It knows nothing of
 * loops, limits or sample instants: the run driver cuts a run into segments between breakpoints and
 * calls `integrate(t0, x0, t1, onStep, h0)` once per segment.
 *
 * Guarantees the driver can build on:
 * - The last accepted step of a segment ends exactly on `t1` (the reported `t` is `t1` itself, not a
 *   sum of step sizes). A segment with `t1 === t0` returns 'done' at once without a step.
 * - `onStep` is called after every ACCEPTED step with a `StepView` for the interval [tPrev, t]:
 *   `x` is the state at `t`, `dense(tq, out)` the method's continuous extension on [tPrev, t].
 *   The view and its `x` are reused for every step: read them inside the callback, never keep them.
 *   Returning 'stop' ends the segment after this step (status 'stopped', `t` and `x` of this step).
 * - Events: detect a sign change over [tPrev, t], locate the root with `dense()` inside the
 *   callback, return 'stop', then start the next segment at the event time from the dense state,
 *   passing the previous `hNext` as `h0`. For 'adaptive' and 'stiff' neither steps nor restarts
 *   allocate (all work arrays are made once per integrator; each call returns one small result
 *   object); 'extrapolation' wraps a library that allocates per step.
 * - `integrate` never throws. Non-finite values from `f` (or in the state), step-size underflow,
 *   too many steps, a singular iteration matrix, bad arguments and exceptions thrown by `f`, `jac`
 *   or `onStep` all end in status 'failed' with a `failure` that names the time and, when known,
 *   the state component (index into x; the driver maps it to a state name).
 * - `SegmentResult.x` is a buffer owned by the integrator, valid until its next `integrate` call;
 *   it may be passed straight back as the next `x0`.
 * - `stats` accumulate over all segments until `resetStats()`.
 * - `maxSteps` counts step attempts (accepted and rejected) within one `integrate` call.
 *
 * Methods (see each file for coefficients and citations):
 * - 'adaptive'       dopri5.ts        explicit Dormand–Prince 5(4), dense output of order 4
 * - 'extrapolation'  extrapolation.ts Gragg–Bulirsch–Stoer extrapolation (the `odex` package)
 * - 'stiff'          rosenbrock.ts    linearly implicit RODAS 4(3), L-stable, exact Jacobian
 *
 * Error control everywhere uses the weighted RMS norm of Hairer, Nørsett & Wanner, Solving ODEs I,
 * §II.4: sk_i = atol_i + rtol·max(|x0_i|, |x1_i|), a step is accepted when the norm is ≤ 1.
 */

import { createDopri5 } from './dopri5';
import { createExtrapolation } from './extrapolation';
import { createRosenbrock } from './rosenbrock';
import { FailingIntegrator } from './solver-loop';

export type IntegratorMethod = 'adaptive' | 'extrapolation' | 'stiff';

export interface OdeProblem {
  /** Number of states. */
  n: number;
  /** dx = f(t, x). Must not allocate, must not keep or modify x. */
  f(t: number, x: Float64Array, dx: Float64Array): void;
  /** Exact Jacobian, n*n row-major: J[i*n + j] = dfi/dxj. Used by 'stiff' (falls back to differences). */
  jac?(t: number, x: Float64Array, J: Float64Array): void;
  /**
   * True when f does not depend on t explicitly. 'stiff' then skips the finite-difference time
   * derivative of f (one evaluation per step). Leave unset when unsure: it is only a saving.
   */
  autonomous?: boolean;
}

export interface IntegratorOptions {
  rtol: number;
  /** Scalar, or one value per state. */
  atol: number | Float64Array;
  /** First step size when `integrate` gets no h0; otherwise chosen automatically (HNW I §II.4). */
  h0?: number;
  hMax?: number;
  /** Step attempts per `integrate` call; default 100000. */
  maxSteps?: number;
}

/** Handed to the callback after each ACCEPTED step. Reused: do not keep it or its `x`. */
export interface StepView {
  tPrev: number;
  t: number;
  /** State at t. */
  x: Float64Array;
  /** Continuous extension on [tPrev, t], written into out (length n). */
  dense(tq: number, out: Float64Array): void;
}

/** 'stop' ends the segment after this step. */
export type StepVerdict = 'continue' | 'stop';

export type FailureReason =
  | 'step-underflow'
  | 'non-finite'
  | 'too-many-steps'
  | 'singular'
  /** Invalid problem, options or segment bounds. */
  | 'bad-input'
  /** f, jac or onStep threw. */
  | 'exception';

export interface SegmentFailure {
  reason: FailureReason;
  /** Time at which it happened (for 'non-finite': the time of the offending evaluation). */
  t: number;
  /** State index concerned, when one can be named. */
  component?: number;
  message: string;
}

export interface SegmentResult {
  status: 'done' | 'stopped' | 'failed';
  /** Time reached: t1 when done, the stopping step's end when stopped, the last accepted time when failed. */
  t: number;
  /** State at t (integrator-owned buffer). */
  x: Float64Array;
  /** Suggested first step for the next segment. */
  hNext: number;
  failure?: SegmentFailure;
}

export interface IntegratorStats {
  steps: number;
  rejected: number;
  /** Calls of f, including those for difference Jacobians and time derivatives. */
  evaluations: number;
  jacobians: number;
  /** How many of `jacobians` were formed by finite differences because the problem has no jac. */
  differenceJacobians: number;
  decompositions: number;
}

export interface Integrator {
  readonly method: IntegratorMethod;
  readonly stats: IntegratorStats;
  /** Integrate from (t0, x0) to exactly t1 ≥ t0, calling onStep after every accepted step. */
  integrate(t0: number, x0: Float64Array, t1: number, onStep: (s: StepView) => StepVerdict, h0?: number): SegmentResult;
  resetStats(): void;
}

/**
 * Never throws: an unknown method or invalid options give an integrator whose every `integrate`
 * call fails with reason 'bad-input' and says why.
 */
export function createIntegrator(method: IntegratorMethod, problem: OdeProblem, options: IntegratorOptions): Integrator {
  switch (method) {
    case 'adaptive':
      return createDopri5(problem, options);
    case 'extrapolation':
      return createExtrapolation(problem, options);
    case 'stiff':
      return createRosenbrock(problem, options);
    default:
      return new FailingIntegrator('adaptive', `unknown integration method '${String(method)}' (expected adaptive, extrapolation or stiff)`);
  }
}
