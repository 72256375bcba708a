// The segment loop shared by the one-step methods ('adaptive', 'stiff'). A method supplies a
// `StepCore` (one trial step, its step-size controller, its dense output); the loop does the
// bookkeeping: landing on t1, callbacks, step limits, underflow, retries after non-finite trial
// values, failures. Allocation-free after construction.

import type {
  Integrator,
  IntegratorMethod,
  IntegratorOptions,
  IntegratorStats,
  OdeProblem,
  SegmentFailure,
  SegmentResult,
  StepVerdict,
  StepView,
} from './solver';
import {
  DEFAULT_MAX_STEPS,
  UROUND,
  clearStats,
  errorText,
  expandAtol,
  failure,
  firstNonFinite,
  fmt,
  newStats,
  validateSegment,
  validateSetup,
} from './solver-util';

/** `attempt` codes (an attempt otherwise returns its error norm, ≥ 0). */
export const TRIAL_NON_FINITE = -1; // a stage gave NaN/Inf: retry with a smaller step
export const TRIAL_SINGULAR = -2; // the iteration matrix is singular: retry with a smaller step
export const TRIAL_FATAL = -3; // f is not finite at the accepted state itself: nothing to retry

/** Step-size cuts after a failed trial, and how many in a row are tolerated. */
const NON_FINITE_SHRINK = 0.25;
const NON_FINITE_RETRIES = 12;
const SINGULAR_SHRINK = 0.5;
const SINGULAR_RETRIES = 5; // as in Hairer & Wanner's RODAS code

/** Where the last non-finite value (or singular matrix) was met. */
export interface TrialTrouble {
  t: number;
  component: number;
  what: string;
}

export interface StepCore {
  /** Order used for the initial step estimate. */
  readonly order: number;
  /** Details of the last TRIAL_* outcome. */
  readonly trouble: TrialTrouble;
  /** Segment start at an accepted state: evaluate what the method needs there, reset controllers. */
  start(t: number, x: Float64Array): SegmentFailure | null;
  /** First step guess when the caller gave none. */
  initialStep(t: number, x: Float64Array, hMax: number): number;
  /** One trial step from (t, x) of size h into xNew: the scaled error norm, or a TRIAL_* code. */
  attempt(t: number, x: Float64Array, h: number, xNew: Float64Array): number;
  /** Next step size after a trial with error norm err. */
  propose(h: number, err: number, accepted: boolean, rejectedBefore: boolean): number;
  /** The trial was accepted: keep what `dense` needs (copies; x and xNew are reused afterwards). */
  accept(t: number, h: number, x: Float64Array, xNew: Float64Array): void;
  dense(tq: number, out: Float64Array): void;
  /** State index with the largest scaled error in the last trial. */
  worst(x: Float64Array, xNew: Float64Array): number;
}

export interface CoreContext {
  problem: OdeProblem;
  n: number;
  rtol: number;
  atol: Float64Array;
  stats: IntegratorStats;
}

export function makeContext(problem: OdeProblem, options: IntegratorOptions, stats: IntegratorStats): CoreContext {
  const n = Number.isInteger(problem?.n) && problem.n > 0 ? problem.n : 0;
  return { problem, n, rtol: options?.rtol ?? 1e-6, atol: expandAtol(options ?? { rtol: 1e-6, atol: 0 }, n), stats };
}

class View implements StepView {
  tPrev = 0;
  t = 0;
  x: Float64Array;
  constructor(
    x: Float64Array,
    private readonly core: { dense(tq: number, out: Float64Array): void } | null,
  ) {
    this.x = x;
  }
  dense(tq: number, out: Float64Array): void {
    if (this.core) this.core.dense(tq, out);
  }
}

export class OneStepIntegrator implements Integrator {
  readonly stats: IntegratorStats;
  private readonly n: number;
  private xa: Float64Array;
  private xb: Float64Array;
  private readonly xOut: Float64Array;
  private readonly view: View;
  private readonly setupError: string | null;
  private readonly maxSteps: number;

  constructor(
    readonly method: IntegratorMethod,
    private readonly problem: OdeProblem,
    private readonly options: IntegratorOptions,
    private readonly core: StepCore,
    stats: IntegratorStats,
  ) {
    this.stats = stats;
    this.setupError = validateSetup(problem, options);
    this.n = this.setupError ? 0 : problem.n;
    this.xa = new Float64Array(this.n);
    this.xb = new Float64Array(this.n);
    this.xOut = new Float64Array(this.n);
    this.view = new View(this.xa, core);
    this.maxSteps = options?.maxSteps ?? DEFAULT_MAX_STEPS;
  }

  resetStats(): void {
    clearStats(this.stats);
  }

