// Limits at breakpoints and in sampled controllers, metrics in display units, and the recovery
// rule of LANGUAGE.md §4.3 with the decision of docs/language.md for states that start at the
// operating point. Numbers checked here are derived in the comments (exact for the first-order
// lag and the linear ramp) or cross-checked against the run's own grid by an independent
// quadrature.

import { describe, expect, it } from 'vitest';
import { analyze } from '../../language/src/analysis';
import { linearRunner } from '../../language/src/linear/linear-run';
import { compileAnalysis } from '../../language/src/model/compile';
import { recoveryBand, recovers } from '../../language/src/sim/metrics';
import { simulate } from '../../language/src/sim/run';
import { compile } from './helpers';

// A fast current loop on a motor winding behind a ±48 V supply: a 50 A step of the reference
// asks for 2 V/A · 50 A = 100 V + the integral at the step edge, far outside the limit. The
// grid (11 points over 1 s) has a point exactly on the edge at 0.2 s.
const cascade = (points: number) => `
plant Coil { param r = 0.5 [ohm]
  param l = 2 [mH]
  state i [A]
  input v [V]
  output amps [A] = i
  limit v within -48 [V] .. 48 [V]
  i' = (v - r*i) / l }
controller Pi { input err [A]
  output v [V]
  limit v within -48 [V] .. 48 [V]
  pid v from err { kp = 2 [V/A], ki = 500 [V/(A*s)], antiwindup = 2 [ms] } }
loop Edge {
  signal target = 10 [A] + step(0.2 [s], 50 [A])
  target - Coil.amps -> Pi.err
  Pi.v -> Coil.v
  start Coil.i = 10 [A]
  simulate 1 [s] { points = ${points} }
  show Coil.amps, Coil.v, Pi.v
  expect peak(Pi.v) <= 48 [V]
}`;

describe('limits at signal breakpoints', () => {
  for (const points of [11, 1000, 1001]) {
    it(`a limited signal never leaves its limit, shown or measured (${points} points)`, () => {
      const c = compile(cascade(points));
      const [run] = simulate(c);
      expect(run.error).toBeUndefined();
      const tol = 48 * (1 + 1e-9);
      for (const name of ['Coil.v', 'Pi.v']) {
        for (const v of run.signals[name]) expect(Math.abs(v)).toBeLessThanOrEqual(tol);
        expect(run.metrics[name].peak).toBeLessThanOrEqual(tol);
        // the step drives it to the limit at once, for a while
        expect(run.metrics[name].peak).toBeGreaterThan(48 * (1 - 1e-9));
      }
      // the controller's limit holds from the edge (the plant's own limit then never acts)
      expect(run.atLimit['Pi.v'].length).toBeGreaterThan(0);
      expect(run.atLimit['Pi.v'][0][0]).toBeCloseTo(0.2, 12);
      expect(run.expects[0].pass).toBe(true);
      // the grid point on the edge shows the values after it (right-continuous): at the limit
      if (points === 11) expect(run.signals['Pi.v'][2]).toBeCloseTo(48, 9);
    });
  }
});

describe('time at a limit inside a sampled controller', () => {
  // A proportional controller sampled every 0.5 s drives an integrator y' = u toward 10 from 0:
  // u = clamp(2·(9 − y[k]), −4, 4), held. While 2·(9 − y) > 4 (y < 7) the held value is 4, so
  // y = 4t and y[k] < 7 for the instants t = 0, 0.5, 1, 1.5 (y = 0, 2, 4, 6); at t = 2, y = 8 and
  // u = 2 inside the limit. The clamp is active on [0, 2): 2 s of 10 s.
  const text = `
plant Tank { state y [1]
  input u [1/s]
  output level [1] = y
  y' = u }
controller P { input err [1]
  output u [1/s]
  limit u within -4 [1/s] .. 4 [1/s]
  u / err = 2 [1/s]
  sample every 0.5 [s] by hold }
loop Fill { signal target = 9
  target - Tank.level -> P.err
  P.u -> Tank.u
  simulate 10 [s] { points = 21 }
  show Tank.level, P.u
  expect saturated(P.u) < 0.25 }`;
  it('counts the intervals between the sample instants where the held value is clamped', () => {
    const [run] = simulate(compile(text));
    expect(run.error).toBeUndefined();
    expect(run.atLimit['P.u']).toEqual([[0, 2]]);
    expect(run.metrics['P.u'].timeAtLimit).toBeCloseTo(0.2, 12);
    expect(run.expects[0].measured).toBeCloseTo(0.2, 12);
    // y at 2 s is 8 exactly (a ramp of slope 4)
    expect(run.signals['Tank.level'][4]).toBeCloseTo(8, 9);
  });
});

