// Sampled controllers: the held outputs follow the exact zero-order-hold difference equations.
// First-order lag 1/(τs + 1), τ = 1, T = 0.1: Ad = e^{−T/τ} = 0.9048374180359595,
// Bd = 1 − e^{−T/τ} = 0.09516258196404043; double integrator 1/s² under ZOH:
// A = [[1, T], [0, 1]], B = [[T²/2], [T]] [derived, exact] (REFERENCES.md, Discretization).

import { describe, expect, it } from 'vitest';
import { simulate } from '../../language/src/sim/run';
import { compile } from './helpers';

const heldAt = (t: number[], y: number[], tq: number) => y[t.findIndex((x) => x >= tq - 1e-12)];

describe('sampled controllers with a zero-order hold', () => {
  it('first-order lag: y[k] = C x[k] with x[k+1] = Ad x[k] + Bd u', () => {
    const c = compile(`controller Lag { input u [1]
      output y [1]
      y / u = 1/(1 + s*1 [s])
      sample every 0.1 [s] by hold }
      loop Held { signal one = 1
        one -> Lag.u
        simulate 2 [s] { points = 201 }
        show Lag.y }`);
    const [run] = simulate(c);
    expect(run.error).toBeUndefined();
    const Ad = 0.9048374180359595, Bd = 0.09516258196404043;
    expect(Math.exp(-0.1)).toBeCloseTo(Ad, 15);
    let x = 0;
    for (let k = 0; k < 19; k++) {
      // held on [kT, (k+1)T): the value computed at instant k from x[k]
      const mid = heldAt(run.t, run.signals['Lag.y'], k * 0.1 + 0.05);
      expect(Math.abs(mid - x)).toBeLessThan(1e-13);
      x = Ad * x + Bd * 1;
    }
  });

  it('double integrator: position after k samples of a unit input is (kT)²/2', () => {
    const c = compile(`controller Twice { input a [1]
      output pos [1]
      linear { A = [[0, 1], [0, 0]], B = [[0], [1]], C = [[1, 0]], D = [[0]] }
      sample every 0.1 [s] by hold }
      loop Held { signal one = 1
        one -> Twice.a
        simulate 1 [s] { points = 101 }
        show Twice.pos }`);
    const [run] = simulate(c);
    expect(run.error).toBeUndefined();
    const T = 0.1;
    let p = 0, v = 0;
    for (let k = 0; k < 9; k++) {
      const mid = heldAt(run.t, run.signals['Twice.pos'], k * T + 0.05);
      expect(Math.abs(mid - p)).toBeLessThan(1e-13);
      expect(Math.abs(p - ((k * T) ** 2) / 2)).toBeLessThan(1e-13);
      // exact ZOH matrices: p += T v + T²/2 u, v += T u
      p = p + T * v + (T * T) / 2;
      v = v + T;
    }
  });

  it('a sampled P law on a continuous lag stops the integrator exactly at each instant', () => {
    const c = compile(`plant Lag { state y [1]
      input u [1]
      output out [1] = y
      y' = (u - y) * 1 [1/s] }
      controller P { param k = 2
        input e [1]
        output u [1] = k*e
        sample every 0.25 [s] }
      loop L { signal ref = 1
        ref - Lag.out -> P.e
        P.u -> Lag.u
        simulate 2 [s] { tolerance = 1e-12, abstol = 1e-14, points = 9 }
        show Lag.out, P.u }`);
    const [run] = simulate(c);
    expect(run.error).toBeUndefined();
    // exact: over each hold interval y relaxes to the held u: y+ = u + (y − u) e^{−T}
    let y = 0;
    const E = Math.exp(-0.25);
    for (let k = 0; k < 8; k++) {
      expect(Math.abs(run.signals['Lag.out'][k] - y)).toBeLessThan(1e-10);
      const u = 2 * (1 - y);
      y = u + (y - u) * E;
    }
  });
});
