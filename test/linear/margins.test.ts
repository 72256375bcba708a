// Stability margins and the Nyquist count (language/src/linear/margins.ts, nyquist.ts).
import { describe, expect, it } from 'vitest';
import { margins } from '../../language/src/linear/margins';
import { realizeRational } from '../../language/src/linear/realize';
import { routh } from '../../language/src/linear/routh';
import { polesOf } from '../../language/src/linear/poles';
import { polyAdd, polyFromRoots, polyScale } from '../../language/src/linear/poly';
import { cAbs, cDiv, cArg, type Complex } from '../../language/src/linear/complex';
import type { StateSpace } from '../../language/src/linear/lti';
import { evalSiso } from '../../language/src/linear/lti';

const TOL = 1e-9; // the brief asks 1e-6; the refinement reaches rounding level
const real = (...rs: number[]): Complex[] => rs.map((re) => ({ re, im: 0 }));

function ss(num: number[], den: number[]): StateSpace {
  const r = realizeRational({ num, den });
  if (!r.ok) throw new Error(r.message);
  return r.ss;
}

/** Closed-loop A − B C (1 + D)⁻¹ ... for D = 0: A − k B C. */
const closedLoop = (s: StateSpace, k: number): number[][] => s.A.map((row, i) => row.map((v, j) => v - k * s.B[i][0] * s.C[0][j]));

describe('classic margins (REFERENCES.md, closed forms [derived])', () => {
  it('L = 2√2/(s+1)³: PM 45° at 1 rad/s, GM 2√2 = 9.030899869919436 dB at √3 rad/s', () => {
    const m = margins(ss([2 * Math.SQRT2], [1, 3, 3, 1]));
    expect(m.ok).toBe(true);
    expect(Math.abs(m.phaseMargin! - 45)).toBeLessThan(TOL);
    expect(Math.abs(m.phaseMarginOmega! - 1)).toBeLessThan(TOL);
    expect(Math.abs(m.gainMargin! - 2 * Math.SQRT2)).toBeLessThan(TOL);
    expect(Math.abs(m.gainMarginDb! - 9.030899869919436)).toBeLessThan(TOL);
    expect(Math.abs(m.gainMarginOmega! - Math.sqrt(3))).toBeLessThan(TOL);
    // Delay margin PM·π/180/ωc = π/4 s.
    expect(Math.abs(m.delayMargin! - Math.PI / 4)).toBeLessThan(TOL);
    expect(m.lowerGainMargin).toBe(0);
    expect(m.closedLoop).toEqual({ stable: true, openLoopRhp: 0, encirclements: 0, closedLoopRhp: 0 });
    expect(m.stableGains).toHaveLength(1);
    expect(m.stableGains[0][0]).toBe(0);
    expect(Math.abs(m.stableGains[0][1] - 2 * Math.SQRT2)).toBeLessThan(TOL);
  });

  it('the same loop as a callback with its poles gives the same figures', () => {
    const k = 2 * Math.SQRT2;
    const L = (s: Complex): Complex => {
      const p = { re: s.re + 1, im: s.im };
      const p3 = { re: p.re ** 3 - 3 * p.re * p.im ** 2, im: 3 * p.re ** 2 * p.im - p.im ** 3 };
      return cDiv({ re: k, im: 0 }, p3);
    };
    const m = margins(L, { poles: real(-1, -1, -1) });
    expect(Math.abs(m.phaseMargin! - 45)).toBeLessThan(TOL);
    expect(Math.abs(m.gainMargin! - k)).toBeLessThan(TOL);
  });

  it('L = √2/(s(s+1)): PM 45° at 1 rad/s, GM infinite (integrator stepped round on the contour)', () => {
    const m = margins(ss([Math.SQRT2], [1, 1, 0]));
    expect(Math.abs(m.phaseMargin! - 45)).toBeLessThan(TOL);
    expect(Math.abs(m.phaseMarginOmega! - 1)).toBeLessThan(TOL);
    expect(m.gainMargin).toBe(Infinity);
    expect(m.gainMarginDb).toBe(Infinity);
    expect(m.phaseCrossings).toEqual([]);
    expect(m.closedLoop.stable).toBe(true);
    expect(m.stableGains).toEqual([[0, Infinity]]);
  });

  it('sensitivity peak of L = 1/(s(s+1)): Ms = √(1 + 2/√3) at ω = √((1+√3)/2) [derived]', () => {
    // |S|² = x(1+x)/(1 − x + x²), x = ω²; the maximum is at 2x² = 1 + 2x.
    const m = margins(ss([1], [1, 1, 0]));
    expect(Math.abs(m.sensitivityPeak - Math.sqrt(1 + 2 / Math.sqrt(3)))).toBeLessThan(1e-12);
    expect(Math.abs(m.sensitivityPeakOmega - Math.sqrt((1 + Math.sqrt(3)) / 2))).toBeLessThan(1e-6);
  });
});

