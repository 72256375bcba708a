// Loop signals are shown in the unit of their value, as the unit checker infers it: a step of
// 5 [deg] at 1 [s] is in deg, not in the s of its time argument; a ramp of rpm/s over seconds is
// in rpm. The conversion factors are the SI ones (1 deg = π/180 rad, ISO 80000-3; 1 rpm =
// 2π/60 rad/s, common practice), so a shown value is the literal as written.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { analyze } from '../../language/src/analysis';
import { compileAnalysis } from '../../language/src/model/compile';
import { linearizeLoop } from '../../language/src/linear/linearize';
import { runLoop } from '../../language/src/runs';

const boom = readFileSync('samples/boom.loop', 'utf8');
const withSignal = (value: string) => {
  const t = boom.replace('signal target = 0 [rad]', `signal target = ${value}`).replace('  show Boom.tilt, Boom.rate, Boom.drive', '  show Boom.tilt, Boom.rate, Boom.drive, target');
  expect(t).toContain(`signal target = ${value}`);
  expect(t).toContain('show Boom.tilt, Boom.rate, Boom.drive, target');
  return t;
};

describe('the unit a loop signal is shown in', () => {
  it('a step in degrees is shown in deg with the value as written, not in the unit of its time', () => {
    const a = analyze(withSignal('step(1 [s], 5 [deg])'));
    const c = compileAnalysis(a, 'Upright').loop!;
    const tr = c.traced.find((s) => s.name === 'target')!;
    expect(tr.unit).toBe('deg');
    expect(tr.scale).toBeCloseTo(Math.PI / 180, 15);
    const run = runLoop(a, 'Upright', { mode: 'simulate' }).runs[0];
    const v = run.signals['target'];
    expect(v[0]).toBe(0);
    expect(v[v.length - 1]).toBeCloseTo(5, 12);
    // the linearization labels its input the same way and scales B per degree
    const lin = linearizeLoop(a, 'Upright');
    expect(lin.inputs.map((i) => `${i.name} [${i.unit}]`)).toEqual(['target [deg]']);
  });

  it('a pulse is in the unit of its height, a ramp difference in the unit its slope integrates to', () => {
    const p = runLoop(analyze(withSignal('pulse(1 [s], 0.5 [s], 0.2 [rad])')), 'Upright', { mode: 'simulate' });
    expect(p.compiled!.traced.find((s) => s.name === 'target')!.unit).toBe('rad');
    expect(Math.max(...p.runs[0].signals['target'])).toBeCloseTo(0.2, 12);
    // 1500 rpm/s for 2 s: a plateau at 3000 rpm
    const fan = analyze(readFileSync('samples/units/electrical.loop', 'utf8').replace('  show Fan.speed, Fan.current, Fan.volts', '  show Fan.speed, Fan.current, Fan.volts, want'));
    const r = runLoop(fan, 'SpinUp', { mode: 'simulate' });
    const want = r.compiled!.traced.find((s) => s.name === 'want')!;
    expect(want.unit).toBe('rpm');
    expect(want.scale).toBeCloseTo((2 * Math.PI) / 60, 15);
    const w = r.runs[0].signals['want'];
    expect(w[w.length - 1]).toBeCloseTo(3000, 9);
  });
});
