// Published ODE test problems (with their sources) and our own fixture systems, each with the exact
// Jacobian the model compiler would supply. Shared by the integrator tests in test/sim/.

import type { OdeProblem } from '../../../language/src/sim/solver';

export interface TestProblem {
  name: string;
  problem: OdeProblem;
  t0: number;
  t1: number;
  x0: number[];
  /** Closed-form solution, when there is one. */
  exact?: (t: number) => number[];
}

function scalar(name: string, f: (t: number, y: number) => number, dfdy: (t: number, y: number) => number, exact: (t: number) => number, autonomous: boolean): TestProblem {
  return {
    name,
    problem: {
      n: 1,
      autonomous,
      f: (t, x, dx) => {
        dx[0] = f(t, x[0]);
      },
      jac: (t, x, J) => {
        J[0] = dfdy(t, x[0]);
      },
    },
    t0: 0,
    t1: 20,
    x0: [1],
    exact: (t) => [exact(t)],
  };
}

// DETEST class A: Hull, Enright, Fellen & Sedgwick, "Comparing numerical methods for ordinary
// differential equations", SIAM J. Numer. Anal. 9(4), 1972; y(0) = 1, end time 20.
export const A1 = scalar('A1', (_t, y) => -y, () => -1, (t) => Math.exp(-t), true);
export const A2 = scalar('A2', (_t, y) => (-y * y * y) / 2, (_t, y) => -1.5 * y * y, (t) => 1 / Math.sqrt(t + 1), true);
export const A3 = scalar('A3', (t, y) => y * Math.cos(t), (t) => Math.cos(t), (t) => Math.exp(Math.sin(t)), false);
export const A4 = scalar('A4', (_t, y) => (y / 4) * (1 - y / 20), (_t, y) => 0.25 - y / 40, (t) => 20 / (1 + 19 * Math.exp(-t / 4)), true);
export const DETEST_A = [A1, A2, A3, A4];

// DETEST B1 (same paper): Lotka–Volterra, y(0) = (1, 3), end time 20.
// V = y1 − ln y1 + 2 y2 − 2 ln y2 is invariant, V0 = 7 − 2 ln 3 [derived].
export const B1: TestProblem = {
  name: 'B1',
  problem: {
    n: 2,
    autonomous: true,
    f: (_t, y, d) => {
      d[0] = 2 * (y[0] - y[0] * y[1]);
      d[1] = -(y[1] - y[0] * y[1]);
    },
    jac: (_t, y, J) => {
      J[0] = 2 * (1 - y[1]);
      J[1] = -2 * y[0];
      J[2] = y[1];
      J[3] = y[0] - 1;
    },
  },
  t0: 0,
  t1: 20,
  x0: [1, 3],
};
export const lotkaVolterraInvariant = (y: ArrayLike<number>): number => y[0] - Math.log(y[0]) + 2 * y[1] - 2 * Math.log(y[1]);

// Kepler problem (Hairer, Lubich & Wanner, Geometric Numerical Integration, 2nd ed. 2006, §I.2
// [memory]): state (q1, q2, p1, p2), q'' = −q/|q|³, q(0) = (1 − e, 0), p(0) = (0, √((1+e)/(1−e))).
export function kepler(e: number): TestProblem {
  return {
    name: `Kepler e=${e}`,
    problem: {
      n: 4,
      autonomous: true,
      f: (_t, y, d) => {
        const r2 = y[0] * y[0] + y[1] * y[1];
        const r3 = r2 * Math.sqrt(r2);
        d[0] = y[2];
        d[1] = y[3];
        d[2] = -y[0] / r3;
        d[3] = -y[1] / r3;
      },
      jac: (_t, y, J) => {
        const r2 = y[0] * y[0] + y[1] * y[1];
        const r = Math.sqrt(r2);
        const r3 = r2 * r;
        const r5 = r3 * r2;
        J.fill(0);
        J[0 * 4 + 2] = 1;
        J[1 * 4 + 3] = 1;
        J[2 * 4 + 0] = -1 / r3 + (3 * y[0] * y[0]) / r5;
        J[2 * 4 + 1] = (3 * y[0] * y[1]) / r5;
        J[3 * 4 + 0] = (3 * y[1] * y[0]) / r5;
        J[3 * 4 + 1] = -1 / r3 + (3 * y[1] * y[1]) / r5;
      },
    },
    t0: 0,
    t1: 2 * Math.PI,
    x0: [1 - e, 0, 0, Math.sqrt((1 + e) / (1 - e))],
  };
}
export const keplerEnergy = (y: ArrayLike<number>): number => 0.5 * (y[2] * y[2] + y[3] * y[3]) - 1 / Math.hypot(y[0], y[1]);
export const keplerMomentum = (y: ArrayLike<number>): number => y[0] * y[3] - y[1] * y[2];

