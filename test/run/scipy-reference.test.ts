// Our runs against independent reference trajectories computed with scipy's solve_ivp (DOP853,
// rtol 1e-12, atol 1e-14) from hand-written equations of the same loops; fixtures and the
// script that made them are in test/reference/runs/ (make_runs.py).

import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { runOnce } from '../../language/src/sim/run';
import { runSpec } from '../../language/src/sim/sweep';
import { compile, sample } from './helpers';

interface Fixture {
  t: number[];
  signals: Record<string, number[]>;
  source: string;
}
const fixture = (name: string): Fixture => JSON.parse(readFileSync(join(__dirname, '..', 'reference', 'runs', name), 'utf8'));

function compareTo(file: string, fx: Fixture, tol: Record<string, number>) {
  const c = compile(sample(file));
  const spec = runSpec(c);
  const duration = fx.t[fx.t.length - 1];
  expect(spec.duration).toBe(duration);
  const run = runOnce(c, spec, { label: 'nonlinear', kind: 'nonlinear', p: c.params, x0: c.start }, { points: fx.t.length, tolerance: 1e-11, abstol: 1e-13 });
  expect(run.error).toBeUndefined();
  fx.t.forEach((t, i) => expect(Math.abs(run.t[i] - t)).toBeLessThan(1e-12));
  for (const [name, ref] of Object.entries(fx.signals)) {
    const ours = run.signals[name];
    let worst = 0;
    ref.forEach((v, i) => (worst = Math.max(worst, Math.abs(ours[i] - v))));
    expect(worst, name).toBeLessThan(tol[name]);
  }
  return run;
}

describe('nonlinear loops against scipy DOP853', () => {
  it('camera boom with its saturating PD (samples/boom.loop)', () => {
    const fx = fixture('boom.json');
    expect(fx.source).toMatch(/DOP853/);
    const run = compareTo('boom.loop', fx, { 'Boom.tilt': 1e-8, 'Boom.rate': 1e-7 });
    expect(run.atLimit['Boom.drive'].length).toBeGreaterThan(0);
  });

  it('tank draining through an orifice, PI valve with a limit and anti-windup (samples/orifice-tank.loop)', () => {
    const fx = fixture('orifice-tank.json');
    compareTo('orifice-tank.loop', fx, { 'Tank.height': 1e-7, 'Valve.flow': 1e-9 });
  });
});