// The lab oven of samples/oven.loop, continuous here so the run is quick: 3 kJ/K, 3 W/K losses
// to 22 degC ambient, a PI heater limited to 0 .. 1.2 kW, 22 degC to a 180 degC set point.
const oven = (extra = '') => `
plant Oven { param capacity = 3 [kJ/K]
  param loss = 3 [W/K]
  param ambient = 22 [degC]
  state temp [degC] = 22 [degC]
  input heat [W]
  output seen [degC] = temp
  limit heat within 0 [W] .. 1.2 [kW]
  temp' = (heat - loss * (temp - ambient)) / capacity
  operating point hot { temp = 180 [degC], heat = 474 [W] } }
controller Heater { input err [K]
  output heat [W]
  limit heat within 0 [W] .. 1.2 [kW]
  pid heat from err { kp = 60 [W/K], ki = 0.25 [W/(K*s)], antiwindup = 40 [s] } }
loop Bake { signal setpoint = 180 [degC]
  setpoint - Oven.seen -> Heater.err
  Heater.heat -> Oven.heat
  start Oven.temp = 22 [degC]
  simulate 3600 [s] { points = 3601 }
  show Oven.seen, Oven.heat
  ${extra} }`;

/** ∫|y| dt by the trapezoid rule on the run's grid (independent of the driver's quadrature). */
const trapezoidAbs = (t: number[], y: number[]) => {
  let s = 0;
  for (let i = 1; i < t.length; i++) s += ((t[i] - t[i - 1]) * (Math.abs(y[i]) + Math.abs(y[i - 1]))) / 2;
  return s;
};

describe('metrics in the declared unit of an offset unit (degC)', () => {
  it('peak, initial, final and IAE are taken in degC', () => {
    const [run] = simulate(compile(oven()));
    expect(run.error).toBeUndefined();
    const m = run.metrics['Oven.seen'];
    const y = run.signals['Oven.seen'];
    expect(m.initial).toBeCloseTo(22, 9);
    expect(Math.abs(m.final - 180)).toBeLessThan(0.05);
    // largest |y| in degC: the largest shown value (it never goes below 0 degC)
    expect(m.peak).toBeCloseTo(Math.max(...y), 6);
    expect(m.peak).toBeLessThan(200);
    // IAE of a degC signal: ∫|y| in degC·s
    const ref = trapezoidAbs(run.t, y);
    expect(Math.abs(m.iae - ref) / ref).toBeLessThan(1e-4);
    // overshoot and settling do not depend on the offset: compare with the same run in K
    const kelvin = run.signals['Oven.seen'].map((v) => v + 273.15);
    const overshootK = Math.max(0, ...kelvin.map((v) => v - (m.final + 273.15))) / (m.final - m.initial);
    expect(m.overshoot!).toBeCloseTo(overshootK, 6);
  });

  it('expects measure peak, final, absolute settling bands and IAE in the right units', () => {
    const [run] = simulate(compile(oven(`
  expect peak(Oven.seen) < 185 [degC]
  expect peak(Oven.seen) > 175 [degC]
  expect final(Oven.seen) > 179 [degC]
  expect settling(Oven.seen, 2 [K]) < 3600 [s]
  expect settling(Oven.seen, 2 [degC]) < 3600 [s]
  expect settling(Oven.seen, 2 [%]) < 3600 [s]`)));
    const byText = Object.fromEntries(run.expects.map((e) => [e.text, e]));
    expect(byText['expect peak(Oven.seen) < 185 [degC]'].pass).toBe(true);
    expect(byText['expect peak(Oven.seen) > 175 [degC]'].pass).toBe(true);
    expect(byText['expect peak(Oven.seen) < 185 [degC]'].measured).toBeCloseTo(run.metrics['Oven.seen'].peak, 6);
    expect(byText['expect final(Oven.seen) > 179 [degC]'].pass).toBe(true);
    // a band written in degC is a width: the same as in K
    const k = byText['expect settling(Oven.seen, 2 [K]) < 3600 [s]'];
    const c = byText['expect settling(Oven.seen, 2 [degC]) < 3600 [s]'];
    expect(k.error).toBeUndefined();
    expect(c.measured).toBeCloseTo(k.measured!, 9);
    expect(k.measured!).toBeGreaterThan(300);
    // 2 % of Δ = 158 K is 3.16 K, wider than 2 K: settles earlier
    expect(byText['expect settling(Oven.seen, 2 [%]) < 3600 [s]'].measured!).toBeLessThan(k.measured!);
  });
});

