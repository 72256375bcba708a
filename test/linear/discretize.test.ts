// Discretization (language/src/linear/discretize.ts).
import { describe, expect, it } from 'vitest';
import { discretize, forward, tustin, zoh } from '../../language/src/linear/discretize';
import { evalTransfer, type StateSpace } from '../../language/src/linear/lti';
import { cDiv, type Complex } from '../../language/src/linear/complex';
import fixture from '../reference/linear/discretize.json';
import { expectComplexClose, expectMatClose } from './helpers';

const lag = (tau: number): StateSpace => ({ A: [[-1 / tau]], B: [[1 / tau]], C: [[1]], D: [[0]] });

describe('zoh', () => {
  it('first-order lag 1/(τs+1), τ = 1, T = 0.1: Ad = e^{−T/τ}, Bd = 1 − e^{−T/τ} (REFERENCES.md, exact)', () => {
    const r = zoh(lag(1), 0.1);
    expect(r.ok).toBe(true);
    expect(r.ss!.A[0][0]).toBeCloseTo(0.9048374180359595, 15);
    expect(r.ss!.B[0][0]).toBeCloseTo(0.09516258196404043, 15);
  });

  it('double integrator 1/s²: [[1, T], [0, 1]], [[T²/2], [T]] [derived, exact]', () => {
    for (const T of [0.001, 0.1, 2.5]) {
      const r = zoh({ A: [[0, 1], [0, 0]], B: [[0], [1]], C: [[1, 0]], D: [[0]] }, T);
      expectMatClose(r.ss!.A, [[1, T], [0, 1]], 1e-15);
      expectMatClose(r.ss!.B, [[(T * T) / 2], [T]], 1e-15);
    }
  });
});

describe('tustin', () => {
  it('lag: G(z) = T(z+1)/((2τ+T)z + (T−2τ)) on the unit circle (REFERENCES.md)', () => {
    const tau = 0.7, T = 0.05;
    const r = tustin(lag(tau), T);
    expect(r.ok).toBe(true);
    for (const th of [0.01, 0.3, 1, 2, 3.1]) {
      const z: Complex = { re: Math.cos(th), im: Math.sin(th) };
      const got = evalTransfer(r.ss!, z).G[0][0];
      const ref = cDiv({ re: T * (z.re + 1), im: T * z.im }, { re: (2 * tau + T) * z.re + (T - 2 * tau), im: (2 * tau + T) * z.im });
      expectComplexClose(got, ref, 1e-13);
    }
  });

  it('matches G((2/T)(z−1)/(z+1)) for a MIMO system with feedthrough [derived from the substitution]', () => {
    const c = fixture.cases.find((k) => k.method === 'bilinear' && k.B[0].length === 2)!;
    const ss: StateSpace = { A: c.A, B: c.B, C: c.C, D: c.D };
    const r = tustin(ss, c.T);
    for (const th of [0.2, 1.3, 2.9]) {
      const z: Complex = { re: 0.9 * Math.cos(th), im: 0.9 * Math.sin(th) };
      const w = cDiv({ re: z.re - 1, im: z.im }, { re: z.re + 1, im: z.im });
      const s = { re: (2 / c.T) * w.re, im: (2 / c.T) * w.im };
      const Gd = evalTransfer(r.ss!, z).G, Gc = evalTransfer(ss, s).G;
      for (let i = 0; i < 2; i++) for (let j = 0; j < 2; j++) expectComplexClose(Gd[i][j], Gc[i][j], 1e-12);
    }
  });

  it('reports a singular I − (T/2)A instead of throwing', () => {
    const r = tustin({ A: [[2]], B: [[1]], C: [[1]], D: [[0]] }, 1);
    expect(r.ok).toBe(false);
    expect(r.problem).toBe('singular');
  });
});

describe('forward', () => {
  it('Ad = I + AT, Bd = BT (definition)', () => {
    const r = forward({ A: [[0, 1], [-4, -0.4]], B: [[0], [1]], C: [[1, 0]], D: [[0]] }, 0.1);
    expectMatClose(r.ss!.A, [[1, 0.1], [-0.4, 0.96]], 1e-15);
    expectMatClose(r.ss!.B, [[0], [0.1]], 1e-15);
  });
});

describe('against scipy.signal.cont2discrete (fixture, test/reference/linear/make_fixtures.py)', () => {
  const name = { zoh: 'zoh', bilinear: 'tustin', euler: 'forward' } as const;
  for (const c of fixture.cases) {
    it(`${c.method}, T = ${c.T}: ${c.name}`, () => {
      const r = discretize({ A: c.A, B: c.B, C: c.C, D: c.D }, c.T, name[c.method as keyof typeof name]);
      expect(r.ok).toBe(true);
      expectMatClose(r.ss!.A, c.Ad, 1e-13);
      expectMatClose(r.ss!.B, c.Bd, 1e-13);
      expectMatClose(r.ss!.C, c.Cd, 1e-13);
      expectMatClose(r.ss!.D, c.Dd, 1e-13);
    });
  }
});

describe('odd input', () => {
  it('bad period, bad shapes and an empty system', () => {
    expect(zoh(lag(1), 0).problem).toBe('bad-period');
    expect(zoh(lag(1), NaN).problem).toBe('bad-period');
    expect(tustin({ A: [[1, 2]], B: [[1]], C: [[1]], D: [[0]] }, 0.1).problem).toBe('shape');
    const g = zoh({ A: [], B: [], C: [[]], D: [[2]] }, 0.1);
    expect(g.ok).toBe(true);
    expect(g.ss!.D).toEqual([[2]]);
  });
});
