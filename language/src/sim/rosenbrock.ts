// 'stiff': the linearly implicit Rosenbrock method RODAS 4(3) (coefficients and citations in
// rosenbrock-tableau.ts), with the exact Jacobian of the problem, LU with partial pivoting
// (rosenbrock-lu.ts), the predictive step-size controller of the RODAS code, and dense output of
// order 3. Per accepted state: one f, one Jacobian, one time derivative (skipped for autonomous
// problems); per trial: one decomposition and five more f evaluations. After a rejection only the
// decomposition is redone. Without problem.jac the Jacobian is formed by forward differences
// (counted in stats.differenceJacobians). Allocation-free after construction.

import type { Integrator, IntegratorOptions, OdeProblem, SegmentFailure } from './solver';
import { RODAS, RODAS_CONTROL } from './rosenbrock-tableau';
import { luFactor, luSolve } from './rosenbrock-lu';
import { OneStepIntegrator, TRIAL_FATAL, TRIAL_NON_FINITE, TRIAL_SINGULAR, makeContext } from './solver-loop';
import type { CoreContext, StepCore, TrialTrouble } from './solver-loop';
import { Evaluator, UROUND, errorNorm, failure, firstNonFinite, fmt, initialStep, newStats, worstComponent } from './solver-util';

const S = RODAS.stages;
const GAMMA = RODAS.gamma;
const { safety: SAFE, facMin, facMax, exponent: EXPO, firstRejectCut, errAccFloor } = RODAS_CONTROL;

class RodasCore implements StepCore {
  readonly order = 4;
  readonly trouble: TrialTrouble = { t: 0, component: -1, what: '' };
  private readonly ev: Evaluator;
  private readonly n: number;
  private readonly jac: Float64Array;
  private readonly lu: Float64Array;
  private readonly piv: Int32Array;
  private readonly f0: Float64Array;
  private readonly fT: Float64Array;
  private readonly u: Float64Array[];
  private readonly xs: Float64Array;
  private readonly fs: Float64Array;
  /** Dense output of the last accepted step. */
  private readonly d0: Float64Array;
  private readonly d1: Float64Array;
  private readonly c2: Float64Array;
  private readonly c3: Float64Array;
  private tOld = 0;
  private hOld = 1;
  /** f, J and ∂f/∂t are current for the accepted state. */
  private prepared = false;
  private hasTimeTerm = true;
  private accepted = 0;
  private hAcc = 0;
  private errAcc = 0;

  constructor(private readonly ctx: CoreContext) {
    const n = ctx.n;
    this.n = n;
    this.ev = new Evaluator(ctx.problem, ctx.stats);
    this.jac = new Float64Array(n * n);
    this.lu = new Float64Array(n * n);
    this.piv = new Int32Array(n);
    this.f0 = new Float64Array(n);
    this.fT = new Float64Array(n);
    this.u = Array.from({ length: S }, () => new Float64Array(n));
    this.xs = new Float64Array(n);
    this.fs = new Float64Array(n);
    this.d0 = new Float64Array(n);
    this.d1 = new Float64Array(n);
    this.c2 = new Float64Array(n);
    this.c3 = new Float64Array(n);
  }

  start(t: number, x: Float64Array): SegmentFailure | null {
    this.accepted = 0;
    this.prepared = false;
    if (this.prepare(t, x)) return null;
    const tr = this.trouble;
    return failure('non-finite', tr.t, `${tr.what} (component ${tr.component}) at t = ${fmt(tr.t)}`, tr.component);
  }

  initialStep(t: number, x: Float64Array, hMax: number): number {
    const { n, rtol, atol } = this.ctx;
    return initialStep(this.ev, n, this.order, t, x, this.f0, hMax, rtol, atol, this.xs, this.fs);
  }

  /** f, Jacobian and time derivative at an accepted state. False (with `trouble`) when not finite. */
  private prepare(t: number, x: Float64Array): boolean {
    const n = this.n;
    const { problem, stats } = this.ctx;
    let bad = this.ev.f(t, x, this.f0);
    if (bad >= 0) return this.note(t, bad, `derivative is ${this.f0[bad]}`);
    const J = this.jac;
    stats.jacobians++;
    if (problem.jac) {
      problem.jac(t, x, J);
      const k = firstNonFinite(J, n * n);
      if (k >= 0) return this.note(t, (k / n) | 0, `Jacobian entry (${(k / n) | 0}, ${k % n}) is ${J[k]}`);
    } else {
      stats.differenceJacobians++;
      const xs = this.xs;
      const fs = this.fs;
      xs.set(x);
      for (let j = 0; j < n; j++) {
        const xj = x[j];
        const delta = Math.sqrt(UROUND * Math.max(1e-5, Math.abs(xj)));
        xs[j] = xj + delta;
        bad = this.ev.f(t, xs, fs);
        xs[j] = xj;
        if (bad >= 0) return this.note(t, bad, `derivative is ${fs[bad]} while forming the Jacobian`);
        for (let i = 0; i < n; i++) J[i * n + j] = (fs[i] - this.f0[i]) / delta;
      }
    }
    this.hasTimeTerm = problem.autonomous !== true;
    if (this.hasTimeTerm) {
      const delta = Math.sqrt(UROUND * Math.max(1e-5, Math.abs(t)));
      bad = this.ev.f(t + delta, x, this.fs);
      if (bad >= 0) return this.note(t + delta, bad, `derivative is ${this.fs[bad]}`);
      for (let i = 0; i < n; i++) this.fT[i] = (this.fs[i] - this.f0[i]) / delta;
    }
    this.prepared = true;
    return true;
  }

