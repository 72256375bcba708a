// The samples of this part of the project: each checks clean and keeps its expects; the stiff
// one fails with an explicit integrator and passes with method = stiff; the tour of mistakes
// shows its three mistakes, in the order the header describes.

import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { analyze } from '../../language/src/analysis';
import { compileAnalysis } from '../../language/src/model/compile';
import { simulate } from '../../language/src/sim/run';
import { cli } from './fake-io';

const read = (p: string) => readFileSync(p, 'utf8');

describe('samples', () => {
  for (const file of ['samples/oven.loop', 'samples/reel.loop', 'samples/stiff.loop']) {
    it(`${file} checks clean and every expect of its nonlinear run holds`, async () => {
      const r = await cli(['check', file]);
      expect(r.code).toBe(0);
      expect(r.out).toBe('');
      const c = compileAnalysis(analyze(read(file))).loop!;
      const [run] = simulate(c, { mode: 'simulate' });
      expect(run.error).toBeUndefined();
      expect(run.expects.length).toBeGreaterThan(0);
      for (const e of run.expects) expect(e.pass, `${e.text}: ${e.measuredText}`).toBe(true);
      expect(run.recovered).toBe(true);
    }, 60_000);
  }

  it('check reports a loop unstable about its operating point (LW604) as the editor does, and exits 0 on the warning', async () => {
    // the boom with a proportional gain below what holds the arm up: its closed loop has a pole
    // right of the axis (test/linear/stability.test.ts checks the pole itself)
    const weak = read('samples/boom.loop').replace(/param kp = 14 \[N\*m\/rad\]/, 'param kp = 3 [N*m/rad]');
    expect(weak).toContain('param kp = 3 [N*m/rad]');
    const r = await cli(['check', '--json', 'weak.loop'], { 'weak.loop': weak });
    expect(r.code).toBe(0);
    const ds = JSON.parse(r.out) as { code: string; severity: string; line: number; message: string }[];
    expect(ds.map((d) => d.code)).toEqual(['LW604']);
    expect(ds[0].severity).toBe('warning');
    expect(ds[0].message).toMatch(/is unstable: a pole right of the imaginary axis/);
    expect(weak.split('\n')[ds[0].line - 1]).toMatch(/^\s*around /);
    // a file with an error elsewhere is not judged (the editor does the same)
    const broken = await cli(['check', '--json', 'weak.loop'], { 'weak.loop': weak.replace('param kd =', 'param kd = nope +') });
    expect(JSON.parse(broken.out).map((d: { code: string }) => d.code)).not.toContain('LW604');
  });

  it('the stiff sample needs method = stiff: the explicit method runs out of steps', () => {
    const c = compileAnalysis(analyze(read('samples/stiff.loop'))).loop!;
    const [run] = simulate(c, { mode: 'simulate', method: 'adaptive' });
    expect(run.error?.code).toBe('LW703');
    expect(run.error?.message).toMatch(/looks stiff/);
  }, 60_000);

  it('the tour shows a unit error, an unwired input and the algebraic loop at once', async () => {
    const text = read('samples/tour/mistakes.loop');
    const first = await cli(['check', '--json', 'mistakes.loop'], { 'mistakes.loop': text });
    expect(first.code).toBe(1);
    expect(JSON.parse(first.out).map((d: { code: string }) => d.code)).toEqual(['LW302', 'LW402', 'LW404', 'LW404']);
    const fixed12 = text.replace("drag * v')", 'drag * v)').replace('  Belt.force -> Conveyor.force', '  Belt.force -> Conveyor.force\n  Conveyor.cruising.force -> Belt.ff');
    const a = analyze(fixed12);
    expect(a.diagnostics.filter((d) => d.severity === 'error').map((d) => d.code)).toEqual(['LW404', 'LW404']);
    expect(compileAnalysis(a).loop).toBeUndefined();
    const fixed = fixed12.replace('Belt.force / 80 [N*s/m] -> Sensor.raw', 'Conveyor.speed -> Sensor.raw');
    const b = analyze(fixed);
    expect(b.diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
    expect(compileAnalysis(b).loop).toBeDefined();
  });
});
