// 'adaptive': explicit Dormand–Prince 5(4) with FSAL, PI step-size control and dense output of
// order 4 (coefficients and citations in dopri5-tableau.ts). Allocation-free after construction.

import type { Integrator, IntegratorOptions, OdeProblem, SegmentFailure } from './solver';
import { DOPRI5, DOPRI5_CONTROL } from './dopri5-tableau';
import { OneStepIntegrator, TRIAL_NON_FINITE, makeContext } from './solver-loop';
import type { CoreContext, StepCore, TrialTrouble } from './solver-loop';
import { Evaluator, errorNorm, failure, firstNonFinite, fmt, initialStep, newStats, worstComponent } from './solver-util';

const { a: A, c: C, e: E, d: D } = DOPRI5;
const [, C2, C3, C4, C5, C6] = C;
const A21 = A[1][0];
const [A31, A32] = A[2];
const [A41, A42, A43] = A[3];
const [A51, A52, A53, A54] = A[4];
const [A61, A62, A63, A64, A65] = A[5];
const [A71, , A73, A74, A75, A76] = A[6];
const [E1, , E3, E4, E5, E6, E7] = E;
const [D1, , D3, D4, D5, D6, D7] = D;
if (A[6][1] !== 0 || E[1] !== 0 || D[1] !== 0) throw new Error('dopri5: the written-out stages assume the zeros of the tableau');
const { safety: SAFE, facMin, facMax, beta: BETA, expo1: EXPO1 } = DOPRI5_CONTROL;
/** The smallest facOld may become (HNW DOPRI5 code). */
const FAC_OLD_FLOOR = 1e-4;
const LOG_FAC_OLD_FLOOR = Math.log(FAC_OLD_FLOOR);

class Dopri5Core implements StepCore {
  readonly order = 5;
  readonly trouble: TrialTrouble = { t: 0, component: -1, what: '' };
  private readonly ev: Evaluator;
  private readonly n: number;
  /** Stage derivatives k1..k7. */
  private k: Float64Array[];
  private readonly xs: Float64Array;
  private readonly errv: Float64Array;
  /** Dense-output coefficients r1..r5 of the last accepted step, interleaved: r_k of component i at 5·i + k − 1. */
  private readonly r: Float64Array;
  private tOld = 0;
  private hOld = 1;
  /** 1 / hOld: a dense point costs a product instead of a division. */
  private hInv = 1;
  /** log of the last accepted step's error norm (floored): the PI controller's memory. */
  private logFacOld = LOG_FAC_OLD_FLOOR;

  constructor(private readonly ctx: CoreContext) {
    const n = ctx.n;
    this.n = n;
    this.ev = new Evaluator(ctx.problem, ctx.stats);
    this.k = Array.from({ length: 7 }, () => new Float64Array(n));
    this.xs = new Float64Array(n);
    this.errv = new Float64Array(n);
    this.r = new Float64Array(5 * n);
  }

  start(t: number, x: Float64Array): SegmentFailure | null {
    this.logFacOld = LOG_FAC_OLD_FLOOR;
    const bad = this.ev.f(t, x, this.k[0]);
    if (bad >= 0) return failure('non-finite', t, `derivative of state component ${bad} is ${this.k[0][bad]} at t = ${fmt(t)}`, bad);
    return null;
  }

  initialStep(t: number, x: Float64Array, hMax: number): number {
    const { n, rtol, atol } = this.ctx;
    return initialStep(this.ev, n, this.order, t, x, this.k[0], hMax, rtol, atol, this.xs, this.k[1]);
  }

  attempt(t: number, x: Float64Array, h: number, xNew: Float64Array): number {
    // The stages written out with the tableau's nonzero coefficients, each sum in the order of
    // the tableau's columns (the same arithmetic as a loop over the rows).
    const n = this.n;
    const k = this.k;
    const k1 = k[0], k2 = k[1], k3 = k[2], k4 = k[3], k5 = k[4], k6 = k[5], k7 = k[6];
    const xs = this.xs;
    const f = this.ctx.problem.f;
    for (let i = 0; i < n; i++) xs[i] = x[i] + h * (A21 * k1[i]);
    f(t + C2 * h, xs, k2);
    for (let i = 0; i < n; i++) xs[i] = x[i] + h * (A31 * k1[i] + A32 * k2[i]);
    f(t + C3 * h, xs, k3);
    for (let i = 0; i < n; i++) xs[i] = x[i] + h * (A41 * k1[i] + A42 * k2[i] + A43 * k3[i]);
    f(t + C4 * h, xs, k4);
    for (let i = 0; i < n; i++) xs[i] = x[i] + h * (A51 * k1[i] + A52 * k2[i] + A53 * k3[i] + A54 * k4[i]);
    f(t + C5 * h, xs, k5);
    for (let i = 0; i < n; i++) xs[i] = x[i] + h * (A61 * k1[i] + A62 * k2[i] + A63 * k3[i] + A64 * k4[i] + A65 * k5[i]);
    f(t + C6 * h, xs, k6);
    // The last stage is evaluated at the new solution itself (FSAL).
    for (let i = 0; i < n; i++) xNew[i] = x[i] + h * (A71 * k1[i] + A73 * k3[i] + A74 * k4[i] + A75 * k5[i] + A76 * k6[i]);
    f(t + h, xNew, k7);
    this.ctx.stats.evaluations += 6;
    // one test for every stage and the new state: v·0 is 0 for a finite v and NaN otherwise
    let chk = 0;
    for (let i = 0; i < n; i++) chk += k2[i] * 0 + k3[i] * 0 + k4[i] * 0 + k5[i] * 0 + k6[i] * 0 + k7[i] * 0 + xNew[i] * 0;
    if (chk !== 0) return this.whichNonFinite(t, h, xNew);
    const errv = this.errv;
    for (let i = 0; i < n; i++) errv[i] = h * (E1 * k1[i] + E3 * k3[i] + E4 * k4[i] + E5 * k5[i] + E6 * k6[i] + E7 * k7[i]);
    const err = errorNorm(n, errv, x, xNew, this.ctx.rtol, this.ctx.atol);
    return err === err ? err : this.nonFinite(t + h, worstComponent(n, errv, x, xNew, this.ctx.rtol, this.ctx.atol), 'error estimate is NaN');
  }

