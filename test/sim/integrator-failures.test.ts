// Failures end a segment with status 'failed' and a message naming what, where and when; they
// never hang and never throw.

import { describe, expect, test } from 'vitest';
import { createIntegrator } from '../../language/src/sim/solver';
import type { IntegratorMethod, OdeProblem } from '../../language/src/sim/solver';
import { BLOW_UP, vanDerPol } from '../reference/ode/problems';
import { METHODS, run } from '../reference/ode/harness';

const cont = () => 'continue' as const;

describe.each(METHODS)('%s', (method) => {
  test("x' = x², x(0) = 1 blows up at t = 1: failed near t = 1 with a message naming the time", () => {
    // x = 1/(1 − t) (separation of variables [derived]).
    const r = run(method, BLOW_UP, { rtol: 1e-6, atol: 1e-6 });
    expect(r.result.status).toBe('failed');
    const f = r.result.failure!;
    expect(['step-underflow', 'non-finite', 'too-many-steps']).toContain(f.reason);
    expect(Math.abs(r.result.t - 1)).toBeLessThan(1e-3);
    expect(Math.abs(f.t - 1)).toBeLessThan(1e-3);
    expect(f.message).toMatch(/at t = (1|0\.99)/);
    // Up to where it stopped, the solution was right.
    const mid = r.steps.find((s) => s.t > 0.5)!;
    expect(mid.x[0] * (1 - mid.t)).toBeCloseTo(1, 4);
  });

  test('f returning NaN: non-finite, naming the component and the time', () => {
    const problem: OdeProblem = {
      n: 3,
      f: (t, x, d) => {
        d[0] = -x[0];
        d[1] = t > 0.3 ? NaN : 1;
        d[2] = 0;
      },
      jac: (_t, _x, J) => {
        J.fill(0);
        J[0] = -1;
      },
    };
    const ig = createIntegrator(method, problem, { rtol: 1e-6, atol: 1e-6 });
    const r = ig.integrate(0, new Float64Array([1, 0, 0]), 2, cont);
    expect(r.status).toBe('failed');
    expect(r.failure?.reason).toBe('non-finite');
    expect(r.failure?.component).toBe(1);
    expect(r.failure?.message).toMatch(/component 1/);
    expect(r.failure?.message).toMatch(/NaN/);
    expect(r.failure!.t).toBeGreaterThan(0.3);
    expect(r.failure!.t).toBeLessThan(1);
    expect(r.t).toBeLessThanOrEqual(0.3 + 1e-9);
    // The state handed back is the last good one.
    expect(Number.isFinite(r.x[0]) && Number.isFinite(r.x[1])).toBe(true);
  });

  test('a non-finite initial state or derivative fails at once', () => {
    const problem: OdeProblem = {
      n: 2,
      f: (_t, x, d) => {
        d[0] = Math.sqrt(x[0]);
        d[1] = 0;
      },
      jac: (_t, x, J) => {
        J.fill(0);
        J[0] = 0.5 / Math.sqrt(x[0]);
      },
    };
    const ig = createIntegrator(method, problem, { rtol: 1e-6, atol: 1e-6 });
    const bad = ig.integrate(0, new Float64Array([1, Infinity]), 1, cont);
    expect(bad.failure?.reason).toBe('non-finite');
    expect(bad.failure?.component).toBe(1);
    expect(bad.t).toBe(0);
    const neg = ig.integrate(2, new Float64Array([-1, 0]), 3, cont);
    expect(neg.failure?.reason).toBe('non-finite');
    expect(neg.failure?.component).toBe(0);
    expect(neg.failure?.t).toBe(2);
  });

  test('exceptions from f and from onStep become failures', () => {
    const problem: OdeProblem = {
      n: 1,
      f: (t, _x, d) => {
        if (t > 0.5) throw new Error('table lookup out of range');
        d[0] = 1;
      },
      jac: (_t, _x, J) => {
        J[0] = 0;
      },
    };
    const ig = createIntegrator(method, problem, { rtol: 1e-6, atol: 1e-6 });
    const r = ig.integrate(0, new Float64Array([0]), 1, cont);
    expect(r.status).toBe('failed');
    expect(r.failure?.reason).toBe('exception');
    expect(r.failure?.message).toMatch(/table lookup out of range/);
    const r2 = ig.integrate(0, new Float64Array([0]), 0.4, () => {
      throw new Error('callback broke');
    });
    expect(r2.failure?.reason).toBe('exception');
    expect(r2.failure?.message).toMatch(/callback broke/);
  });

  test('bad arguments fail with bad-input; an empty segment is done at once', () => {
    const p: OdeProblem = { n: 1, f: (_t, x, d) => void (d[0] = -x[0]), jac: (_t, _x, J) => void (J[0] = -1) };
    const ig = createIntegrator(method, p, { rtol: 1e-6, atol: 1e-6 });
    expect(ig.integrate(1, new Float64Array([1]), 0, cont).failure?.reason).toBe('bad-input');
    expect(ig.integrate(0, new Float64Array([1]), NaN, cont).failure?.reason).toBe('bad-input');
    expect(ig.integrate(0, new Float64Array(0), 1, cont).failure?.reason).toBe('bad-input');
    const empty = ig.integrate(3, new Float64Array([7]), 3, cont);
    expect(empty.status).toBe('done');
    expect(empty.t).toBe(3);
    expect(empty.x[0]).toBe(7);
    for (const opts of [{ rtol: 0, atol: 1e-6 }, { rtol: 1e-6, atol: -1 }, { rtol: 1e-6, atol: new Float64Array(2) }, { rtol: 1e-6, atol: 1e-6, maxSteps: 0 }]) {
      const r = createIntegrator(method, p, opts).integrate(0, new Float64Array([1]), 1, cont);
      expect(r.status).toBe('failed');
      expect(r.failure?.reason).toBe('bad-input');
      expect(r.failure?.message.length).toBeGreaterThan(10);
    }
  });

  test('maxSteps ends a long run with too-many-steps at the time reached', () => {
    const r = run(method, vanDerPol(1000), { rtol: 1e-6, atol: 1e-6, maxSteps: 50 });
    expect(r.result.status).toBe('failed');
    expect(r.result.failure?.reason).toBe('too-many-steps');
    expect(r.result.t).toBeGreaterThan(0);
    expect(r.result.t).toBeLessThan(2000);
    expect(r.result.failure?.message).toMatch(/50 step attempts/);
  });
});

