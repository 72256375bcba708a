// Plant linearization of the camera boom (samples/boom.loop, LANGUAGE.md §1) and exactness of every
// Jacobian: the compiler's symbolic ones and the AST dual-number ones, against each other and
// against central differences.

import { describe, expect, test } from 'vitest';
import { linearizeSystem } from '../../language/src/linear/linearize';
import { systemJacobians } from '../../language/src/linear/jacobian';
import { systemModel } from '../../language/src/linear/model-system';
import { analysed, centralJacobian, compiled, relErr, sample } from './helpers';

const a = analysed(sample('boom.loop'));
const arm = 0.6, load = 0.9, drag = 0.02, g = 9.80665;
const inertia = load * arm * arm;

describe('boom at upright', () => {
  test('A and B equal the hand-derived Jacobian [[0, 1], [g/arm·cos 0, −drag/inertia]], [[0], [1/inertia]] (derived from the equations of LANGUAGE.md §1)', () => {
    const lin = linearizeSystem(a, 'Boom', 'upright');
    expect(lin.ok).toBe(true);
    expect(lin.point).toBe('upright');
    const A = lin.si.A, B = lin.si.B, C = lin.si.C, D = lin.si.D;
    expect(A[0][0]).toBe(0);
    expect(A[0][1]).toBe(1);
    expect(A[1][0]).toBeCloseTo((g / arm) * Math.cos(0), 12);
    expect(A[1][1]).toBeCloseTo(-drag / inertia, 12);
    expect(B[0][0]).toBe(0);
    expect(B[1][0]).toBeCloseTo(1 / inertia, 12);
    expect(C).toEqual([[1, 0]]);
    expect(D).toEqual([[0]]);
  });

  test('poles are the roots of s² + (drag/inertia)s − g/arm: one in the right half-plane (derived)', () => {
    const lin = linearizeSystem(a, 'Boom');
    const c1 = drag / inertia, c0 = -g / arm;
    const disc = Math.sqrt(c1 * c1 - 4 * c0);
    const roots = [(-c1 + disc) / 2, (-c1 - disc) / 2];
    expect(lin.poles.map((p) => p.re)).toEqual([expect.closeTo(roots[0], 10), expect.closeTo(roots[1], 10)]);
    expect(lin.verdict).toBe('unstable');
    expect(lin.unstable).toBe(1);
    expect(lin.settling).toBeNull();
    expect(lin.residual.every((r) => r.negligible)).toBe(true);
  });
});

describe('Jacobians against central differences (common practice: O(h²) differences agree to ~1e-8)', () => {
  const sys = compiled(a, 'Boom');
  const model = systemModel(a, a.symbols.systems.get('Boom')!);
  const points: [number[], number[]][] = [
    [[0.3, -0.7], [1.5]],
    [[1.2, 2.0], [-3.0]],
    [[-2.5, 0.1], [0.25]],
  ];
  for (const [x, u] of points) {
    test(`at tilt = ${x[0]}, rate = ${x[1]}, drive = ${u[0]}`, () => {
      const X = Float64Array.from(x), U = Float64Array.from(u);
      const ss = systemJacobians(sys, X, U);
      const f = (xx: Float64Array, uu: Float64Array) => { const d = new Float64Array(2); sys.f(xx, uu, sys.params, d); return d; };
      const gy = (xx: Float64Array, uu: Float64Array) => { const d = new Float64Array(1); sys.g(xx, uu, sys.params, d); return d; };
      expect(relErr(ss.A, centralJacobian((z) => f(z, U), X))).toBeLessThan(1e-6);
      expect(relErr(ss.B, centralJacobian((z) => f(X, z), U))).toBeLessThan(1e-6);
      expect(relErr(ss.C, centralJacobian((z) => gy(z, U), X))).toBeLessThan(1e-6);
      expect(relErr(ss.D, centralJacobian((z) => gy(X, z), U))).toBeLessThan(1e-6);
      // the AST dual-number Jacobian, an independent exact route, agrees to rounding
      const ev = model.evaluate(x, u, { seedXU: true });
      const Jad = ev.dx.map((d) => Array.from(d.d));
      expect(relErr(Jad.map((r) => r.slice(0, 2)), ss.A)).toBeLessThan(1e-14);
      expect(relErr(Jad.map((r) => r.slice(2)), ss.B)).toBeLessThan(1e-14);
    });
  }

  test('outside the drive limit the slope is 0, inside 1 (LANGUAGE.md §5)', () => {
    const X = Float64Array.from([0, 0]);
    expect(systemJacobians(sys, X, Float64Array.from([3.9])).B[1][0]).toBeCloseTo(1 / inertia, 12);
    expect(systemJacobians(sys, X, Float64Array.from([4.5])).B[1][0]).toBe(0);
    const ev = model.evaluate([0, 0], [4.5], { seedXU: true });
    expect(ev.dx[1].d[2]).toBe(0);
  });
});

describe('controller of the boom', () => {
  test('the PD law with roll-off kp + kd·s/(1 + s/wf) has DC gain kp and high-frequency gain kp + kd·wf (derived)', () => {
    const lin = linearizeSystem(a, 'Steady');
    expect(lin.ok).toBe(true);
    const { A, B, C, D } = lin.si;
    // G(0) = D − C A⁻¹ B for the one hidden state
    expect(D[0][0] - (C[0][0] * B[0][0]) / A[0][0]).toBeCloseTo(14, 10);
    expect(D[0][0]).toBeCloseTo(14 + 2.2 * 25, 10);
    expect(lin.poles[0].re).toBeCloseTo(-25, 10);
    // zero of kp(1 + s/wf) + kd s = 0 → s = −kp·wf/(kp + kd·wf)
    expect(lin.zeros[0].zeros[0].re).toBeCloseTo((-14 * 25) / (14 + 2.2 * 25), 10);
  });
});
