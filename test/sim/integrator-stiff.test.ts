// Stiff problems of the IVP Test Set (Mazzia & Magherini, release 2.4, 2008): HIRES at
// t = 321.8122 and Van der Pol with μ = 1000 at t = 2000, with the 'stiff' method; and the
// explicit method running out of steps on Van der Pol, which is how the run driver recognizes that
// a model wants method = stiff.

import { describe, expect, test } from 'vitest';
import { HIRES, HIRES_REF, VDP_REF, vanDerPol } from '../reference/ode/problems';
import { run } from '../reference/ode/harness';
import type { TestProblem } from '../reference/ode/problems';

const maxRelError = (x: number[], ref: number[]): number => Math.max(...ref.map((v, i) => Math.abs(x[i] - v) / Math.abs(v)));

describe('HIRES with stiff', () => {
  test('matches the reference solution at t = 321.8122 to within 100 rtol', () => {
    const errs: number[] = [];
    for (const rtol of [1e-6, 1e-9]) {
      // Components are O(1e-3): absolute tolerance well below them, as in the test set's runs.
      const r = run('stiff', HIRES, { rtol, atol: rtol * 1e-4 });
      expect(r.result.status).toBe('done');
      expect(r.result.t).toBe(321.8122);
      const e = maxRelError(r.x, HIRES_REF);
      expect(e, `rtol ${rtol}`).toBeLessThan(100 * rtol);
      errs.push(e);
      expect(r.integrator.stats.differenceJacobians).toBe(0);
      expect(r.integrator.stats.jacobians).toBe(r.integrator.stats.steps);
    }
    expect(errs[1]).toBeLessThan(errs[0] / 100);
  });

  test('without problem.jac: difference Jacobians, marked in stats, same answer', () => {
    const { jac: _dropped, ...rest } = HIRES.problem;
    const noJac: TestProblem = { ...HIRES, problem: rest };
    const r = run('stiff', noJac, { rtol: 1e-8, atol: 1e-12 });
    expect(r.result.status).toBe('done');
    expect(maxRelError(r.x, HIRES_REF)).toBeLessThan(1e-6);
    const st = r.integrator.stats;
    expect(st.differenceJacobians).toBe(st.jacobians);
    expect(st.jacobians).toBeGreaterThan(0);
    // Each difference Jacobian costs n = 8 evaluations on top of the 6 stages.
    expect(st.evaluations).toBeGreaterThan(14 * st.steps);
  });
});

describe('Van der Pol μ = 1000', () => {
  const vdp = vanDerPol(1000);

  test('stiff reaches the reference at t = 2000', () => {
    const errs: number[] = [];
    for (const tol of [1e-6, 1e-9]) {
      const r = run('stiff', vdp, { rtol: tol, atol: tol });
      expect(r.result.status).toBe('done');
      expect(r.result.t).toBe(2000);
      const e = maxRelError(r.x, VDP_REF);
      expect(e, `tol ${tol}`).toBeLessThan(100 * tol);
      errs.push(e);
      // Two relaxation jumps in 2000 s: a stiff method needs only thousands of steps.
      expect(r.integrator.stats.steps).toBeLessThan(20_000);
    }
    expect(errs[1]).toBeLessThan(errs[0] / 100);
  });

  test('adaptive (explicit) gives up with too-many-steps long before t = 2000', () => {
    const r = run('adaptive', vdp, { rtol: 1e-6, atol: 1e-6, maxSteps: 20_000 });
    expect(r.result.status).toBe('failed');
    expect(r.result.failure?.reason).toBe('too-many-steps');
    expect(r.result.failure?.message).toMatch(/20000 step attempts at t = /);
    expect(r.result.t).toBeLessThan(100);
    expect(r.result.failure?.t).toBe(r.result.t);
    // The stability limit, not accuracy, holds the step: |λ| ≈ μ(y1² − 1) ≈ 3000 on the slow branch,
    // and DOPRI5's stability interval on the negative axis is about 3.3 (HNW I §IV.2 [memory]),
    // so h stays near 1e-3.
    expect(r.result.hNext).toBeLessThan(1e-2);
    // The state reached is still the correct slow motion (y1 between 1 and 2).
    expect(r.x[0]).toBeGreaterThan(1);
    expect(r.x[0]).toBeLessThan(2);
  });
});
