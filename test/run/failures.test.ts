// Run-time failures end with a RunError that names the time and the state (LANGUAGE.md §4.3;
// the blow-up time of x' = x², x(0) = 1 is t = 1 since x = 1/(1 − t), calculus).

import { describe, expect, it } from 'vitest';
import { runOnce, simulate } from '../../language/src/sim/run';
import { runSpec } from '../../language/src/sim/sweep';
import { compile } from './helpers';

describe('run-time failures', () => {
  it("x' = x² blows up at t = 1 and the error names Blow.x", () => {
    const c = compile(`plant Blow { state x [1] = 1
      output y [1] = x
      x' = x^2 * 1 [1/s] }
      loop L { simulate 2 [s]
      show Blow.y }`);
    const [run] = simulate(c);
    expect(run.error).toBeDefined();
    expect(['LW701', 'LW702', 'LW703']).toContain(run.error!.code);
    expect(run.error!.state).toBe('Blow.x');
    expect(run.error!.time).toBeGreaterThan(0.99);
    expect(run.error!.time).toBeLessThan(1.0001);
    expect(run.error!.message).toMatch(/Blow\.x/);
    expect(run.error!.message).toMatch(/t = /);
  });

  it('a square root of a negative value gives LW701 naming the state', () => {
    const c = compile(`plant Drain { state h [1] = 1
      output y [1] = h
      h' = -sqrt(h) * 1 [1/s] - 0.5 [1/s] }
      loop L { simulate 5 [s]
      show Drain.y }`);
    const [run] = simulate(c);
    expect(run.error?.code).toBe('LW701');
    expect(run.error?.state).toBe('Drain.h');
    expect(run.error!.message).toMatch(/Drain\.h .*t = /);
    // h reaches 0 before t = 2/0.5·... : with h' ≤ −0.5, h(0) = 1, before t = 2 s
    expect(run.error!.time).toBeLessThan(2);
  });

  it('a stiff loop under the adaptive method runs out of steps and suggests method = stiff', () => {
    const src = (method: string) => `plant Fast { state a [1] = 1
      state b [1] = 0
      output y [1] = b
      a' = -a * 1 [1/s]
      b' = -1e7 * (b - a) * 1 [1/s] }
      loop L { simulate 100 [s] { method = ${method} }
      show Fast.y }`;
    const c = compile(src('adaptive'));
    const spec = runSpec(c);
    const run = runOnce(c, spec, { label: 'x', kind: 'nonlinear', p: c.params, x0: c.start }, { budgetMs: 60000 });
    expect(run.error?.code).toBe('LW703');
    expect(run.error!.message).toMatch(/method = stiff/);
    expect(run.error!.state).toMatch(/^Fast\./);
    // the grid up to the failure holds values, every point after it NaN (never stale memory)
    const y = run.signals['Fast.y'];
    expect(y.length).toBe(run.t.length);
    const k = y.findIndex((v) => Number.isNaN(v));
    expect(k).toBeGreaterThan(0);
    expect(run.t[k - 1]).toBeLessThanOrEqual(run.error!.time!);
    expect(Array.from(y.subarray(0, k)).every(Number.isFinite)).toBe(true);
    expect(Array.from(y.subarray(k)).every(Number.isNaN)).toBe(true);
    const ok = simulate(compile(src('stiff')))[0];
    expect(ok.error).toBeUndefined();
  });

  it('a cancelled run stops with LW705 naming the time and a state', () => {
    const c = compile(`plant Osc { state p [1] = 1
      state v [1]
      output y [1] = p
      p' = v * 1 [1/s]
      v' = -p * 1 [1/s] }
      loop L { simulate 1000 [s]
      show Osc.y }`);
    const cancel = { cancelled: true };
    const [run] = simulate(c, { cancel });
    expect(run.error?.code).toBe('LW705');
    expect(run.error!.message).toMatch(/t = /);
    expect(run.error!.state).toMatch(/^Osc\./);
  });

  it('a run over its time budget stops with LW704', () => {
    const c = compile(`plant Osc { state p [1] = 1
      state v [1]
      output y [1] = p
      p' = v * 1000 [1/s]
      v' = -p * 1000 [1/s] }
      loop L { simulate 1000 [s] { tolerance = 1e-12 }
      show Osc.y }`);
    const [run] = simulate(c, { budgetMs: 50 });
    expect(run.error?.code).toBe('LW704');
    expect(run.error!.message).toMatch(/budget/);
    expect(run.error!.time).toBeGreaterThan(0);
    expect(run.error!.time).toBeLessThan(1000);
    expect(run.error!.state).toMatch(/^Osc\./);
  });
});

describe('algebraic loops', () => {
  const loopOf = (law: string, solve: boolean) => `plant Lag { state y [1]
      input u [1]
      output out [1] = y
      y' = (u - y) * 1 [1/s] }
    controller C { input a [1]
      output b [1] = ${law} }
    loop L { C.b -> Lag.u
      C.b -> C.a
      ${solve ? 'solve algebraic' : ''}
      simulate 1 [s] }`;

  it('with solve algebraic, Newton solves b = 0.5 b + 1 (b = 2) at every evaluation', () => {
    const [run] = simulate(compile(loopOf('0.5*a + 1', true)));
    expect(run.error).toBeUndefined();
    // y' = 2 − y from 0: y(1) = 2(1 − e^{−1})
    expect(run.metrics['Lag.out'].final).toBeCloseTo(2 * (1 - Math.exp(-1)), 7);
  });

  it('a non-converging algebraic loop is LW706 naming the loop, the time and the residual', () => {
    const [run] = simulate(compile(loopOf('a*a + 1', true)));
    expect(run.error?.code).toBe('LW706');
    expect(run.error!.message).toMatch(/C\.a/);
    expect(run.error!.message).toMatch(/t = 0 s/);
    expect(run.error!.message).toMatch(/residual/);
  });
});
