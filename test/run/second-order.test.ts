// Step response of a loop whose closed loop is ωn²/(s² + 2ζωn s + ωn²), ζ = 0.5, ωn = 1
// (samples/second-order.loop). Standard textbook results (e.g. Ogata, Modern Control
// Engineering, 5th ed., §5-3 [memory]): Mp = exp(−πζ/√(1−ζ²)) = 0.163033534822,
// tp = π/(ωn√(1−ζ²)) = 3.62759872847 s; exact 10–90 % rise 1.637572947 s and the last time
// |y − 1| = 0.02 at 8.076348974 s [derived] (REFERENCES.md).

import { describe, expect, it } from 'vitest';
import { simulate } from '../../language/src/sim/run';
import { compile, sample } from './helpers';

/** x'' = −4x from x(0) = 1 (x = cos 2t) over two periods, showing `out` (an expression of x). */
const oscillator = (out: string) => `plant Spring { state x [1] = 1
  state v [1/s]
  output out [1] = ${out}
  x' = v
  v' = -4 [1/s^2] * x }
  loop Swing { simulate 6.283185307179586 [s] { tolerance = 1e-9, points = 5 }
    show Spring.out }`;

describe('second-order step response', () => {
  const c = compile(sample('second-order.loop'));
  const [run] = simulate(c);
  const z = 0.5, wn = 1;

  it('runs without error', () => {
    expect(run.error).toBeUndefined();
    expect(run.label).toBe('nonlinear');
  });

  it('overshoot equals exp(−πζ/√(1−ζ²))', () => {
    const Mp = Math.exp((-Math.PI * z) / Math.sqrt(1 - z * z));
    expect(Mp).toBeCloseTo(0.163033534822, 11);
    expect(run.metrics['Cart.x'].overshoot!).toBeCloseTo(0.163033534822, 7);
    expect(run.metrics['Cart.x'].peak).toBeCloseTo(1.163033534822, 7);
  });

  it('the peak sits at tp = π/(ωn√(1−ζ²))', () => {
    const y = run.signals['Cart.x'];
    let iMax = 0;
    for (let i = 1; i < y.length; i++) if (y[i] > y[iMax]) iMax = i;
    const tp = Math.PI / (wn * Math.sqrt(1 - z * z));
    expect(tp).toBeCloseTo(3.62759872847, 10);
    expect(Math.abs(run.t[iMax] - tp)).toBeLessThanOrEqual(run.t[1] - run.t[0]);
  });

  it('10–90 % rise time and 2 % settling time', () => {
    expect(Math.abs(run.metrics['Cart.x'].rise! - 1.637572947)).toBeLessThan(1e-5);
    expect(Math.abs(run.metrics['Cart.x'].settling! - 8.076348974)).toBeLessThan(1e-5);
  });

  it('expects are measured in the unit of their right-hand side', () => {
    const [ov, st, ri] = run.expects;
    expect(ov.pass && st.pass && ri.pass).toBe(true);
    expect(ov.measuredText).toBe('16.3 %');
    expect(st.measured!).toBeCloseTo(8.076348974, 4);
    expect(ri.measuredText).toBe('1.638 s');
  });

  it('final and initial values in display units', () => {
    expect(run.metrics['Cart.x'].initial).toBe(0);
    expect(run.metrics['Cart.x'].final).toBeCloseTo(1, 8);
    // the force starts at kp·1 m = 1 N and returns to 0
    expect(run.metrics['Law.force'].initial).toBeCloseTo(1, 12);
  });
});

describe('IAE on the dense output', () => {
  it('∫|e^{-t}| over 20 s is 1 − e^{-20} (calculus)', () => {
    const c = compile(`plant Lag { state y [1] = 1
      output out [1] = y
      y' = -y * 1 [1/s] }
      loop Decay { simulate 20 [s] { tolerance = 1e-10, points = 11 }
        show Lag.out
        expect iae(Lag.out) < 2 [s] }`);
    const [run] = simulate(c);
    expect(Math.abs(run.metrics['Lag.out'].iae - (1 - Math.exp(-20)))).toBeLessThan(1e-8);
    expect(run.expects[0].pass).toBe(true);
  });

  it('∫|sin t| over five periods is 20, with the plot grid far too coarse to see it (calculus)', () => {
    const c = compile(`plant Hold { state q [1]
      input v [1]
      output out [1] = v
      q' = 0 [1/s] }
      loop Wave { signal s = sine(1, 1 [rad/s])
        s -> Hold.v
        simulate 31.41592653589793 [s] { tolerance = 1e-10, points = 3 }
        show Hold.out }`);
    const [run] = simulate(c);
    expect(Math.abs(run.metrics['Hold.out'].iae - 20)).toBeLessThan(1e-6);
  });

  it('∫|cos 2t| over two periods of an oscillator state is 4, the sign changes falling inside steps (calculus)', () => {
    // x'' = −4x, x(0) = 1: x = cos 2t; ∫₀^{2π}|cos 2t| dt = 8 · ∫₀^{π/4} cos 2t dt = 4. The
    // state's zeros lie inside the integrator's steps, where the IAE is cut at the root.
    const c = compile(oscillator('x'));
    const [run] = simulate(c);
    expect(run.error).toBeUndefined();
    expect(Math.abs(run.metrics['Spring.out'].iae - 4)).toBeLessThan(1e-7);
  });

  it('∫|cos³ 2t| over two periods is 8/3: a signal not linear in the states, cut inside steps (calculus)', () => {
    // The same oscillator with out = x³: ∫₀^{2π}|cos 2t|³ dt = 8 · ∫₀^{π/4} cos³ 2t dt
    // = 4 · ∫₀^{π/2} cos³ u du = 4 · 2/3. Within a step the cut and the pieces are taken on the
    // quartic through the step's five samples of x³, which is not the dense output of x cubed.
    const c = compile(oscillator('x^3'));
    const [run] = simulate(c);
    expect(run.error).toBeUndefined();
    expect(Math.abs(run.metrics['Spring.out'].iae - 8 / 3)).toBeLessThan(1e-7);
  });
});