describe('open-loop unstable loop with a lower and an upper gain margin', () => {
  // L(s) = 24/((s − 1)(s + 3)(s + 4)). With gain factor k the closed loop is
  // s³ + 6s² + 5s + (24k − 12) = 0. Routh by hand: rows [1, 5], [6, 24k − 12], [(42 − 24k)/6], [24k − 12]:
  // stable iff 12 < 24k < 42, i.e. 0.5 < k < 1.75 [derived]. At k = 0.5 the root is s = 0
  // (L(0) = −2), at k = 1.75 the polynomial is (s² + 5)(s + 6): crossing at √5 rad/s.
  const den = polyFromRoots(real(1, -3, -4));
  const plant = ss([24], den);
  const charPoly = (k: number): number[] => polyAdd(den, [24 * k]);

  it('Routh on the closed-loop polynomial confirms the hand derivation', () => {
    expect(routh(charPoly(1)).verdict).toBe('stable');
    expect(routh(charPoly(0.49)).rhp).toBe(1);
    expect(routh(charPoly(1.76)).rhp).toBe(2);
    expect(routh(charPoly(1.75)).verdict).toBe('marginal');
  });

  it('margins: lower 0.5 (−6.0206 dB) at 0 rad/s, upper 1.75 (4.8608 dB) at √5 rad/s; one encirclement', () => {
    const m = margins(plant);
    expect(m.closedLoop).toEqual({ stable: true, openLoopRhp: 1, encirclements: 1, closedLoopRhp: 0 });
    expect(Math.abs(m.lowerGainMargin! - 0.5)).toBeLessThan(TOL);
    expect(Math.abs(m.lowerGainMarginDb! - 20 * Math.log10(0.5))).toBeLessThan(TOL);
    expect(m.lowerGainMarginOmega).toBe(0);
    expect(Math.abs(m.gainMargin! - 1.75)).toBeLessThan(TOL);
    expect(Math.abs(m.gainMarginDb! - 20 * Math.log10(1.75))).toBeLessThan(TOL);
    expect(Math.abs(m.gainMarginOmega! - Math.sqrt(5))).toBeLessThan(TOL);
    expect(m.stableGains).toHaveLength(1);
    expect(Math.abs(m.stableGains[0][0] - 0.5)).toBeLessThan(TOL);
    expect(Math.abs(m.stableGains[0][1] - 1.75)).toBeLessThan(TOL);
    // Eigenvalues of the closed-loop A − BC agree (independent of the Nyquist count).
    expect(polesOf(closedLoop(plant, 1)).verdict).toBe('stable');
  });

  it('at twice the gain the closed loop is unstable: Nyquist count equals the Routh count', () => {
    const m = margins(ss([48], den));
    expect(m.closedLoop.stable).toBe(false);
    expect(m.closedLoop.closedLoopRhp).toBe(routh(polyAdd(den, [48])).rhp);
    expect(m.closedLoop.closedLoopRhp).toBe(polesOf(closedLoop(ss([48], den), 1)).unstableCount);
    expect(m.gainMargin).toBeNull();
    expect(m.lowerGainMargin).toBeNull();
    expect(Math.abs(m.stableGains[0][0] - 0.25)).toBeLessThan(TOL);
    expect(Math.abs(m.stableGains[0][1] - 0.875)).toBeLessThan(TOL);
  });
});

