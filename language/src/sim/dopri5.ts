// 'adaptive': explicit Dormand–Prince 5(4) with FSAL, PI step-size control and dense output of
// order 4 (coefficients and citations in dopri5-tableau.ts). Allocation-free after construction.

import type { Integrator, IntegratorOptions, OdeProblem, SegmentFailure } from './solver';
import { DOPRI5, DOPRI5_CONTROL } from './dopri5-tableau';
import { OneStepIntegrator, TRIAL_NON_FINITE, makeContext } from './solver-loop';
import type { CoreContext, StepCore, TrialTrouble } from './solver-loop';
import { Evaluator, errorNorm, failure, firstNonFinite, fmt, initialStep, newStats, worstComponent } from './solver-util';

const { a: A, c: C, e: E, d: D } = DOPRI5;
const { safety: SAFE, facMin, facMax, beta: BETA, expo1: EXPO1 } = DOPRI5_CONTROL;
/** The smallest facOld may become (HNW DOPRI5 code). */
const FAC_OLD_FLOOR = 1e-4;

class Dopri5Core implements StepCore {
  readonly order = 5;
  readonly trouble: TrialTrouble = { t: 0, component: -1, what: '' };
  private readonly ev: Evaluator;
  private readonly n: number;
  /** Stage derivatives k1..k7. */
  private k: Float64Array[];
  private readonly xs: Float64Array;
  private readonly errv: Float64Array;
  /** Dense-output coefficients r1..r5 of the last accepted step. */
  private readonly r: Float64Array[];
  private tOld = 0;
  private hOld = 1;
  private facOld = FAC_OLD_FLOOR;

  constructor(private readonly ctx: CoreContext) {
    const n = ctx.n;
    this.n = n;
    this.ev = new Evaluator(ctx.problem, ctx.stats);
    this.k = Array.from({ length: 7 }, () => new Float64Array(n));
    this.xs = new Float64Array(n);
    this.errv = new Float64Array(n);
    this.r = Array.from({ length: 5 }, () => new Float64Array(n));
  }

  start(t: number, x: Float64Array): SegmentFailure | null {
    this.facOld = FAC_OLD_FLOOR;
    const bad = this.ev.f(t, x, this.k[0]);
    if (bad >= 0) return failure('non-finite', t, `derivative of state component ${bad} is ${this.k[0][bad]} at t = ${fmt(t)}`, bad);
    return null;
  }

  initialStep(t: number, x: Float64Array, hMax: number): number {
    const { n, rtol, atol } = this.ctx;
    return initialStep(this.ev, n, this.order, t, x, this.k[0], hMax, rtol, atol, this.xs, this.k[1]);
  }

  attempt(t: number, x: Float64Array, h: number, xNew: Float64Array): number {
    const n = this.n;
    const k = this.k;
    const xs = this.xs;
    for (let s = 1; s < 7; s++) {
      const row = A[s];
      // The last stage is evaluated at the new solution itself (FSAL).
      const arg = s === 6 ? xNew : xs;
      for (let i = 0; i < n; i++) {
        let acc = 0;
        for (let j = 0; j < s; j++) {
          const aij = row[j];
          if (aij !== 0) acc += aij * k[j][i];
        }
        arg[i] = x[i] + h * acc;
      }
      const ts = t + C[s] * h;
      const bad = this.ev.f(ts, arg, k[s]);
      if (bad >= 0) return this.nonFinite(ts, bad, `derivative is ${k[s][bad]}`);
    }
    const badX = firstNonFinite(xNew, n);
    if (badX >= 0) return this.nonFinite(t + h, badX, `state became ${xNew[badX]}`);
    const errv = this.errv;
    for (let i = 0; i < n; i++) {
      let acc = 0;
      for (let j = 0; j < 7; j++) {
        const ej = E[j];
        if (ej !== 0) acc += ej * k[j][i];
      }
      errv[i] = h * acc;
    }
    const err = errorNorm(n, errv, x, xNew, this.ctx.rtol, this.ctx.atol);
    return err === err ? err : this.nonFinite(t + h, worstComponent(n, errv, x, xNew, this.ctx.rtol, this.ctx.atol), 'error estimate is NaN');
  }

  propose(h: number, err: number, accepted: boolean, rejectedBefore: boolean): number {
    // HNW I §II.4 with the PI control of their DOPRI5 code.
    const fac11 = Math.pow(err, EXPO1);
    if (!accepted) return h / Math.min(1 / facMin, fac11 / SAFE);
    let fac = fac11 / Math.pow(this.facOld, BETA);
    fac = Math.max(1 / facMax, Math.min(1 / facMin, fac / SAFE));
    let hNew = h / fac;
    this.facOld = Math.max(err, FAC_OLD_FLOOR);
    if (rejectedBefore) hNew = Math.min(hNew, h);
    return hNew;
  }

  accept(t: number, h: number, x: Float64Array, xNew: Float64Array): void {
    const n = this.n;
    const k = this.k;
    const r = this.r;
    const r1 = r[0], r2 = r[1], r3 = r[2], r4 = r[3], r5 = r[4];
    for (let i = 0; i < n; i++) {
      const ydiff = xNew[i] - x[i];
      const bspl = h * k[0][i] - ydiff;
      r1[i] = x[i];
      r2[i] = ydiff;
      r3[i] = bspl;
      r4[i] = ydiff - h * k[6][i] - bspl;
      let acc = 0;
      for (let j = 0; j < 7; j++) {
        const dj = D[j];
        if (dj !== 0) acc += dj * k[j][i];
      }
      r5[i] = h * acc;
    }
    this.tOld = t;
    this.hOld = h;
    // First same as last: k7 at the new point is k1 of the next step.
    const k1 = k[0];
    k[0] = k[6];
    k[6] = k1;
  }

  dense(tq: number, out: Float64Array): void {
    const th = (tq - this.tOld) / this.hOld;
    const th1 = 1 - th;
    const r = this.r;
    const r1 = r[0], r2 = r[1], r3 = r[2], r4 = r[3], r5 = r[4];
    for (let i = 0; i < this.n; i++) out[i] = r1[i] + th * (r2[i] + th1 * (r3[i] + th * (r4[i] + th1 * r5[i])));
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
