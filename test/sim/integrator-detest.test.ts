// DETEST class A against the closed-form solutions, and class B1's invariant (Hull, Enright,
// Fellen & Sedgwick, "Comparing numerical methods for ordinary differential equations", SIAM J.
// Numer. Anal. 9(4), 1972). Errors are measured at every accepted step and scaled by the
// tolerance, rtol = atol = tol: e = max |x − y| / (tol·(1 + |y|)), as in the test sets' practice of
// reporting error per unit tolerance (common practice).

import { describe, expect, test } from 'vitest';
import { DETEST_A, B1, lotkaVolterraInvariant } from '../reference/ode/problems';
import { METHODS, run } from '../reference/ode/harness';

const TOLS = [1e-4, 1e-6, 1e-8, 1e-10];
/** Global error may exceed the local tolerance by a modest factor; beyond this the control is broken. */
const SCALED_BOUND = 20;

describe.each(METHODS)('DETEST A1–A4 with %s', (method) => {
  test.each(DETEST_A)('$name: error bounded by the tolerance and shrinking with it', (tp) => {
    const absErr: number[] = [];
    for (const tol of TOLS) {
      const r = run(method, tp, { rtol: tol, atol: tol });
      expect(r.result.status).toBe('done');
      expect(r.result.t).toBe(20);
      let scaled = 0;
      let abs = 0;
      for (const s of r.steps) {
        const y = tp.exact!(s.t)[0];
        const e = Math.abs(s.x[0] - y);
        scaled = Math.max(scaled, e / (tol * (1 + Math.abs(y))));
        abs = Math.max(abs, e);
      }
      expect(scaled, `tol ${tol}`).toBeLessThan(SCALED_BOUND);
      absErr.push(abs);
    }
    // Each hundredfold tightening buys at least a factor 10, six decades at least four.
    for (let i = 1; i < absErr.length; i++) expect(absErr[i]).toBeLessThan(absErr[i - 1] / 10);
    expect(absErr[absErr.length - 1]).toBeLessThan(absErr[0] * 1e-4);
  });
});

describe.each(METHODS)('DETEST B1 with %s', (method) => {
  // V0 = 1 − ln 1 + 2·3 − 2 ln 3 = 7 − 2 ln 3 [derived].
  const V0 = 7 - 2 * Math.log(3);
  test('the Lotka–Volterra invariant drifts by less than 100 tolerances', () => {
    expect(lotkaVolterraInvariant(B1.x0)).toBeCloseTo(V0, 15);
    for (const tol of [1e-6, 1e-9]) {
      const r = run(method, B1, { rtol: tol, atol: tol });
      expect(r.result.status).toBe('done');
      const drift = Math.max(...r.steps.map((s) => Math.abs(lotkaVolterraInvariant(s.x) - V0)));
      expect(drift, `tol ${tol}`).toBeLessThan(100 * tol);
    }
  });
});