  attempt(t: number, x: Float64Array, h: number, xNew: Float64Array): number {
    if (!this.prepared && !this.prepare(t, x)) return TRIAL_FATAL;
    const n = this.n;
    const { lu, piv, u, xs, fs, f0, fT } = this;
    // Iteration matrix 1/(hγ) I − J.
    const diag = 1 / (h * GAMMA);
    const J = this.jac;
    for (let i = 0; i < n * n; i++) lu[i] = -J[i];
    for (let i = 0; i < n; i++) lu[i * n + i] += diag;
    this.ctx.stats.decompositions++;
    if (!luFactor(lu, n, piv)) {
      this.trouble.t = t;
      this.trouble.component = -1;
      this.trouble.what = 'the iteration matrix I/(hγ) − J is singular';
      return TRIAL_SINGULAR;
    }
    const timeTerm = this.hasTimeTerm;
    for (let s = 0; s < S; s++) {
      const us = u[s];
      const hg = h * RODAS.gammaSum[s];
      if (s === 0) {
        for (let i = 0; i < n; i++) us[i] = timeTerm ? f0[i] + hg * fT[i] : f0[i];
      } else {
        const a = RODAS.a[s];
        const c = RODAS.c[s];
        for (let i = 0; i < n; i++) {
          let acc = x[i];
          for (let j = 0; j < s; j++) acc += a[j] * u[j][i];
          xs[i] = acc;
        }
        const ts = t + RODAS.alpha[s] * h;
        const bad = this.ev.f(ts, xs, fs);
        if (bad >= 0) {
          this.note(ts, bad, `derivative is ${fs[bad]}`);
          return TRIAL_NON_FINITE;
        }
        for (let i = 0; i < n; i++) {
          let acc = fs[i];
          for (let j = 0; j < s; j++) acc += (c[j] / h) * u[j][i];
          us[i] = timeTerm && hg !== 0 ? acc + hg * fT[i] : acc;
        }
      }
      luSolve(lu, n, piv, us);
    }
    // Stiffly accurate: the new solution is the last stage argument plus u6.
    const u6 = u[S - 1];
    for (let i = 0; i < n; i++) xNew[i] = xs[i] + u6[i];
    const badX = firstNonFinite(xNew, n);
    if (badX >= 0) {
      this.note(t + h, badX, `state became ${xNew[badX]}`);
      return TRIAL_NON_FINITE;
    }
    const err = errorNorm(n, u6, x, xNew, this.ctx.rtol, this.ctx.atol);
    if (err !== err) {
      this.note(t + h, worstComponent(n, u6, x, xNew, this.ctx.rtol, this.ctx.atol), 'error estimate is NaN');
      return TRIAL_NON_FINITE;
    }
    return err;
  }

  propose(h: number, err: number, accepted: boolean, rejectedBefore: boolean): number {
    let fac = Math.max(1 / facMax, Math.min(1 / facMin, Math.pow(err, EXPO) / SAFE));
    if (!accepted) return this.accepted === 0 ? h * firstRejectCut : h / fac;
    if (this.accepted > 0) {
      // Predictive controller (Gustafsson), as in the RODAS code.
      let facGus = ((this.hAcc / h) * Math.pow((err * err) / this.errAcc, EXPO)) / SAFE;
      facGus = Math.max(1 / facMax, Math.min(1 / facMin, facGus));
      fac = Math.max(fac, facGus);
    }
    this.accepted++;
    this.hAcc = h;
    this.errAcc = Math.max(errAccFloor, err);
    const hNew = h / fac;
    return rejectedBefore ? Math.min(hNew, h) : hNew;
  }

  accept(t: number, h: number, x: Float64Array, xNew: Float64Array): void {
    const n = this.n;
    const u = this.u;
    const { d2, d3 } = RODAS;
    for (let i = 0; i < n; i++) {
      let a2 = 0;
      let a3 = 0;
      for (let j = 0; j < 5; j++) {
        a2 += d2[j] * u[j][i];
        a3 += d3[j] * u[j][i];
      }
      this.c2[i] = a2;
      this.c3[i] = a3;
    }
    this.d0.set(x);
    this.d1.set(xNew);
    this.tOld = t;
    this.hOld = h;
    this.prepared = false;
  }

  dense(tq: number, out: Float64Array): void {
    const s = (tq - this.tOld) / this.hOld;
    const s1 = 1 - s;
    const { d0, d1, c2, c3 } = this;
    for (let i = 0; i < this.n; i++) out[i] = s1 * d0[i] + s * (d1[i] + s1 * (c2[i] + s * c3[i]));
  }

  worst(x: Float64Array, xNew: Float64Array): number {
    return worstComponent(this.n, this.u[S - 1], x, xNew, this.ctx.rtol, this.ctx.atol);
  }

  private note(t: number, component: number, what: string): false {
    this.trouble.t = t;
    this.trouble.component = component;
    this.trouble.what = what;
    return false;
  }
}

/** The 'stiff' integrator. */
export function createRosenbrock(problem: OdeProblem, options: IntegratorOptions): Integrator {
  const stats = newStats();
  const ctx = makeContext(problem, options, stats);
  return new OneStepIntegrator('stiff', problem, options, new RodasCore(ctx), stats);
}
