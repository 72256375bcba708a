// The closed loop assembled from the instance models and the AD-linearized wiring, against the
// model compiler's own closed-loop Jacobian, against hand-derived characteristic polynomials
// (checked by Routh–Hurwitz) and against closed-form margins.

import { describe, expect, test } from 'vitest';
import { breakAt, drivenInputs, loopLinear } from '../../language/src/linear/loop-linear';
import { linearizeLoop } from '../../language/src/linear/linearize';
import { routh } from '../../language/src/linear/routh';
import { polyFromRoots } from '../../language/src/linear/poly';
import { eigenvalues } from '../../language/src/linear/eig';
import { analysed, relErr, sample } from './helpers';
import { toMat } from '../../language/src/linear/jacobian';

function compiledJac(text: string, loop?: string) {
  const a = analysed(text);
  const lin = loopLinear(a, loop);
  expect(lin.ok, lin.problem).toBe(true);
  const c = lin.compiled!;
  const J = new Float64Array(c.n * c.n);
  c.jac(0, lin.x, J);
  return { a, lin, J: toMat(J, c.n, c.n) };
}

// Four states, all measured; a static state feedback whose gains put the closed loop at
// s⁴ + 24s³ + 196s² + 624s + 640 = (s+2)(s+4)(s+8)(s+10) (REFERENCES.md, Routh–Hurwitz).
const CHAIN = `
plant Chain {
  state p [m]
  state v [m/s]
  state a [m/s^2]
  state j [m/s^3]
  input snap [m/s^4]
  output pos [m] = p
  output vel [m/s] = v
  output acc [m/s^2] = a
  output jerk [m/s^3] = j
  p' = v
  v' = a
  a' = j
  j' = snap
}
controller Place {
  param k0 = 640 [1/s^4]
  param k1 = 624 [1/s^3]
  param k2 = 196 [1/s^2]
  param k3 = 24 [1/s]
  input ep [m]
  input ev [m/s]
  input ea [m/s^2]
  input ej [m/s^3]
  output snap [m/s^4] = k0*ep + k1*ev + k2*ea + k3*ej
}
loop Hold {
  signal target = 0 [m]
  target - Chain.pos -> Place.ep
  0 [m/s] - Chain.vel -> Place.ev
  0 [m/s^2] - Chain.acc -> Place.ea
  0 [m/s^3] - Chain.jerk -> Place.ej
  Place.snap -> Chain.snap
  simulate 5 [s]
}
`;

// Three unit lags in a chain and a gain 2√2: L(s) = 2√2/(s+1)³ (REFERENCES.md, Margins).
const LAGS = `
plant Lags {
  state x1 [V]
  state x2 [V]
  state x3 [V]
  input drive [V]
  output seen [V] = x3
  x1' = (drive - x1) / 1 [s]
  x2' = (x1 - x2) / 1 [s]
  x3' = (x2 - x3) / 1 [s]
}
controller Gain {
  param k = 2*sqrt(2)
  input err [V]
  output drive [V] = k*err
}
loop Ring {
  signal ref = 0 [V]
  ref - Lags.seen -> Gain.err
  Gain.drive -> Lags.drive
  simulate 10 [s]
}
`;

describe('closed loop from the parts equals the compiled closed-loop Jacobian', () => {
  for (const [name, text] of [['boom.loop', sample('boom.loop')], ['tank.loop', sample('tank.loop')], ['state feedback (feedthrough)', CHAIN], ['lag chain', LAGS]] as const) {
    test(name, () => {
      const { lin, J } = compiledJac(text);
      expect(relErr(lin.closed.A, J)).toBeLessThan(1e-12);
    });
  }
});

describe('closed-loop poles of a hand-placed loop (Routh 1877, REFERENCES.md)', () => {
  test('s⁴ + 24s³ + 196s² + 624s + 640: poles −2, −4, −8, −10, and Routh finds no sign change', () => {
    const a = analysed(CHAIN);
    const lin = linearizeLoop(a);
    expect(lin.ok).toBe(true);
    const re = lin.poles.map((p) => p.re).sort((x, y) => y - x);
    [-2, -4, -8, -10].forEach((r, i) => expect(re[i]).toBeCloseTo(r, 8));
    expect(lin.poles.every((p) => Math.abs(p.im) < 1e-8)).toBe(true);
    expect(lin.verdict).toBe('stable');
    // characteristic polynomial from the closed-loop A, independently judged by Routh
    const ev = eigenvalues(loopLinear(a).closed.A);
    const poly = polyFromRoots(ev.values);
    [1, 24, 196, 624, 640].forEach((c, i) => expect(poly[i]).toBeCloseTo(c, 6));
    const r = routh(poly);
    expect(r.rhp).toBe(0);
    expect(r.verdict).toBe('stable');
    expect(lin.settling).toBeCloseTo(4 / 2, 8); // 4/(ζωn) of the dominant pole −2
  });
});

