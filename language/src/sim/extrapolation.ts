// 'extrapolation': Gragg–Bulirsch–Stoer extrapolation of the explicit midpoint rule with order
// and step-size control and dense output (Hairer, Nørsett & Wanner, Solving ODEs I, §II.9), from
// the `odex` package (a port of Hairer & Wanner's ODEX), behind the common Integrator interface.
//
// What this wrapper adds to odex:
// - Non-finite values. odex does not test for them: a NaN error estimate passes every "reject"
//   comparison, so a NaN step is ACCEPTED and the integration carries on with NaN time and state
//   until maxSteps (read from node_modules/odex/src/odex.js, midex and the STATE machine). Here the
//   first non-finite derivative aborts the solve (an internal exception, caught below) and becomes
//   a 'non-finite' failure naming the time and the component.
// - Step-size underflow (odex has no test): an accepted step shorter than a few units of roundoff
//   of t ends the segment as 'step-underflow'.
// - The final time is reported as exactly t1 (odex's last x equals t1 up to rounding).
// - Exceptions from odex itself (it throws on bad settings) and from f or onStep become failures.
//
// odex allocates per step (it copies y for every f call and builds a dense closure per step), so
// unlike 'adaptive' and 'stiff' this method is not allocation-free. Its maxSteps counts step
// attempts of one solve, like the others. After a 'non-finite' abort, stats.rejected misses the
// rejections of that last solve (odex reports them only on a normal return).

import type {
  Integrator,
  IntegratorOptions,
  IntegratorStats,
  OdeProblem,
  SegmentFailure,
  SegmentResult,
  StepVerdict,
  StepView,
} from './solver';
import { Outcome, Solver } from './extrapolation-odex.js';
import type { OdexDerivative, OdexOutput } from './extrapolation-odex.js';
import {
  DEFAULT_MAX_STEPS,
  UROUND,
  clearStats,
  errorText,
  failure,
  firstNonFinite,
  fmt,
  newStats,
  validateSegment,
  validateSetup,
} from './solver-util';

/** odex's own default first step (its Fortran original's too). */
const ODEX_DEFAULT_H0 = 1e-4;
/** Reported times within this many units of roundoff of t1 are t1. */
const END_SNAP_ULPS = 16;
/** An accepted step shorter than this many units of roundoff of t is an underflow. */
const UNDERFLOW_ULPS = 10;

/** Thrown from inside f to abort odex; never escapes `integrate`. */
class Abort {
  constructor(readonly failure: SegmentFailure) {}
}

class ExtrapolationView implements StepView {
  tPrev = 0;
  t = 0;
  interp: ((c: number, x: number) => number) | undefined = undefined;
  constructor(
    public x: Float64Array,
    private readonly n: number,
  ) {}
  dense(tq: number, out: Float64Array): void {
    const f = this.interp;
    if (!f) {
      out.set(this.x);
      return;
    }
    for (let i = 0; i < this.n; i++) out[i] = f(i, tq);
  }
}

class ExtrapolationIntegrator implements Integrator {
  readonly method = 'extrapolation' as const;
  readonly stats: IntegratorStats = newStats();
  private readonly n: number;
  private readonly setupError: string | null;
  private readonly solver: Solver | null;
  private readonly xIn: Float64Array;
  private readonly dx: Float64Array;
  private readonly state: Float64Array;
  private readonly xOut: Float64Array;
  private readonly view: ExtrapolationView;
  private readonly fWrapped: OdexDerivative;
  private readonly outWrapped: OdexOutput;
  // Per-segment state read by the two callbacks.
  private onStep: (s: StepView) => StepVerdict = () => 'continue';
  private t1 = 0;
  private tLast = 0;
  private hLast = 0;
  private stopped = false;
  private abort: SegmentFailure | null = null;

  constructor(
    private readonly problem: OdeProblem,
    private readonly options: IntegratorOptions,
  ) {
    this.setupError = validateSetup(problem, options);
    const n = this.setupError ? 0 : problem.n;
    this.n = n;
    this.xIn = new Float64Array(n);
    this.dx = new Float64Array(n);
    this.state = new Float64Array(n);
    this.xOut = new Float64Array(n);
    this.view = new ExtrapolationView(this.state, n);
    this.solver = this.setupError || n === 0 ? null : this.makeSolver(n);
    this.fWrapped = (t, y) => this.evaluate(t, y);
    this.outWrapped = (nr, xOld, x, y, dense) => this.output(nr, xOld, x, y, dense);
  }

  private makeSolver(n: number): Solver {
    const s = new Solver(n);
    s.relativeTolerance = this.options.rtol;
    const atol = this.options.atol;
    s.absoluteTolerance = typeof atol === 'number' ? atol : Array.from(atol);
    s.maxSteps = this.options.maxSteps ?? DEFAULT_MAX_STEPS;
    s.maxStepSize = this.options.hMax ?? 0;
    s.denseOutput = true;
    return s;
  }

  resetStats(): void {
    clearStats(this.stats);
  }

