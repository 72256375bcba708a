// Period of the plane pendulum at large amplitude: T = 4·√(L/g)·K(k), k = sin(θ0/2), with the
// complete elliptic integral K by the arithmetic–geometric mean (Abramowitz & Stegun, Handbook of
// Mathematical Functions, §17.6): a0 = 1, b0 = √(1 − k²), K = π/(2 a_N). The zero crossings of θ
// are located on each method's dense output.

import { describe, expect, test } from 'vitest';
import { pendulum } from '../reference/ode/problems';
import { METHODS, zeroCrossings } from '../reference/ode/harness';

/** K(k) by modulus k, via the AGM (A&S §17.6; A&S tabulate by the parameter m = k²). */
function ellipticK(k: number): number {
  let a = 1;
  let b = Math.sqrt(1 - k * k);
  // Quadratic convergence: a handful of iterations reach full precision; stop when a and b agree
  // to roundoff (they may then alternate in the last bit, so also bound the count).
  for (let i = 0; i < 40 && Math.abs(a - b) > 4 * Number.EPSILON * a; i++) {
    const an = 0.5 * (a + b);
    b = Math.sqrt(a * b);
    a = an;
  }
  return Math.PI / (2 * a);
}

test('AGM against published values of K', () => {
  // GNU Scientific Library special-function tests (values by modulus k).
  expect(ellipticK(0.01)).toBeCloseTo(1.570835598912152236, 14);
  expect(ellipticK(0.5)).toBeCloseTo(1.6857503548125960429, 14);
  expect(ellipticK(0.99)).toBeCloseTo(3.356600523361192376, 13);
  // K(1/√2) = Γ(1/4)²/(4√π) [derived].
  expect(ellipticK(Math.SQRT1_2)).toBeCloseTo(1.8540746773013719, 14);
  // Period ratios T/T0 = 2K/π at 10° and 90° [derived].
  expect((2 * ellipticK(Math.sin((10 * Math.PI) / 360))) / Math.PI).toBeCloseTo(1.0019071881432166, 14);
  expect((2 * ellipticK(Math.sin((90 * Math.PI) / 360))) / Math.PI).toBeCloseTo(1.1803405990160962, 14);
});

describe.each(METHODS)('pendulum period with %s', (method) => {
  const g = 9.80665; // standard gravity, m/s² (NIST SP 811, exact by definition)
  const L = 0.5;
  test.each([10, 90, 170])('θ0 = %i°: crossings at T/4 + jT/2', (deg) => {
    const theta0 = (deg * Math.PI) / 180;
    const T = 4 * Math.sqrt(L / g) * ellipticK(Math.sin(theta0 / 2));
    const T0 = 2 * Math.PI * Math.sqrt(L / g);
    const z = zeroCrossings(method, pendulum(g / L, theta0), { rtol: 1e-10, atol: 1e-10 }, 3.1 * T, 0);
    expect(z.length).toBe(6);
    z.forEach((tz, j) => expect(Math.abs(tz - (T / 4 + (j * T) / 2)) / T).toBeLessThan(1e-8));
    const measured = (z[5] - z[0]) / 2.5;
    expect(Math.abs(measured / T - 1)).toBeLessThan(1e-8);
    // The large-amplitude period really differs from the small-angle one (so the check has teeth).
    if (deg >= 90) expect(measured / T0 - 1).toBeGreaterThan(0.18);
  });
});
