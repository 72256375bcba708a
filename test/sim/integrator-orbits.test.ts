// Periodic orbits: the Arenstorf orbit (Hairer, Nørsett & Wanner, Solving ODEs I, 2nd ed. 1993,
// §II.0) and the Kepler problem with e = 0.6 (Hairer, Lubich & Wanner, Geometric Numerical
// Integration, 2nd ed. 2006, §I.2 [memory]).

import { describe, expect, test } from 'vitest';
import { ARENSTORF, ARENSTORF_T, kepler, keplerEnergy, keplerMomentum } from '../reference/ode/problems';
import { METHODS, run } from '../reference/ode/harness';

describe.each(['adaptive', 'extrapolation'] as const)('Arenstorf orbit with %s', (method) => {
  test('returns to its start after T = 17.0652165601579625588917206249', () => {
    const gaps: number[] = [];
    for (const tol of [1e-10, 1e-12]) {
      const r = run(method, ARENSTORF, { rtol: tol, atol: tol });
      expect(r.result.status).toBe('done');
      expect(r.result.t).toBe(ARENSTORF_T);
      gaps.push(Math.max(...r.x.map((v, i) => Math.abs(v - ARENSTORF.x0[i]))));
    }
    // Near the moon the orbit amplifies errors strongly; at 1e-12 positions and velocities close to 1e-6.
    expect(gaps[1]).toBeLessThan(1e-6);
    expect(gaps[1]).toBeLessThan(gaps[0] / 10);
  });

  test('is not closed half a period later (the check above can fail)', () => {
    const r = run(method, ARENSTORF, { rtol: 1e-10, atol: 1e-10 }, ARENSTORF_T / 2);
    expect(Math.abs(r.x[0] - ARENSTORF.x0[0])).toBeGreaterThan(0.5);
  });
});

describe.each(METHODS)('Kepler problem e = 0.6 with %s', (method) => {
  const tp = kepler(0.6);
  test('energy −0.5 and angular momentum 0.8 conserved, orbit closes after 2π', () => {
    // H = p²/2 − 1/|q| = (1+e)/(2(1−e)) − 1/(1−e) = −1/2; L = q1 p2 − q2 p1 = √(1−e²) = 0.8;
    // period 2π a^{3/2} with a = 1 [derived].
    expect(keplerEnergy(tp.x0)).toBeCloseTo(-0.5, 14);
    expect(keplerMomentum(tp.x0)).toBeCloseTo(0.8, 14);
    const tol = 1e-10;
    const r = run(method, tp, { rtol: tol, atol: tol });
    expect(r.result.status).toBe('done');
    expect(r.result.t).toBe(2 * Math.PI);
    for (const s of r.steps) {
      expect(Math.abs(keplerEnergy(s.x) + 0.5)).toBeLessThan(100 * tol);
      expect(Math.abs(keplerMomentum(s.x) - 0.8)).toBeLessThan(100 * tol);
    }
    const gap = Math.max(...r.x.map((v, i) => Math.abs(v - tp.x0[i])));
    expect(gap).toBeLessThan(1e-6);
    // Half-way round the body is at aphelion, q = (−(1+e), 0) = (−1.6, 0) [derived].
    const half = run(method, tp, { rtol: tol, atol: tol }, Math.PI);
    expect(half.x[0]).toBeCloseTo(-1.6, 7);
    expect(half.x[1]).toBeCloseTo(0, 7);
  });
});
