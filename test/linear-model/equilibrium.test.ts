// Operating points: the equilibrium warning LW601 with its trim quick fix, LW602 at a limit, and
// trim itself against Torricelli's law.

import { describe, expect, test } from 'vitest';
import { analyze } from '../../language/src/analysis';
import type { TextEdit } from '../../language/src/diagnostics';
import { checkOperatingPoints } from '../../language/src/linear/equilibrium';
import { systemModel } from '../../language/src/linear/model-system';
import { trim } from '../../language/src/linear/trim';
import { sample } from './helpers';

const apply = (text: string, edits: TextEdit[]): string =>
  [...edits].sort((a, b) => b.span.start - a.span.start).reduce((t, e) => t.slice(0, e.span.start) + e.newText + t.slice(e.span.end), text);

const tank = sample('tank.loop');
const wrong = tank.replace('valve = 36.0943225 [%]', 'valve = 50 [%]');

describe('equilibrium check (LANGUAGE.md §5)', () => {
  test('the samples hold their operating points: no LW601', () => {
    expect(checkOperatingPoints(analyze(tank)).filter((d) => d.code === 'LW601')).toEqual([]);
    expect(checkOperatingPoints(analyze(sample('boom.loop')))).toEqual([]);
  });

  test('a wrong valve opening is LW601 on the operating point, naming the state and the residual with its unit', () => {
    const ds = checkOperatingPoints(analyze(wrong)).filter((d) => d.code === 'LW601');
    expect(ds).toHaveLength(1);
    const d = ds[0];
    expect(d.severity).toBe('warning');
    expect(wrong.slice(d.span.start, d.span.end)).toMatch(/^operating point half \{[^}]*\}$/);
    // level' = (supply·0.5 − outflow)/area, by hand
    const outflow = 0.62 * 12e-4 * Math.sqrt(2 * 9.80665 * 1.2);
    const r = (0.01 * 0.5 - outflow) / 0.8;
    expect(d.message).toContain(`level' = ${Number(r.toPrecision(4))} [m/s]`);
    expect(d.fixes?.length).toBeGreaterThan(0);
  });

  test('applying the trim fix and re-analysing: no LW601 (and the opening is Torricelli\'s, derived)', () => {
    const d = checkOperatingPoints(analyze(wrong)).find((x) => x.code === 'LW601')!;
    const fix = d.fixes![0];
    expect(fix.preferred).toBe(true);
    const fixed = apply(wrong, fix.edits);
    expect(checkOperatingPoints(analyze(fixed)).filter((x) => x.code === 'LW601')).toEqual([]);
    const m = /valve = ([\d.]+) \[%\]/.exec(fixed.slice(fixed.indexOf('operating point')))!;
    const torricelli = (0.62 * 12e-4 * Math.sqrt(2 * 9.80665 * 1.2)) / 0.01;
    expect(Number(m[1]) / 100).toBeCloseTo(torricelli, 8);
  });

  test('a missing input entry is inserted by the fix, in the input\'s declared unit', () => {
    const text = tank.replace('{ level = 1.2 [m], valve = 36.0943225 [%] }', '{ level = 1.2 [m] }');
    const d = checkOperatingPoints(analyze(text)).find((x) => x.code === 'LW601')!;
    const fixed = apply(text, d.fixes![0].edits);
    expect(fixed).toMatch(/\{ level = 1\.2 \[m\], valve = [\d.]+ \[%\] \}/);
    expect(checkOperatingPoints(analyze(fixed)).filter((x) => x.code === 'LW601')).toEqual([]);
  });

  test('a point no input can hold (the boom moving) is LW601 without a fix', () => {
    const text = sample('boom.loop').replace('rate = 0 [rad/s]', 'rate = 1 [rad/s]');
    const d = checkOperatingPoints(analyze(text)).find((x) => x.code === 'LW601')!;
    expect(d.message).toContain("tilt' = 1 [rad/s]");
    expect(d.message).toContain('no input holds it');
    expect(d.fixes).toBeUndefined();
  });

  test('the boom held off upright needs the torque load·g·arm·sin(tilt) (derived)', () => {
    const text = sample('boom.loop').replace('tilt = 0 [rad]', 'tilt = 0.2 [rad]');
    const d = checkOperatingPoints(analyze(text)).find((x) => x.code === 'LW601')!;
    const fixed = apply(text, d.fixes![0].edits);
    const v = Number(/drive = ([-\d.e]+) \[N\*m\]/.exec(fixed.slice(fixed.indexOf('operating point')))![1]);
    expect(v).toBeCloseTo(-0.9 * 9.80665 * 0.6 * Math.sin(0.2), 8);
  });

  test('a valve at its limit is LW602 on the entry', () => {
    const text = tank.replace('valve = 36.0943225 [%]', 'valve = 100 [%]');
    const d = checkOperatingPoints(analyze(text)).find((x) => x.code === 'LW602')!;
    expect(text.slice(d.span.start, d.span.end)).toBe('100 [%]');
    expect(d.message).toContain('on its limit');
  });

  test('trim with a free state: the level that 50 % holds is (q/(Cd·a))²/(2g) (Torricelli, derived)', () => {
    const a = analyze(tank);
    const model = systemModel(a, a.symbols.systems.get('Tank')!);
    const p = model.points[0];
    const r = trim(model, { x: p.x, u: [0.5] }, { inputs: [], states: ['level'] });
    expect(r.ok).toBe(true);
    const h = (0.005 / (0.62 * 12e-4)) ** 2 / (2 * 9.80665);
    expect(r.x[0]).toBeCloseTo(h, 9);
  });

  test('an input outside its limit is reported, not offered', () => {
    const a = analyze(tank.replace('level = 1.2 [m]', 'level = 30 [m]'));
    const model = systemModel(a, a.symbols.systems.get('Tank')!);
    const r = trim(model, model.points[0]);
    expect(r.ok).toBe(false);
    expect(r.outsideLimits).toEqual(['valve']);
  });
});
