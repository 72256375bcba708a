// Utilities for the integrator tests: run a problem and record the accepted steps, check a
// Jacobian by central differences, locate a root on the dense output.

import { createIntegrator } from '../../../language/src/sim/solver';
import type { Integrator, IntegratorMethod, IntegratorOptions, OdeProblem, SegmentResult, StepView } from '../../../language/src/sim/solver';
import type { TestProblem } from './problems';

export const METHODS: IntegratorMethod[] = ['adaptive', 'extrapolation', 'stiff'];

export interface Recorded {
  result: SegmentResult;
  /** Copy of the final state. */
  x: number[];
  /** Accepted steps: end time and a copy of the state. */
  steps: Array<{ tPrev: number; t: number; x: number[] }>;
  integrator: Integrator;
}

/** Integrates tp over [t0, t1] (t1 defaults to tp.t1) with one integrate call. */
export function run(
  method: IntegratorMethod,
  tp: TestProblem,
  options: IntegratorOptions,
  t1 = tp.t1,
  onStep?: (s: StepView) => void,
): Recorded {
  const integrator = createIntegrator(method, tp.problem, options);
  const steps: Recorded['steps'] = [];
  const result = integrator.integrate(tp.t0, Float64Array.from(tp.x0), t1, (s) => {
    steps.push({ tPrev: s.tPrev, t: s.t, x: Array.from(s.x) });
    onStep?.(s);
    return 'continue';
  });
  return { result, x: Array.from(result.x), steps, integrator };
}

/** Largest relative difference between problem.jac and central differences of f at (t, x). */
export function jacobianMismatch(problem: OdeProblem, t: number, x: number[]): number {
  const n = problem.n;
  const J = new Float64Array(n * n);
  problem.jac!(t, Float64Array.from(x), J);
  const fp = new Float64Array(n);
  const fm = new Float64Array(n);
  let worst = 0;
  for (let j = 0; j < n; j++) {
    const h = 1e-6 * Math.max(1, Math.abs(x[j]));
    const xp = Float64Array.from(x);
    const xm = Float64Array.from(x);
    xp[j] += h;
    xm[j] -= h;
    problem.f(t, xp, fp);
    problem.f(t, xm, fm);
    for (let i = 0; i < n; i++) {
      const fd = (fp[i] - fm[i]) / (2 * h);
      const scale = Math.max(1, Math.abs(fd), Math.abs(J[i * n + j]));
      worst = Math.max(worst, Math.abs(fd - J[i * n + j]) / scale);
    }
  }
  return worst;
}

/** Root of g on [a, b] (g(a), g(b) of opposite sign) by bisection to full precision. */
export function bisect(g: (t: number) => number, a: number, b: number): number {
  let ga = g(a);
  for (let i = 0; i < 200 && b - a > 0; i++) {
    const m = 0.5 * (a + b);
    if (m === a || m === b) break;
    const gm = g(m);
    if (gm === 0) return m;
    if ((gm < 0) === (ga < 0)) {
      a = m;
      ga = gm;
    } else b = m;
  }
  return 0.5 * (a + b);
}

/** Times at which component c of the solution crosses zero, found on the dense output of each step. */
export function zeroCrossings(method: IntegratorMethod, tp: TestProblem, options: IntegratorOptions, t1: number, c: number): number[] {
  const integrator = createIntegrator(method, tp.problem, options);
  const out = new Float64Array(tp.problem.n);
  const roots: number[] = [];
  let prev = tp.x0[c];
  integrator.integrate(tp.t0, Float64Array.from(tp.x0), t1, (s) => {
    const now = s.x[c];
    if (prev !== 0 && (prev < 0) !== (now < 0)) {
      roots.push(
        bisect(
          (tq) => {
            s.dense(tq, out);
            return out[c];
          },
          s.tPrev,
          s.t,
        ),
      );
    }
    prev = now;
    return 'continue';
  });
  return roots;
}