  integrate(t0: number, x0: Float64Array, t1: number, onStep: (s: StepView) => StepVerdict, h0?: number): SegmentResult {
    let t = t0;
    try {
      const bad = this.setupError ?? validateSegment(this.n, t0, x0, t1);
      if (bad) return this.fail(t0, failure('bad-input', t0, bad), 0);
      this.xa.set(x0.subarray(0, this.n));
      const nf = firstNonFinite(this.xa, this.n);
      if (nf >= 0) return this.fail(t0, failure('non-finite', t0, `state component ${nf} is ${this.xa[nf]} at t = ${fmt(t0)}`, nf), 0);
      const hGiven = h0 !== undefined && h0 > 0 && Number.isFinite(h0) ? h0 : this.options.h0;
      if (t1 === t0) return this.finish('done', t0, hGiven ?? 0);
      if (this.n === 0) return this.emptySegment(t0, t1, onStep, hGiven ?? t1 - t0);
      const started = this.core.start(t0, this.xa);
      if (started) return this.fail(t0, started, 0);
      const hMaxSeg = Math.min(this.options.hMax ?? Infinity, t1 - t0);
      let h = Math.min(hGiven ?? this.core.initialStep(t0, this.xa, hMaxSeg), hMaxSeg);
      let attempts = 0;
      let rejectedBefore = false;
      let nonFiniteRun = 0;
      let singularRun = 0;
      let lastWasNonFinite = false;
      const stats = this.stats;
      for (;;) {
        if (attempts >= this.maxSteps) {
          return this.fail(t, failure('too-many-steps', t, `gave up after ${this.maxSteps} step attempts at t = ${fmt(t)} (step size ${fmt(h)}, segment end ${fmt(t1)})`), h);
        }
        if (0.1 * Math.abs(h) <= Math.abs(t) * UROUND || !(h > 0)) {
          if (lastWasNonFinite) return this.nonFinite(t, h);
          const c = this.core.worst(this.xa, this.xb);
          return this.fail(t, failure('step-underflow', t, `step size underflow at t = ${fmt(t)} (h = ${fmt(h)}), limited by state component ${c}`, c), h);
        }
        let last = false;
        const hPlanned = h;
        if (t + 1.01 * h >= t1) {
          h = t1 - t;
          last = true;
        }
        attempts++;
        const r = this.core.attempt(t, this.xa, h, this.xb);
        if (r === TRIAL_FATAL) return this.nonFinite(t, h);
        if (r === TRIAL_NON_FINITE) {
          stats.rejected++;
          rejectedBefore = true;
          lastWasNonFinite = true;
          if (++nonFiniteRun > NON_FINITE_RETRIES) return this.nonFinite(t, h);
          h *= NON_FINITE_SHRINK;
          continue;
        }
        if (r === TRIAL_SINGULAR) {
          stats.rejected++;
          rejectedBefore = true;
          if (++singularRun >= SINGULAR_RETRIES) {
            const tr = this.core.trouble;
            return this.fail(t, failure('singular', t, `${tr.what} at t = ${fmt(t)} (step size ${fmt(h)})`, tr.component), h);
          }
          h *= SINGULAR_SHRINK;
          continue;
        }
        const err = r;
        if (err <= 1) {
          const hNew = Math.min(this.core.propose(h, err, true, rejectedBefore), this.options.hMax ?? Infinity);
          this.core.accept(t, h, this.xa, this.xb);
          const tPrev = t;
          t = last ? t1 : t + h;
          const swap = this.xa;
          this.xa = this.xb;
          this.xb = swap;
          stats.steps++;
          rejectedBefore = false;
          lastWasNonFinite = false;
          nonFiniteRun = 0;
          singularRun = 0;
          const view = this.view;
          view.tPrev = tPrev;
          view.t = t;
          view.x = this.xa;
          const verdict = onStep(view);
          const hNext = last ? Math.max(hNew, Math.min(hPlanned, this.options.hMax ?? Infinity)) : hNew;
          if (verdict === 'stop') return this.finish('stopped', t, hNext);
          if (last) return this.finish('done', t, hNext);
          h = Math.min(hNew, hMaxSeg);
        } else {
          stats.rejected++;
          rejectedBefore = true;
          lastWasNonFinite = false;
          h = this.core.propose(h, err, false, true);
        }
      }
    } catch (e) {
      return this.fail(t, failure('exception', t, `evaluation failed at t = ${fmt(t)}: ${errorText(e)}`), 0);
    }
  }

  private nonFinite(t: number, h: number): SegmentResult {
    const tr = this.core.trouble;
    const msg = `${tr.what} (component ${tr.component}) at t = ${fmt(tr.t)}; the step size could not avoid it (h = ${fmt(h)})`;
    return this.fail(t, failure('non-finite', tr.t, msg, tr.component), h);
  }

  private emptySegment(t0: number, t1: number, onStep: (s: StepView) => StepVerdict, hNext: number): SegmentResult {
    this.stats.steps++;
    this.view.tPrev = t0;
    this.view.t = t1;
    this.view.x = this.xa;
    const verdict = onStep(this.view);
    return this.finish(verdict === 'stop' ? 'stopped' : 'done', t1, hNext);
  }

  private finish(status: 'done' | 'stopped', t: number, hNext: number): SegmentResult {
    this.xOut.set(this.xa);
    return { status, t, x: this.xOut, hNext };
  }

  private fail(t: number, f: SegmentFailure, h: number): SegmentResult {
    this.xOut.set(this.xa);
    return { status: 'failed', t, x: this.xOut, hNext: h, failure: f };
  }
}

/** Stands in for an integrator that cannot be made; every call fails with the reason. */
export class FailingIntegrator implements Integrator {
  readonly stats = newStats();
  private readonly empty = new Float64Array(0);
  constructor(
    readonly method: IntegratorMethod,
    private readonly reason: string,
  ) {}
  integrate(t0: number): SegmentResult {
    return { status: 'failed', t: t0, x: this.empty, hNext: 0, failure: failure('bad-input', t0, this.reason) };
  }
  resetStats(): void {
    clearStats(this.stats);
  }
}