// Arenstorf orbit (Hairer, Nørsett & Wanner, Solving ODEs I, 2nd ed. 1993, §II.0): state
// (y1, y2, y1', y2'); periodic with period T.
export const ARENSTORF_T = 17.0652165601579625588917206249;
const MU = 0.012277471;
const MUP = 1 - MU;
export const ARENSTORF: TestProblem = {
  name: 'Arenstorf',
  problem: {
    n: 4,
    autonomous: true,
    f: (_t, y, d) => {
      const ax = y[0] + MU;
      const bx = y[0] - MUP;
      const d1 = Math.pow(ax * ax + y[1] * y[1], 1.5);
      const d2 = Math.pow(bx * bx + y[1] * y[1], 1.5);
      d[0] = y[2];
      d[1] = y[3];
      d[2] = y[0] + 2 * y[3] - (MUP * ax) / d1 - (MU * bx) / d2;
      d[3] = y[1] - 2 * y[2] - (MUP * y[1]) / d1 - (MU * y[1]) / d2;
    },
    jac: (_t, y, J) => {
      // d/dy of −m (y − a)/|y − a|³ is −m (I/r³ − 3 (y−a)(y−a)ᵀ/r⁵).
      const ax = y[0] + MU;
      const bx = y[0] - MUP;
      const y2 = y[1];
      const ra2 = ax * ax + y2 * y2;
      const rb2 = bx * bx + y2 * y2;
      const ra3 = ra2 * Math.sqrt(ra2);
      const rb3 = rb2 * Math.sqrt(rb2);
      const ra5 = ra3 * ra2;
      const rb5 = rb3 * rb2;
      J.fill(0);
      J[0 * 4 + 2] = 1;
      J[1 * 4 + 3] = 1;
      J[2 * 4 + 0] = 1 - MUP * (1 / ra3 - (3 * ax * ax) / ra5) - MU * (1 / rb3 - (3 * bx * bx) / rb5);
      J[2 * 4 + 1] = (3 * MUP * ax * y2) / ra5 + (3 * MU * bx * y2) / rb5;
      J[2 * 4 + 3] = 2;
      J[3 * 4 + 0] = J[2 * 4 + 1];
      J[3 * 4 + 1] = 1 - MUP * (1 / ra3 - (3 * y2 * y2) / ra5) - MU * (1 / rb3 - (3 * y2 * y2) / rb5);
      J[3 * 4 + 2] = -2;
    },
  },
  t0: 0,
  t1: ARENSTORF_T,
  x0: [0.994, 0, 0, -2.00158510637908252240537862224],
};

// HIRES (IVP Test Set, Mazzia & Magherini, release 2.4, 2008), end time 321.8122.
export const HIRES: TestProblem = {
  name: 'HIRES',
  problem: {
    n: 8,
    autonomous: true,
    f: (_t, y, d) => {
      const f7 = 280 * y[5] * y[7] - 1.81 * y[6];
      d[0] = -1.71 * y[0] + 0.43 * y[1] + 8.32 * y[2] + 0.0007;
      d[1] = 1.71 * y[0] - 8.75 * y[1];
      d[2] = -10.03 * y[2] + 0.43 * y[3] + 0.035 * y[4];
      d[3] = 8.32 * y[1] + 1.71 * y[2] - 1.12 * y[3];
      d[4] = -1.745 * y[4] + 0.43 * (y[5] + y[6]);
      d[5] = -280 * y[5] * y[7] + 0.69 * y[3] + 1.71 * y[4] - 0.43 * y[5] + 0.69 * y[6];
      d[6] = f7;
      d[7] = -f7;
    },
    jac: (_t, y, J) => {
      J.fill(0);
      const set = (i: number, j: number, v: number): void => {
        J[i * 8 + j] = v;
      };
      set(0, 0, -1.71), set(0, 1, 0.43), set(0, 2, 8.32);
      set(1, 0, 1.71), set(1, 1, -8.75);
      set(2, 2, -10.03), set(2, 3, 0.43), set(2, 4, 0.035);
      set(3, 1, 8.32), set(3, 2, 1.71), set(3, 3, -1.12);
      set(4, 4, -1.745), set(4, 5, 0.43), set(4, 6, 0.43);
      set(5, 3, 0.69), set(5, 4, 1.71), set(5, 5, -280 * y[7] - 0.43), set(5, 6, 0.69), set(5, 7, -280 * y[5]);
      set(6, 5, 280 * y[7]), set(6, 6, -1.81), set(6, 7, 280 * y[5]);
      set(7, 5, -280 * y[7]), set(7, 6, 1.81), set(7, 7, -280 * y[5]);
    },
  },
  t0: 0,
  t1: 321.8122,
  x0: [1, 0, 0, 0, 0, 0, 0, 0.0057],
};
export const HIRES_REF = [
  0.7371312573325668e-3, 0.1442485726316185e-3, 0.5888729740967575e-4, 0.1175651343283149e-2, 0.2386356198831331e-2,
  0.6238968252742796e-2, 0.2849998395185769e-2, 0.2850001604814231e-2,
];

