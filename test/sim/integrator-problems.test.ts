// The test problems' hand-written Jacobians against central differences of their f, so that a slip
// in a test Jacobian cannot make the stiff method look better or worse than it is. Central
// differences have error O(h²) (common practice).

import { expect, test } from 'vitest';
import { ARENSTORF, B1, BLOW_UP, DETEST_A, HIRES, kepler, pendulum, vanDerPol, FIXTURE_SYSTEMS } from '../reference/ode/problems';
import { jacobianMismatch } from '../reference/ode/harness';

const states: Array<[string, import('../../language/src/sim/solver').OdeProblem, number, number[]]> = [
  ...DETEST_A.map((p) => [p.name, p.problem, 1.3, [0.7]] as [string, typeof p.problem, number, number[]]),
  ['B1', B1.problem, 0, [1.2, 2.5]],
  ['Kepler', kepler(0.6).problem, 0, [0.3, -0.8, 0.9, 0.2]],
  ['Arenstorf', ARENSTORF.problem, 0, [0.5, 0.3, -0.4, 1.1]],
  ['HIRES', HIRES.problem, 0, [0.3, 0.1, 0.05, 0.2, 0.1, 0.4, 0.2, 0.3]],
  ['VdP', vanDerPol(1000).problem, 0, [1.5, -0.3]],
  ['pendulum', pendulum(19.6, 1).problem, 0, [2.1, 0.4]],
  ['blow-up', BLOW_UP.problem, 0, [3]],
  ['pendulum-tanh', FIXTURE_SYSTEMS['pendulum-tanh']({ a: 9.81, c: 0.3, tau: 6, k: 4, r: 0.5 }), 0, [1.1, -0.7]],
  ['duffing', FIXTURE_SYSTEMS.duffing({ delta: 0.2, alpha: 1, beta: 0.5, gamma: 0.8, omega: 1.3 }), 0.4, [0.9, 0.3]],
  ['motor', FIXTURE_SYSTEMS.motor({ L: 2e-3, R: 1.2, ke: 0.05, kt: 0.05, J: 2e-5, b: 1e-5, Tf: 2e-3, ws: 1, U: 12, s: 3, freq: 2 }), 0.1, [1.5, 80]],
];

test.each(states)('%s: jac matches central differences', (_name, problem, t, x) => {
  expect(jacobianMismatch(problem, t, x)).toBeLessThan(1e-6);
});
