// The way the run driver uses an integrator: segments between breakpoints, events located on the
// dense output, 'stop', restart from the event state with the previous hNext. Checked against the
// closed forms of DETEST A1 and A3 (Hull, Enright, Fellen & Sedgwick, SIAM J. Numer. Anal. 9(4),
// 1972).

import { describe, expect, test } from 'vitest';
import { createIntegrator } from '../../language/src/sim/solver';
import { A1, A3 } from '../reference/ode/problems';
import { METHODS, bisect } from '../reference/ode/harness';

describe.each(METHODS)('%s', (method) => {
  test('event on the dense output, stop, restart from the event state', () => {
    // A1: e^{−t} = 1/2 at t = ln 2, and = 1/8 at t = 3 ln 2 [derived].
    const tol = 1e-10;
    const ig = createIntegrator(method, A1.problem, { rtol: tol, atol: tol });
    const out = new Float64Array(1);
    const events: number[] = [];
    let level = 0.5;
    let t = 0;
    let x: Float64Array = new Float64Array([1]);
    let h: number | undefined;
    let segments = 0;
    while (t < 20 && segments < 20) {
      segments++;
      let te = NaN;
      const r = ig.integrate(t, x, 20, (s) => {
        if ((s.x[0] - level) * (x[0] - level) <= 0 && s.x[0] !== level) {
          te = bisect((tq) => (s.dense(tq, out), out[0] - level), s.tPrev, s.t);
          s.dense(te, out);
          return 'stop';
        }
        return 'continue';
      }, h);
      if (r.status === 'stopped') {
        expect(r.t).toBeGreaterThanOrEqual(te);
        events.push(te);
        t = te;
        x = Float64Array.from(out);
        level = level > 1e-4 ? level / 4 : -1; // after eight events, run on to the end
        h = r.hNext;
        expect(h).toBeGreaterThan(0);
        expect(Number.isFinite(h)).toBe(true);
      } else {
        expect(r.status).toBe('done');
        expect(r.t).toBe(20);
        t = r.t;
        x = Float64Array.from(r.x);
      }
    }
    expect(events.length).toBe(8); // levels 1/2, 1/8, ..., 1/32768
    expect(segments).toBe(9);
    // A state error δx moves the crossing of level ℓ by δx/|x'| = δx/ℓ: compare δt·ℓ with the tolerance.
    events.forEach((te, i) => {
      const exact = (2 * i + 1) * Math.LN2;
      expect(Math.abs(te - exact) * Math.exp(-exact), `event ${i}`).toBeLessThan(10 * tol);
    });
    // Same bound as the DETEST tests: 20 tolerances (odex is the loosest, about 15 here).
    expect(Math.abs(x[0] - Math.exp(-20))).toBeLessThan(20 * tol);
  });

  test('forty segments land exactly on their ends and agree with the closed form', () => {
    const tol = 1e-9;
    const ig = createIntegrator(method, A3.problem, { rtol: tol, atol: tol });
    let x: Float64Array = Float64Array.from(A3.x0);
    let h: number | undefined;
    let steps = 0;
    for (let k = 0; k < 40; k++) {
      const t0 = k * 0.5;
      const t1 = (k + 1) * 0.5;
      const r = ig.integrate(t0, x, t1, (s) => {
        expect(s.tPrev).toBeGreaterThanOrEqual(t0);
        expect(s.t).toBeLessThanOrEqual(t1);
        steps++;
        return 'continue';
      }, h);
      expect(r.status).toBe('done');
      expect(r.t).toBe(t1);
      expect(Math.abs(r.x[0] - Math.exp(Math.sin(t1)))).toBeLessThan(100 * tol);
      x = r.x; // the integrator's own buffer goes straight back in
      h = r.hNext;
    }
    expect(steps).toBeGreaterThanOrEqual(40);
    expect(ig.stats.steps).toBe(steps);
  });

  test("'stop' after the first step; stats accumulate until resetStats", () => {
    const ig = createIntegrator(method, A1.problem, { rtol: 1e-6, atol: 1e-6 });
    const r = ig.integrate(0, new Float64Array([1]), 20, () => 'stop');
    expect(r.status).toBe('stopped');
    expect(r.t).toBeGreaterThan(0);
    expect(r.t).toBeLessThan(20);
    expect(r.x[0]).toBeCloseTo(Math.exp(-r.t), 5);
    expect(ig.stats.steps).toBe(1);
    ig.integrate(r.t, r.x, 20, () => 'continue', r.hNext);
    expect(ig.stats.steps).toBeGreaterThan(1);
    expect(ig.stats.evaluations).toBeGreaterThan(ig.stats.steps);
    ig.resetStats();
    expect(ig.stats).toEqual({ steps: 0, rejected: 0, evaluations: 0, jacobians: 0, differenceJacobians: 0, decompositions: 0 });
  });

  test('hMax bounds every step', () => {
    const ig = createIntegrator(method, A1.problem, { rtol: 1e-4, atol: 1e-4, hMax: 0.25 });
    let longest = 0;
    const r = ig.integrate(0, new Float64Array([1]), 5, (s) => ((longest = Math.max(longest, s.t - s.tPrev)), 'continue'));
    expect(r.status).toBe('done');
    expect(longest).toBeLessThanOrEqual(0.25 * (1 + 1e-12));
    expect(ig.stats.steps).toBeGreaterThanOrEqual(20);
  });

  test('a system without states still reports its segment', () => {
    const ig = createIntegrator(method, { n: 0, f: () => undefined }, { rtol: 1e-6, atol: 1e-6 });
    let calls = 0;
    const r = ig.integrate(0, new Float64Array(0), 2, () => (calls++, 'continue'));
    expect(r.status).toBe('done');
    expect(r.t).toBe(2);
    expect(calls).toBe(1);
  });
});
