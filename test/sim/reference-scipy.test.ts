// Our own nonlinear systems against scipy: trajectories from scipy.integrate.solve_ivp (DOP853,
// rtol 1e-12, atol 1e-14), written by test/reference/ode/make_fixtures.py into the JSON files
// beside it. Every method is checked twice: integrating segment by segment to each sample time
// (restarts with hNext, exact landing), and in one segment sampling the dense output.

import { describe, expect, test } from 'vitest';
import { createIntegrator } from '../../language/src/sim/solver';
import type { IntegratorMethod, OdeProblem } from '../../language/src/sim/solver';
import { FIXTURE_SYSTEMS } from '../reference/ode/problems';
import { METHODS } from '../reference/ode/harness';
import pendulumTanh from '../reference/ode/pendulum-tanh.json';
import duffing from '../reference/ode/duffing.json';
import motor from '../reference/ode/motor.json';

interface Fixture {
  name: string;
  params: Record<string, number>;
  t: number[];
  x: number[][];
  crossCheckMaxDiff: number;
}

const FIXTURES = [pendulumTanh, duffing, motor] as Fixture[];
const RTOL = 1e-8;
const ATOL = 1e-10;
/**
 * Global error bound in tolerances. A global error is carried along from where the state was large,
 * so each component is scaled by the size of the solution over the run, atol + rtol·max_t |x_ref|
 * (common practice for global-error comparisons), not by its value at the sample.
 */
const BOUND = 50;

function magnitudes(fx: Fixture): number[] {
  return fx.x[0].map((_, j) => Math.max(...fx.x.map((row) => Math.abs(row[j]))));
}

function scaledError(x: ArrayLike<number>, ref: number[], size: number[]): number {
  let worst = 0;
  ref.forEach((r, i) => (worst = Math.max(worst, Math.abs(x[i] - r) / (ATOL + RTOL * size[i]))));
  return worst;
}

function bySegments(method: IntegratorMethod, problem: OdeProblem, fx: Fixture): number {
  const ig = createIntegrator(method, problem, { rtol: RTOL, atol: ATOL });
  let x = Float64Array.from(fx.x[0]) as Float64Array;
  let h: number | undefined;
  let worst = 0;
  const size = magnitudes(fx);
  for (let i = 1; i < fx.t.length; i++) {
    const r = ig.integrate(fx.t[i - 1], x, fx.t[i], () => 'continue', h);
    expect(r.status, r.failure?.message).toBe('done');
    expect(r.t).toBe(fx.t[i]);
    worst = Math.max(worst, scaledError(r.x, fx.x[i], size));
    x = r.x;
    h = r.hNext;
  }
  return worst;
}

function byDense(method: IntegratorMethod, problem: OdeProblem, fx: Fixture): number {
  const ig = createIntegrator(method, problem, { rtol: RTOL, atol: ATOL });
  const out = new Float64Array(problem.n);
  let next = 1;
  let worst = 0;
  const size = magnitudes(fx);
  const t1 = fx.t[fx.t.length - 1];
  const r = ig.integrate(fx.t[0], Float64Array.from(fx.x[0]), t1, (s) => {
    while (next < fx.t.length && fx.t[next] <= s.t) {
      s.dense(fx.t[next], out);
      worst = Math.max(worst, scaledError(out, fx.x[next], size));
      next++;
    }
    return 'continue';
  });
  expect(r.status, r.failure?.message).toBe('done');
  expect(next).toBe(fx.t.length);
  return worst;
}

describe.each(FIXTURES)('scipy fixture $name', (fx) => {
  const problem = FIXTURE_SYSTEMS[fx.name](fx.params);

  test('the fixture is accurate far beyond the tolerance tested here', () => {
    expect(fx.crossCheckMaxDiff).toBeLessThan(1e-9);
    expect(fx.t.length).toBeGreaterThan(40);
  });

  test.each(METHODS)('%s: segments and dense output within the tolerance', (method) => {
    const seg = bySegments(method, problem, fx);
    const dense = byDense(method, problem, fx);
    expect(seg).toBeLessThan(BOUND);
    expect(dense).toBeLessThan(BOUND);
  });
});
