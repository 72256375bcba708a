// The exported C against the simulator's sampled controller: the same inputs, instant by
// instant, must give the same outputs to 1e-9 of each output's size, for every discretization
// method, for a PI law with anti-windup against its output limit, and for a continuous
// controller exported with a period. The reference is the simulator itself (the compiled
// loop's sample function), not a second implementation.

import { describe, expect, it } from 'vitest';
import { exportController } from '../../language/src/export/index';
import { compileOnly, runC, simulatorSequence, worstRelative } from './harness';

const TOL = 1e-9;

/** A loop that feeds the controller's inputs from signals of time only. */
const driver = (ctl: string, wiring: string) => `
loop Drive {
${wiring}
  simulate 1 [s]
}
`;

function agree(text: string, name: string, steps: number, exportOpts: { period?: number; method?: 'tustin' | 'hold' | 'forward' } = {}, refText = text) {
  const ref = simulatorSequence(refText, name, steps);
  const r = exportController(text, { controller: name, lang: 'c', ...exportOpts });
  if (!r.ok) throw new Error(r.message);
  const got = runC(r.code, r.names, ref.inputs, `${name.toLowerCase()}_${exportOpts.method ?? 'file'}`);
  return { ref, got, code: r.code, worst: worstRelative(got, ref.outputs) };
}

// A level loop's PI law, valve command in percent, error in millimetres: the unit conversions
// at the interface are exercised as well as the limit and the back-calculation.
const PI = (method: string) => `
controller Level "PI with anti-windup" {
  param kp = 4 [%/mm]
  param ki = 2.5 [%/(mm*s)]
  input err [mm]
  output valve [%]
  limit valve within 0 [%] .. 100 [%]
  pid valve from err { kp = kp, ki = ki, antiwindup = 0.4 [s] }
  sample every 20 [ms] by ${method}
}
${driver('Level', '  signal e = 30 [mm] * sin(2 * pi * 0.6 [1/s] * t) + step(1.5 [s], 12 [mm]) - step(3 [s], 40 [mm])\n  e -> Level.err')}`;

// Lead-lag and a second-order filter: transfer relations with several hidden states.
const LEADLAG = (method: string) => `
controller Shape "lead-lag and a second-order roll-off" {
  param k  = 3 [V/rad]
  param wz = 4 [rad/s]
  param wp = 40 [rad/s]
  param wn = 60 [rad/s]
  input angle [deg]
  output drive [V]
  output smooth [deg]
  drive / angle = k * (1 + s/wz) / (1 + s/wp)
  smooth / angle = wn^2 / (s^2 + 1.2*wn*s + wn^2)
  sample every 5 [ms] by ${method}
}
${driver('Shape', '  signal a = 10 [deg] * sin(2 * pi * 1.3 [1/s] * t) + step(0.7 [s], 5 [deg])\n  a -> Shape.angle')}`;

// A PID with a filtered derivative, a nonlinear state equation (forward difference in every
// method) and the helper functions: lookup, min, max, abs, sign, if.
const MIXED = (method: string) => `
controller Mixed "PID plus a nonlinear observer state" {
  param gain = 1.5
  input e [m]
  input w [m/s]
  output u [N]
  state z [m] = 0.1 [m]
  limit u within -40 [N] .. 40 [N]
  pid u from e { kp = 90 [N/m], ki = 30 [N/(m*s)], kd = 6 [N*s/m], rolloff = 50 [rad/s], antiwindup = 0.3 [s] }
  z' = -3 [1/s] * (z - e) + gain * w * abs(sin(z / 1 [m])) + sign(w) * min(abs(w), 0.2 [m/s]) + max(e, 0 [m]) * 1 [1/s]
  output est [m] = if z > 0.5 [m] then lookup(z, [0.5 [m], 1 [m], 2 [m]], [0.5 [m], 0.8 [m], 1 [m]]) else z
}
`;