  integrate(t0: number, x0: Float64Array, t1: number, onStep: (s: StepView) => StepVerdict, h0?: number): SegmentResult {
    this.tLast = t0;
    try {
      const bad = this.setupError ?? validateSegment(this.n, t0, x0, t1);
      if (bad) return this.fail(failure('bad-input', t0, bad), 0);
      const n = this.n;
      this.state.set(x0.subarray(0, n));
      const nf = firstNonFinite(this.state, n);
      if (nf >= 0) return this.fail(failure('non-finite', t0, `state component ${nf} is ${this.state[nf]} at t = ${fmt(t0)}`, nf), 0);
      const hGiven = h0 !== undefined && h0 > 0 && Number.isFinite(h0) ? h0 : this.options.h0;
      this.hLast = hGiven ?? 0;
      if (t1 === t0) return this.finish('done', t0);
      this.onStep = onStep;
      this.t1 = t1;
      this.stopped = false;
      this.abort = null;
      this.view.interp = undefined;
      const solver = this.solver;
      if (!solver) return this.trivialStep(t0, t1);
      solver.initialStepSize = hGiven ?? ODEX_DEFAULT_H0;
      const res = solver.solve(this.fWrapped, t0, Array.from(this.state), t1, this.outWrapped);
      this.stats.rejected += res.nReject;
      if (this.abort) return this.fail(this.abort, this.hLast);
      if (this.stopped) return this.finish('stopped', this.tLast);
      if (res.outcome === Outcome.MaxStepsExceeded) {
        const t = this.tLast;
        return this.fail(failure('too-many-steps', t, `gave up after ${solver.maxSteps} step attempts at t = ${fmt(t)} (last step ${fmt(this.hLast)}, segment end ${fmt(t1)})`), this.hLast);
      }
      if (this.tLast !== t1) {
        // odex stops without a step when t1 − t0 is below roundoff of t; or its last x missed t1 by
        // more than the snap tolerance (not seen): report the segment end with the state reached.
        this.view.interp = undefined;
        return this.trivialStep(this.tLast, t1);
      }
      return this.finish('done', t1);
    } catch (e) {
      if (e instanceof Abort) return this.fail(e.failure, this.hLast);
      const t = this.tLast;
      return this.fail(failure('exception', t, `evaluation failed at t = ${fmt(t)}: ${errorText(e)}`), this.hLast);
    }
  }

  /** f for odex: copies y, evaluates, aborts on non-finite derivatives. */
  private evaluate(t: number, y: number[]): ArrayLike<number> {
    const n = this.n;
    const x = this.xIn;
    for (let i = 0; i < n; i++) x[i] = y[i];
    this.stats.evaluations++;
    this.problem.f(t, x, this.dx);
    const bad = firstNonFinite(this.dx, n);
    if (bad >= 0) {
      const badX = firstNonFinite(x, n);
      const what = badX >= 0 ? `state component ${badX} became ${x[badX]}` : `derivative of state component ${bad} is ${this.dx[bad]}`;
      throw new Abort(failure('non-finite', t, `${what} at t = ${fmt(t)}`, badX >= 0 ? badX : bad));
    }
    return this.dx;
  }

  /** odex's solution callback → StepView / onStep. */
  private output(nr: number, xOld: number, x: number, y: number[], dense?: (c: number, x: number) => number): boolean {
    if (nr === 1) return true; // the initial point
    const n = this.n;
    const t1 = this.t1;
    const t = Math.abs(t1 - x) <= END_SNAP_ULPS * UROUND * Math.max(Math.abs(t1), Math.abs(x)) ? t1 : x;
    const st = this.state;
    for (let i = 0; i < n; i++) st[i] = y[i];
    this.stats.steps++;
    const h = x - xOld;
    const bad = firstNonFinite(st, n);
    if (bad >= 0) {
      this.abort = failure('non-finite', t, `state component ${bad} became ${st[bad]} at t = ${fmt(t)}`, bad);
      return false;
    }
    this.tLast = t;
    if (!(h > UNDERFLOW_ULPS * UROUND * Math.abs(x))) {
      this.abort = failure('step-underflow', t, `step size underflow at t = ${fmt(t)} (h = ${fmt(h)})`);
      return false;
    }
    this.hLast = h;
    const view = this.view;
    view.tPrev = xOld;
    view.t = t;
    view.interp = dense;
    const verdict = this.onStep(view);
    view.interp = undefined;
    if (verdict === 'stop') {
      this.stopped = true;
      return false;
    }
    return true;
  }

  /** A segment too short to integrate: the state stays; one step is reported. */
  private trivialStep(tPrev: number, t1: number): SegmentResult {
    this.stats.steps++;
    const view = this.view;
    view.tPrev = tPrev;
    view.t = t1;
    view.interp = undefined;
    const verdict = this.onStep(view);
    return this.finish(verdict === 'stop' ? 'stopped' : 'done', t1);
  }

  private finish(status: 'done' | 'stopped', t: number): SegmentResult {
    this.xOut.set(this.state);
    return { status, t, x: this.xOut, hNext: this.hLast };
  }

  private fail(f: SegmentFailure, h: number): SegmentResult {
    this.xOut.set(this.state);
    return { status: 'failed', t: this.tLast, x: this.xOut, hNext: h, failure: f };
  }
}

/** The 'extrapolation' integrator. */
export function createExtrapolation(problem: OdeProblem, options: IntegratorOptions): Integrator {
  return new ExtrapolationIntegrator(problem, options);
}
