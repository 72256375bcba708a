// The run facade (language/src/runs.ts): controller states start at the closed-loop operating
// point, so a loop started at its operating point stays there (an equilibrium does not move:
// the definition of an equilibrium); reports carry poles and knobs.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { analyze } from '../../language/src/analysis';
import { compileAnalysis } from '../../language/src/model/compile';
import { runLoop } from '../../language/src/runs';

const tank = readFileSync('samples/tank.loop', 'utf8');

describe('runs through the facade', () => {
  it('a loop started at its operating point stays there until its reference moves', () => {
    const text = tank.replace('start Tank.level = 1.0 [m]', 'start Tank.level = 1.2 [m]');
    const out = runLoop(analyze(text), 'Hold', { mode: 'simulate' });
    expect(out.reason).toBeUndefined();
    const run = out.runs[0];
    expect(run.error).toBeUndefined();
    const level = run.signals['Tank.level'];
    const valve = run.signals['Tank.valve'];
    const before = run.t.map((t, i) => [t, i] as const).filter(([t]) => t < 20);
    expect(before.length).toBeGreaterThan(10);
    // the PI integrator holds the trimmed opening from the first instant: no bump, no drift
    for (const [, i] of before) {
      expect(Math.abs(level[i] - 1.2)).toBeLessThan(1e-6);
      expect(Math.abs(valve[i] - valve[0])).toBeLessThan(1e-4);
    }
    // and the reference step at 20 s does move it (the check above is not vacuous)
    expect(level[level.length - 1]).toBeGreaterThan(1.25);
  });

  it('without the seeding the same start would not be at rest (the integrator starts empty)', () => {
    const text = tank.replace('start Tank.level = 1.0 [m]', 'start Tank.level = 1.2 [m]');
    const a = analyze(text);
    const c = compileAnalysis(a, 'Hold').loop!;
    const hidden = c.states.findIndex((s) => s.qualified.startsWith('Fill.'));
    expect(hidden).toBeGreaterThanOrEqual(0);
    expect(c.start[hidden]).toBe(0);
    const seeded = runLoop(a, 'Hold', { mode: 'simulate' }).compiled!;
    expect(seeded.start[hidden]).not.toBe(0);
  });

  it('reports carry closed-loop and plant poles and the literal params as knobs', () => {
    const out = runLoop(analyze(tank), 'Hold', { mode: 'simulate', file: 'tank.loop' });
    const r = out.report!;
    expect(r.file).toBe('tank.loop');
    expect(r.poles!.closed.length).toBe(out.compiled!.n);
    expect(r.poles!.open.length).toBe(1);
    // one plant state: its open-loop pole is real and stable (the orifice drains the tank)
    expect(r.poles!.open[0].im).toBe(0);
    expect(r.poles!.open[0].re).toBeLessThan(0);
    const area = r.params!.find((p) => p.name === 'Tank.area')!;
    expect(tank.slice(area.span.start, area.span.end)).toBe('0.8 [m^2]');
    expect(area.text).toBe('0.8');
    expect(area.value).toBeCloseTo(0.8, 12);
    expect(area.unit).toBe('m^2');
  });

  it('compare linear adds the linear run right after the nonlinear one', () => {
    const out = runLoop(analyze(tank), 'Hold', {});
    expect(out.runs.map((r) => r.kind).slice(0, 2)).toEqual(['nonlinear', 'linear']);
    expect(out.runs[1].label).toBe('linear');
  });
});