test('an unknown method is reported, not thrown', () => {
  const p: OdeProblem = { n: 1, f: (_t, x, d) => void (d[0] = -x[0]) };
  const ig = createIntegrator('implicit-euler' as IntegratorMethod, p, { rtol: 1e-6, atol: 1e-6 });
  const r = ig.integrate(0, new Float64Array([1]), 1, cont);
  expect(r.failure?.reason).toBe('bad-input');
  expect(r.failure?.message).toMatch(/implicit-euler/);
});

test('stiff: an iteration matrix that cannot be factorized ends as singular', () => {
  // Entries near the largest double overflow during elimination, for every step size tried.
  const big = 1e308;
  const p: OdeProblem = {
    n: 2,
    autonomous: true,
    f: (_t, _x, d) => {
      d[0] = 0;
      d[1] = 0;
    },
    jac: (_t, _x, J) => {
      J[0] = big;
      J[1] = big;
      J[2] = big;
      J[3] = -big;
    },
  };
  const ig = createIntegrator('stiff', p, { rtol: 1e-6, atol: 1e-6 });
  const r = ig.integrate(0, new Float64Array([0, 0]), 1, cont);
  expect(r.status).toBe('failed');
  expect(r.failure?.reason).toBe('singular');
  expect(r.failure?.message).toMatch(/singular/);
  expect(ig.stats.decompositions).toBeGreaterThan(1);
});