describe('conditionally stable loop with a triple integrator', () => {
  // L(s) = 2(s + 1)²/s³. Closed loop s³ + 2k s² + 4k s + 2k; Routh rows [1, 4k], [2k, 2k], [4k − 1], [2k]:
  // stable iff k > 1/4 [derived]. L(j·1) = −4: the phase crossover is at 1 rad/s.
  it('lower gain margin 0.25 at 1 rad/s, no upper limit', () => {
    const m = margins(ss(polyScale([1, 2, 1], 2), [1, 0, 0, 0]));
    expect(m.closedLoop.stable).toBe(true);
    expect(Math.abs(m.lowerGainMargin! - 0.25)).toBeLessThan(TOL);
    expect(Math.abs(m.lowerGainMarginOmega! - 1)).toBeLessThan(TOL);
    expect(m.gainMargin).toBe(Infinity);
    expect(m.stableGains).toHaveLength(1);
    expect(Math.abs(m.stableGains[0][0] - 0.25)).toBeLessThan(TOL);
    expect(m.stableGains[0][1]).toBe(Infinity);
    expect(routh([1, 2 * 0.2, 4 * 0.2, 2 * 0.2]).rhp).toBe(2);
  });
});

describe('several crossovers', () => {
  // A lightly damped mode on top of an integrator: |L| crosses 1 three times.
  // L(s) = 0.5/s · (1 + 20/(s² + 0.04 s + 25)) — checked against a brute-force sweep.
  const num = polyScale(polyAdd([1, 0.04, 25], [20]), 0.5);
  const den = [1, 0.04, 25, 0];
  const plant = ss(num, den);
  it('lists every gain crossover, each with |L| = 1, and reports the smallest phase margin', () => {
    const m = margins(plant);
    let signs = 0, prev = NaN;
    for (let i = 0; i <= 40000; i++) {
      const w = 10 ** (-2 + (4 * i) / 40000);
      const v = Math.log(cAbs(evalSiso(plant, { re: 0, im: w })));
      if (Number.isFinite(prev) && (prev < 0) !== (v < 0)) signs++;
      prev = v;
    }
    expect(m.gainCrossings.length).toBe(signs);
    expect(signs).toBeGreaterThanOrEqual(3);
    for (const c of m.gainCrossings) {
      const L = evalSiso(plant, { re: 0, im: c.omega });
      expect(Math.abs(cAbs(L) - 1)).toBeLessThan(1e-12);
      const pm = 180 + (cArg(L) * 180) / Math.PI;
      expect(Math.abs(((c.phaseMargin - pm + 540) % 360) - 180)).toBeLessThan(1e-9);
    }
    expect(m.phaseMargin).toBe(Math.min(...m.gainCrossings.map((c) => c.phaseMargin)));
  });
});

describe('odd input', () => {
  it('reports instead of throwing', () => {
    expect(margins({ A: [[NaN]], B: [[1]], C: [[1]], D: [[0]] }).ok).toBe(false);
    expect(margins({ A: [[1, 2]], B: [[1]], C: [[1]], D: [[0]] }).ok).toBe(false);
    expect(margins(ss([1], [1, 1]), { omegaRange: [0, -1] }).ok).toBe(false);
    const g = margins({ A: [], B: [], C: [[]], D: [[0.5]] });
    expect(g.ok).toBe(true);
    expect(g.gainCrossings).toEqual([]);
    expect(g.closedLoop.stable).toBe(true);
  });
});