const boomText = (tilt: number) => `
plant Boom { param arm = 0.6 [m]
  param load = 0.9 [kg]
  param drag = 0.02 [N*m*s/rad]
  param g = 9.80665 [m/s^2]
  let inertia = load * arm^2
  state tilt [rad]
  state rate [rad/s]
  input drive [N*m]
  output seen [rad] = tilt
  limit drive within -4 [N*m] .. 4 [N*m]
  tilt' = rate
  rate' = (g/arm)*sin(tilt) - drag/inertia*rate + drive/inertia
  operating point upright { tilt = 0 [rad], rate = 0 [rad/s], drive = 0 [N*m] } }
controller Steady { param kp = 14 [N*m/rad]
  param kd = 2.2 [N*m*s/rad]
  param wf = 25 [rad/s]
  input err [rad]
  output drive [N*m]
  drive / err = kp + kd*s/(1 + s/wf) }
loop Upright { signal target = 0 [rad]
  target - Boom.seen -> Steady.err
  Boom.upright.drive + Steady.drive -> Boom.drive
  around Boom.upright
  start Boom.tilt = ${tilt} [rad]
  simulate 8 [s]
  compare linear }`;

describe('recovery of a run whose states start at the operating point', () => {
  const runs = (tilt: number) => {
    const a = analyze(boomText(tilt));
    const c = compileAnalysis(a).loop!;
    return simulate(c, { linear: linearRunner(a) });
  };
  it('the boom from 0.5 rad recovers (its rate starts at 0), nonlinear and linear', () => {
    const [nl, lin] = runs(0.5);
    expect(nl.error).toBeUndefined();
    expect(nl.recovered).toBe(true);
    expect(lin.kind).toBe('linear');
    expect(lin.recovered).toBe(true);
  });
  it('the boom from 1.1 rad falls over (the 4 N·m limit cannot hold it) and does not recover', () => {
    const [nl] = runs(1.1);
    expect(nl.error).toBeUndefined();
    expect(nl.recovered).toBe(false);
  });
  it('the band: 2 % of the initial distance, else 2 % of the largest distance, at least abstol', () => {
    expect(recoveryBand(0.5, 0.5, 1e-9)).toBeCloseTo(0.01, 15);
    expect(recoveryBand(0, 2, 1e-9)).toBeCloseTo(0.04, 15);
    expect(recoveryBand(0, 0, 1e-9)).toBe(1e-9);
    expect(recovers([0.5, 0], [0.5, 2], [0.009, 0.039], 1e-9)).toBe(true);
    expect(recovers([0.5, 0], [0.5, 2], [0.009, 0.041], 1e-9)).toBe(false);
    expect(recovers([0], [0], [2e-9], 1e-9)).toBe(false);
  });
});

describe('a signal shown twice under two names', () => {
  // Boom.seen is Boom.tilt (the output equation is the state itself): the run keeps one row of
  // samples for both, and both must still come out as the same samples, metrics and expects.
  const twin = `plant Arm { param g = 9.80665 [m/s^2]
  param len = 0.5 [m]
  state tilt [rad]
  state rate [rad/s]
  input torque [N*m]
  output seen [rad] = tilt
  tilt' = rate
  rate' = -g/len*sin(tilt) - 0.4 [1/s]*rate + torque / (0.2 [kg*m^2]) }
loop Swing {
  0 [N*m] -> Arm.torque
  start Arm.tilt = 0.4 [rad]
  simulate 10 [s] { points = 201 }
  show Arm.tilt, Arm.seen, Arm.rate
  expect settling(Arm.seen, 5 [%]) < 20 [s]
  expect settling(Arm.tilt, 5 [%]) < 20 [s]
}`;
  it('gives the twin the same samples, metrics and measured expect values', () => {
    const run = simulate(compile(twin))[0];
    expect(run.error).toBeUndefined();
    expect(run.signals['Arm.seen']).toEqual(run.signals['Arm.tilt']);
    expect(run.metrics['Arm.seen']).toEqual(run.metrics['Arm.tilt']);
    expect(run.expects.map((e) => e.measured)).toEqual([run.expects[1].measured, run.expects[0].measured]);
    expect(run.expects.every((e) => e.pass)).toBe(true);
    // and the rate, a signal of its own, is not the tilt
    expect(run.signals['Arm.rate']).not.toEqual(run.signals['Arm.tilt']);
  });
});