  /** The first stage (in order) or new state component that is not finite, as a trial outcome. */
  private whichNonFinite(t: number, h: number, xNew: Float64Array): number {
    const k = this.k;
    for (let s = 1; s < 7; s++) {
      const bad = firstNonFinite(k[s], this.n);
      if (bad >= 0) return this.nonFinite(t + C[s] * h, bad, `derivative is ${k[s][bad]}`);
    }
    const badX = firstNonFinite(xNew, this.n);
    return this.nonFinite(t + h, Math.max(0, badX), `state became ${xNew[Math.max(0, badX)]}`);
  }

  propose(h: number, err: number, accepted: boolean, rejectedBefore: boolean): number {
    // HNW I §II.4 with the PI control of their DOPRI5 code: fac = err^expo1 / facOld^β, taken
    // as one exponential of logarithms (log facOld is kept from the step that set it), which
    // costs a third of the two powers
    const logErr = Math.log(err);
    if (!accepted) return h / Math.min(1 / facMin, Math.exp(EXPO1 * logErr) / SAFE);
    let fac = Math.exp(EXPO1 * logErr - BETA * this.logFacOld);
    fac = Math.max(1 / facMax, Math.min(1 / facMin, fac / SAFE));
    let hNew = h / fac;
    this.logFacOld = err > FAC_OLD_FLOOR ? logErr : LOG_FAC_OLD_FLOOR;
    if (rejectedBefore) hNew = Math.min(hNew, h);
    return hNew;
  }

  accept(t: number, h: number, x: Float64Array, xNew: Float64Array): void {
    const n = this.n;
    const k = this.k;
    const r = this.r;
    const k1 = k[0], k3 = k[2], k4 = k[3], k5 = k[4], k6 = k[5], k7 = k[6];
    for (let i = 0, o = 0; i < n; i++, o += 5) {
      const ydiff = xNew[i] - x[i];
      const bspl = h * k1[i] - ydiff;
      r[o] = x[i];
      r[o + 1] = ydiff;
      r[o + 2] = bspl;
      r[o + 3] = ydiff - h * k7[i] - bspl;
      r[o + 4] = h * (D1 * k1[i] + D3 * k3[i] + D4 * k4[i] + D5 * k5[i] + D6 * k6[i] + D7 * k7[i]);
    }
    this.tOld = t;
    this.hOld = h;
    this.hInv = 1 / h;
    // First same as last: k7 at the new point is k1 of the next step.
    k[0] = k7;
    k[6] = k1;
  }

  dense(tq: number, out: Float64Array): void {
    const th = (tq - this.tOld) * this.hInv;
    const th1 = 1 - th;
    const r = this.r, n = this.n;
    for (let i = 0, o = 0; i < n; i++, o += 5) out[i] = r[o] + th * (r[o + 1] + th1 * (r[o + 2] + th * (r[o + 3] + th1 * r[o + 4])));
  }

  worst(x: Float64Array, xNew: Float64Array): number {
    return worstComponent(this.n, this.errv, x, xNew, this.ctx.rtol, this.ctx.atol);
  }

  private nonFinite(t: number, component: number, what: string): number {
    this.trouble.t = t;
    this.trouble.component = component;
    this.trouble.what = what;
    return TRIAL_NON_FINITE;
  }
}

/** The 'adaptive' integrator. */
export function createDopri5(problem: OdeProblem, options: IntegratorOptions): Integrator {
  const stats = newStats();
  const ctx = makeContext(problem, options, stats);
  return new OneStepIntegrator('adaptive', problem, options, new Dopri5Core(ctx), stats);
}
