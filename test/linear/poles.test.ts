// Poles and stability verdicts (language/src/linear/poles.ts).
import { describe, expect, it } from 'vitest';
import { discretePolesOf, polesOf } from '../../language/src/linear/poles';
import { realizeRational } from '../../language/src/linear/realize';
import { zoh } from '../../language/src/linear/discretize';

const secondOrder = (zeta: number, wn: number) => {
  const r = realizeRational({ num: [wn * wn], den: [1, 2 * zeta * wn, wn * wn] });
  if (!r.ok) throw new Error(r.message);
  return r.ss;
};

describe('continuous poles', () => {
  it('ωn²/(s² + 2ζωn s + ωn²): damping and natural frequency read back (common practice)', () => {
    for (const [zeta, wn] of [[0.5, 1], [0.1, 7], [0.707, 0.02], [0.999, 300]]) {
      const r = polesOf(secondOrder(zeta, wn).A);
      expect(r.verdict).toBe('stable');
      expect(r.poles).toHaveLength(2);
      for (const p of r.poles) {
        expect(p.damping).toBeCloseTo(zeta, 12);
        expect(p.natural / wn).toBeCloseTo(1, 12);
        expect(p.timeConstant! * zeta * wn).toBeCloseTo(1, 12);
      }
      expect(r.dominant).toHaveLength(2);
      // 2 % settling estimate 4/(ζωn) (REFERENCES.md, Ogata §5-3 [memory]).
      expect(r.settling! * zeta * wn).toBeCloseTo(4, 10);
    }
  });

  it('verdicts: unstable with its count, marginal oscillator, unstable double integrator [derived]', () => {
    const u = polesOf([[0, 1], [2, 1]]); // s² − s − 2 = (s − 2)(s + 1)
    expect(u.verdict).toBe('unstable');
    expect(u.unstableCount).toBe(1);
    expect(u.dominant[0].re).toBeCloseTo(2, 14);
    expect(u.settling).toBeNull();
    const osc = polesOf([[0, 3], [-3, 0]]);
    expect(osc.verdict).toBe('marginal');
    expect(osc.boundaryCount).toBe(2);
    expect(osc.poles[0].timeConstant).toBeNull();
    expect(osc.poles[0].damping).toBe(0);
    const dbl = polesOf([[0, 1], [0, 0]]);
    expect(dbl.verdict).toBe('unstable');
    expect(dbl.defectiveBoundary).toBe(true);
    const twoIntegrators = polesOf([[0, 0], [0, 0]]); // two decoupled integrators: bounded
    expect(twoIntegrators.verdict).toBe('marginal');
    expect(twoIntegrators.poles[0].damping).toBe(1);
  });

  it('odd input is reported', () => {
    expect(polesOf([]).ok).toBe(true);
    expect(polesOf([]).verdict).toBe('stable');
    expect(polesOf([[NaN]]).ok).toBe(false);
    expect(polesOf([[1, 2]]).ok).toBe(false);
  });
});

describe('discrete poles', () => {
  it('ZOH of the second-order system maps s to z = e^{sT}; damping and ωn come back [derived]', () => {
    const zeta = 0.3, wn = 4, T = 0.05;
    const d = zoh(secondOrder(zeta, wn), T);
    const r = discretePolesOf(d.ss!.A, T);
    expect(r.verdict).toBe('stable');
    for (const p of r.poles) {
      expect(Math.hypot(p.re, p.im)).toBeCloseTo(Math.exp(-zeta * wn * T), 13);
      expect(p.damping).toBeCloseTo(zeta, 11);
      expect(p.natural).toBeCloseTo(wn, 11);
    }
    expect(r.settling! * zeta * wn).toBeCloseTo(4, 9);
  });

  it('unit circle: unstable outside, marginal on it, deadbeat at z = 0', () => {
    expect(discretePolesOf([[1.01]], 0.1).verdict).toBe('unstable');
    expect(discretePolesOf([[1]], 0.1).verdict).toBe('marginal');
    expect(discretePolesOf([[1, 1], [0, 1]], 0.1).verdict).toBe('unstable');
    const dead = discretePolesOf([[0]], 0.1);
    expect(dead.verdict).toBe('stable');
    expect(dead.poles[0].timeConstant).toBe(0);
    expect(discretePolesOf([[0.5]], 0).ok).toBe(false);
  });
});
