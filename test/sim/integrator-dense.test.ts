// Dense output against the exact solutions of DETEST A1 (y = e^{−t}) and A3 (y = e^{sin t})
// (Hull, Enright, Fellen & Sedgwick, SIAM J. Numer. Anal. 9(4), 1972), evaluated at the middle of
// every accepted step, where an interpolant is weakest.

import { describe, expect, test } from 'vitest';
import { A1, A3 } from '../reference/ode/problems';
import { METHODS, run } from '../reference/ode/harness';

describe.each(METHODS)('dense output of %s', (method) => {
  test.each([A1, A3])('$name: mid-step values within the tolerance, shrinking with it; both ends reproduced', (tp) => {
    const errs: number[] = [];
    for (const tol of [1e-5, 1e-8, 1e-11]) {
      const out = new Float64Array(1);
      let scaled = 0;
      let abs = 0;
      let ends = 0;
      let prevX = tp.x0[0];
      const r = run(method, tp, { rtol: tol, atol: tol }, tp.t1, (s) => {
        const tm = 0.5 * (s.tPrev + s.t);
        s.dense(tm, out);
        const y = tp.exact!(tm)[0];
        scaled = Math.max(scaled, Math.abs(out[0] - y) / (tol * (1 + Math.abs(y))));
        abs = Math.max(abs, Math.abs(out[0] - y));
        s.dense(s.tPrev, out);
        ends = Math.max(ends, Math.abs(out[0] - prevX) / (1 + Math.abs(prevX)));
        s.dense(s.t, out);
        ends = Math.max(ends, Math.abs(out[0] - s.x[0]) / (1 + Math.abs(s.x[0])));
        prevX = s.x[0];
      });
      expect(r.result.status).toBe('done');
      expect(r.steps.length).toBeGreaterThan(3);
      // The interpolants are one order below the step (4 for Dormand–Prince, 3 for RODAS, and odex
      // accepts interpolation errors up to 10× its tolerance), so allow a wider factor than at steps.
      expect(scaled, `tol ${tol}`).toBeLessThan(30);
      expect(ends, `tol ${tol}`).toBeLessThan(1e-12);
      errs.push(abs);
    }
    expect(errs[1]).toBeLessThan(errs[0] / 30);
    expect(errs[2]).toBeLessThan(errs[1] / 30);
  });
});