describe('margins of L(s) = 2√2/(s+1)³ (closed form, REFERENCES.md)', () => {
  test('phase margin 45° at 1 rad/s, gain margin 2√2 (9.0309 dB) at √3 rad/s, to 1e-6', () => {
    const lin = linearizeLoop(analysed(LAGS));
    expect(lin.margins).toHaveLength(1);
    const m = lin.margins[0];
    expect(m.input).toBe('Lags.drive');
    expect(m.phase!).toBeCloseTo(45, 6);
    expect(m.phaseMarginFrequency!).toBeCloseTo(1, 6);
    expect(m.gain!).toBeCloseTo(2 * Math.SQRT2, 6);
    expect(m.gainDb!).toBeCloseTo(9.030899869919436, 6);
    expect(m.gainMarginFrequency!).toBeCloseTo(Math.sqrt(3), 6);
    // delay margin = PM(rad)/ωc (common practice)
    expect(m.delay!).toBeCloseTo(Math.PI / 4, 6);
    expect(m.stable).toBe(true);
  });

  test('the broken loop is L, with the negative-feedback sign: L(0) = +2√2 (derived)', () => {
    const lin = loopLinear(analysed(LAGS));
    const L = breakAt(lin, drivenInputs(lin)[0]);
    // L(0) = D − C A⁻¹ B; for the lag chain A⁻¹ is lower triangular of −1s
    const n = L.A.length;
    const x = new Array<number>(n).fill(0);
    // solve A x = −B by forward substitution (A lower triangular here)
    for (let i = 0; i < n; i++) {
      let s = -L.B[i][0];
      for (let j = 0; j < i; j++) s -= L.A[i][j] * x[j];
      x[i] = s / L.A[i][i];
    }
    const L0 = L.D[0][0] + L.C[0].reduce((acc, c, i) => acc + c * x[i], 0);
    expect(L0).toBeCloseTo(2 * Math.SQRT2, 12);
  });
});

describe('the boom: open-loop unstable, stabilised by the PD law', () => {
  test('Nyquist: one open-loop RHP pole, one encirclement, stable; lower gain margin kp_crit/kp = m·g·arm/kp (derived)', () => {
    const lin = linearizeLoop(analysed(sample('boom.loop')));
    expect(lin.verdict).toBe('stable');
    expect(lin.open.filter((p) => p.re > 0)).toHaveLength(1);
    const m = lin.margins[0];
    expect(m.input).toBe('Boom.drive');
    expect(m.openLoopUnstablePoles).toBe(1);
    expect(m.encirclements).toBe(1);
    expect(m.stable).toBe(true);
    expect(m.gain).toBeNull(); // no upper limit on the gain
    // at ω = 0 the loop gain is kp/(load·g·arm); the loop is lost below its inverse
    expect(m.lowerGain!).toBeCloseTo((0.9 * 9.80665 * 0.6) / 14, 9);
    expect(m.phase!).toBeGreaterThan(0);
  });
});

describe('closed-loop operating point', () => {
  test('the PI integrator holds the valve at the tank\'s trimmed opening: ki·∫e = valve (derived)', () => {
    const lin = loopLinear(analysed(sample('tank.loop')));
    const fill = lin.instances.find((i) => i.name === 'Fill')!;
    const tank = lin.instances.find((i) => i.name === 'Tank')!;
    expect(fill.x.length).toBe(1);
    const ki = 0.2; // 20 %/(m·s) in SI
    expect(ki * fill.x[0]).toBeCloseTo(0.360943225, 12);
    expect(tank.u[0]).toBeCloseTo(0.360943225, 12);
    // the level holds to the rounding of the written opening: 1e-9 of the inflow term supply·valve/area
    expect(Math.abs(lin.residual[0])).toBeLessThan(1e-9 * (0.01 * 0.360943225) / 0.8);
    expect(lin.notes).toEqual([]);
  });
});