describe('exported C agrees with the simulator to 1e-9', () => {
  for (const method of ['tustin', 'hold', 'forward'] as const) {
    it(`PI with anti-windup and an output limit, ${method}`, () => {
      const { ref, got, worst } = agree(PI(method), 'Level', 300);
      // the run must actually reach both ends of the limit, or the anti-windup is not exercised
      const valve = ref.outputs.map((r) => r[0]);
      expect(valve.filter((v) => v === 100).length).toBeGreaterThan(5);
      expect(valve.filter((v) => v === 0).length).toBeGreaterThan(5);
      expect(got.length).toBe(300);
      expect(worst).toBeLessThan(TOL);
    });
    it(`transfer relations with several hidden states, ${method}`, () => {
      const { ref, worst } = agree(LEADLAG(method), 'Shape', 400);
      expect(Math.max(...ref.outputs.map((r) => Math.abs(r[0])))).toBeGreaterThan(1);
      expect(worst).toBeLessThan(TOL);
    });
  }

  it('a nonlinear state equation and the helper functions (hold)', () => {
    const text = MIXED('').replace('controller Mixed "PID plus a nonlinear observer state" {', 'controller Mixed "PID plus a nonlinear observer state" {\n  sample every 10 [ms] by hold') +
      driver('Mixed', '  signal e = 0.6 [m] * sin(2 * pi * 0.4 [1/s] * t) + step(2 [s], 0.5 [m])\n  signal w = 0.5 [m/s] * cos(2 * pi * 0.9 [1/s] * t)\n  e -> Mixed.e\n  w -> Mixed.w');
    const { ref, worst, code } = agree(text, 'Mixed', 500);
    expect(code).toContain('lw_lookup(');
    expect(code).toContain('lw_sign(');
    const est = ref.outputs.map((r) => r[1]);
    expect(est.some((v) => v > 0.5)).toBe(true); // the lookup branch is taken
    expect(est.some((v) => v < 0.5)).toBe(true);
    expect(worst).toBeLessThan(TOL);
  });

  it('a continuous controller exported with a period equals the same controller sampled in the file', () => {
    const continuous = `
controller Speed "PI on a motor speed with a roll-off" {
  input err [rpm]
  output amps [A]
  limit amps within -20 [A] .. 20 [A]
  pid amps from err { kp = 0.3 [A/rpm], ki = 2 [A/(rpm*s)], kd = 0.002 [A*s/rpm], rolloff = 200 [rad/s], antiwindup = 0.05 [s] }
}
${driver('Speed', '  signal e = 80 [rpm] * sin(2 * pi * 0.8 [1/s] * t) + step(0.5 [s], 60 [rpm])\n  e -> Speed.err')}`;
    const sampled = continuous.replace('antiwindup = 0.05 [s] }', 'antiwindup = 0.05 [s] }\n  sample every 10 [ms]');
    for (const method of ['tustin', 'hold', 'forward'] as const) {
      const refText = sampled.replace('sample every 10 [ms]', `sample every 10 [ms] by ${method}`);
      const { worst, ref } = agree(continuous, 'Speed', 250, { period: 0.01, method }, refText);
      expect(ref.outputs.some((r) => Math.abs(r[0]) === 20)).toBe(true);
      expect(worst).toBeLessThan(TOL);
    }
  });

  it('refuses a continuous controller without a period, and a plant', () => {
    const text = `controller C { input e [1]\n output y [1]\n y / e = 2 }\nplant P { state x [1]\n input u [1/s]\n output y [1] = x\n x' = u - x * 1 [1/s] }`;
    const a = exportController(text, { controller: 'C', lang: 'c' });
    expect(a.ok).toBe(false);
    if (!a.ok) expect(a.message).toMatch(/continuous: give --period/);
    const b = exportController(text, { controller: 'P', lang: 'c' });
    expect(b.ok).toBe(false);
    if (!b.ok) expect(b.message).toMatch(/is a plant/);
    const c = exportController(text, { controller: 'Nope', lang: 'c' });
    if (!c.ok) expect(c.message).toMatch(/no controller named 'Nope' \(controllers: C\)/);
    expect(c.ok).toBe(false);
  });

  it('the generated file also compiles with -Wextra -pedantic and has no library but math.h', () => {
    const r = exportController(PI('tustin'), { controller: 'Level', lang: 'c' });
    if (!r.ok) throw new Error(r.message);
    compileOnly(r.code, 'level_pedantic', ['-Wextra', '-pedantic']);
    expect(r.code.match(/#include\s*<[^>]+>/g)).toEqual(['#include <math.h>']);
    expect(r.code).not.toMatch(/malloc|calloc|free\(|printf|static double \w+\[/);
    // the header names the period and the units at the interface
    expect(r.code).toContain('Sample period: 0.02 s');
    expect(r.code).toMatch(/double err; \/\* err in \[mm\] \*\//);
    expect(r.code).toMatch(/double valve; \/\* valve in \[%\] \*\//);
    expect(r.code).toMatch(/not a\s*\n \* validation of the machine/);
  });
});
