// Large-amplitude period of a frictionless pendulum (samples/pendulum.loop).
// Source: T = 4·sqrt(L/g)·K(sin(θ0/2)) with the complete elliptic integral K computed by the
// arithmetic–geometric mean, Abramowitz & Stegun, Handbook of Mathematical Functions, §17.6;
// REFERENCES.md gives T/T0 = 1.0019071881432166 at 10° and 1.1803405990160962 at 90° [derived].

import { describe, expect, it } from 'vitest';
import { simulate } from '../../language/src/sim/run';
import { compile, downCrossings, sample } from './helpers';

/** K(k) by the arithmetic–geometric mean (A&S §17.6). */
function ellipticK(k: number): number {
  let a = 1, b = Math.sqrt(1 - k * k);
  for (let i = 0; i < 40 && Math.abs(a - b) > 1e-16 * a; i++) [a, b] = [(a + b) / 2, Math.sqrt(a * b)];
  return Math.PI / (2 * a);
}

describe('pendulum period at large amplitude', () => {
  const c = compile(sample('pendulum.loop'));
  const runs = simulate(c);
  const L = 1, g = 9.80665, T0 = 2 * Math.PI * Math.sqrt(L / g);

  it('the AGM gives the tabulated K (GSL special-function test values, REFERENCES.md)', () => {
    expect(ellipticK(0.5)).toBeCloseTo(1.685750354812596, 14);
    expect(ellipticK(1 / Math.SQRT2)).toBeCloseTo(1.8540746773013719, 14);
  });

  for (const [label, deg, ratio] of [
    ['Pendulum.angle = 10 [deg]', 10, 1.0019071881432166],
    ['Pendulum.angle = 90 [deg]', 90, 1.1803405990160962],
  ] as const) {
    it(`T/T0 at ${deg}° matches 2K(sin(θ0/2))/π`, () => {
      const run = runs.find((r) => r.label === label)!;
      expect(run.error).toBeUndefined();
      const x = downCrossings(run.t, run.signals['Pendulum.angle']);
      expect(x.length).toBeGreaterThanOrEqual(3);
      // mean of the periods between successive downward crossings
      const T = (x[x.length - 1] - x[0]) / (x.length - 1);
      const k = Math.sin((deg * Math.PI) / 180 / 2);
      expect((2 * ellipticK(k)) / Math.PI).toBeCloseTo(ratio, 12);
      expect(Math.abs(T / T0 - ratio)).toBeLessThan(1e-8);
    });
  }

  it('energy is conserved along the 90° run (frictionless: common practice check)', () => {
    const run = runs[0];
    const th = run.signals['Pendulum.angle'], w = run.signals['Pendulum.rate'];
    const E = (i: number) => 0.5 * w[i] * w[i] - (g / L) * Math.cos(th[i]);
    for (let i = 0; i < th.length; i += 997) expect(Math.abs(E(i) - E(0))).toBeLessThan(1e-8);
  });
});