// Van der Pol, μ = 1000, y(0) = (2, 0), end time 2000 (IVP Test Set, Mazzia & Magherini, release
// 2.4, 2008, in unscaled time).
export function vanDerPol(mu: number): TestProblem {
  return {
    name: `Van der Pol mu=${mu}`,
    problem: {
      n: 2,
      autonomous: true,
      f: (_t, y, d) => {
        d[0] = y[1];
        d[1] = mu * (1 - y[0] * y[0]) * y[1] - y[0];
      },
      jac: (_t, y, J) => {
        J[0] = 0;
        J[1] = 1;
        J[2] = -2 * mu * y[0] * y[1] - 1;
        J[3] = mu * (1 - y[0] * y[0]);
      },
    },
    t0: 0,
    t1: 2000,
    x0: [2, 0],
  };
}
export const VDP_REF = [1.706167732170469, -0.8928097010248125e-3];

/** Plane pendulum θ'' = −(g/L) sin θ, state (θ, θ'), released at rest from θ0. */
export function pendulum(gOverL: number, theta0: number): TestProblem {
  return {
    name: `pendulum θ0=${theta0}`,
    problem: {
      n: 2,
      autonomous: true,
      f: (_t, y, d) => {
        d[0] = y[1];
        d[1] = -gOverL * Math.sin(y[0]);
      },
      jac: (_t, y, J) => {
        J[0] = 0;
        J[1] = 1;
        J[2] = -gOverL * Math.cos(y[0]);
        J[3] = 0;
      },
    },
    t0: 0,
    t1: 0,
    x0: [theta0, 0],
  };
}

/** x' = x², x(0) = 1: x = 1/(1 − t) blows up at t = 1. */
export const BLOW_UP: TestProblem = {
  name: 'blow-up',
  problem: {
    n: 1,
    autonomous: true,
    f: (_t, x, d) => {
      d[0] = x[0] * x[0];
    },
    jac: (_t, x, J) => {
      J[0] = 2 * x[0];
    },
  },
  t0: 0,
  t1: 2,
  x0: [1],
};

// ---- our own systems, integrated by scipy in make_fixtures.py (keep the formulas identical) ----

export interface FixtureParams {
  [key: string]: number;
}

/** Damped pendulum driven by a saturating (tanh) position controller: θ'' = −a sin θ − c θ' + τ tanh(k (r − θ)). */
export function pendulumTanh(p: FixtureParams): OdeProblem {
  const { a, c, tau, k, r } = p;
  return {
    n: 2,
    autonomous: true,
    f: (_t, y, d) => {
      d[0] = y[1];
      d[1] = -a * Math.sin(y[0]) - c * y[1] + tau * Math.tanh(k * (r - y[0]));
    },
    jac: (_t, y, J) => {
      const th = Math.tanh(k * (r - y[0]));
      J[0] = 0;
      J[1] = 1;
      J[2] = -a * Math.cos(y[0]) - tau * k * (1 - th * th);
      J[3] = -c;
    },
  };
}

/** Forced hardening Duffing oscillator: x'' = −δ x' − α x − β x³ + γ cos(ω t). */
export function duffing(p: FixtureParams): OdeProblem {
  const { delta, alpha, beta, gamma, omega } = p;
  return {
    n: 2,
    f: (t, y, d) => {
      d[0] = y[1];
      d[1] = -delta * y[1] - alpha * y[0] - beta * y[0] * y[0] * y[0] + gamma * Math.cos(omega * t);
    },
    jac: (_t, y, J) => {
      J[0] = 0;
      J[1] = 1;
      J[2] = -alpha - 3 * beta * y[0] * y[0];
      J[3] = -delta;
    },
  };
}

/**
 * DC motor with a fast current loop and smooth Coulomb friction, driven by a saturated sine:
 * L i' = u(t) − R i − kₑ ω,  J ω' = kₜ i − b ω − T_f tanh(ω/ω_s),  u(t) = U tanh(s·sin(2π f t)).
 * The electrical time constant L/R is far below the mechanical one (mildly stiff).
 */
export function motor(p: FixtureParams): OdeProblem {
  const { L, R, ke, kt, J: inertia, b, Tf, ws, U, s, freq } = p;
  return {
    n: 2,
    f: (t, y, d) => {
      const u = U * Math.tanh(s * Math.sin(2 * Math.PI * freq * t));
      d[0] = (u - R * y[0] - ke * y[1]) / L;
      d[1] = (kt * y[0] - b * y[1] - Tf * Math.tanh(y[1] / ws)) / inertia;
    },
    jac: (_t, y, Jm) => {
      const th = Math.tanh(y[1] / ws);
      Jm[0] = -R / L;
      Jm[1] = -ke / L;
      Jm[2] = kt / inertia;
      Jm[3] = (-b - (Tf / ws) * (1 - th * th)) / inertia;
    },
  };
}

export const FIXTURE_SYSTEMS: Record<string, (p: FixtureParams) => OdeProblem> = {
  'pendulum-tanh': pendulumTanh,
  duffing,
  motor,
};
