// `loopwright sweep`: the table, JSON, failures, the progress bar, and the recovery-limit search.
//
// The limit is checked on a balancing arm (test/cli/fixtures/arm.loop): a point mass m on a rod
// of length l, hinged below, held upright through a motor limited to τmax. Started at rest at an
// angle θ0, gravity pulls with m·g·l·sin θ0 while the saturated motor pushes back with τmax, so
// the arm can be brought back exactly when m·g·l·sin θ0 < τmax [derived from the equation of
// motion: at rest the drag term is zero and the net torque at the start decides]. Beyond that
// angle it falls. The limit is therefore θ* = asin(τmax/(m·g·l)) = asin(3/(1.2·9.80665·0.5))
// = 0.53502 rad, approached from below as the runs grow longer (30 s here).

import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { Progress } from '../../language/src/cli/progress';
import { cli, fakeIO } from './fake-io';

const ARM = readFileSync('test/cli/fixtures/arm.loop', 'utf8');
const files = { 'arm.loop': ARM };
const THETA_STAR = Math.asin(3 / (1.2 * 9.80665 * 0.5));

describe('loopwright sweep', () => {
  it('prints one aligned row per swept value with recovery and metrics, exit 1 on a failed expect', async () => {
    const r = await cli(['sweep', 'arm.loop'], files);
    expect(r.code).toBe(1);
    const lines = r.out.split('\n');
    expect(lines[0]).toBe('Balance: 3 runs of the sweep');
    expect(lines[1]).toMatch(/^Arm\.angle \[rad\]\s+recovered\s+Arm\.angle final \[rad\]\s+overshoot \[%\]\s+settling \[s\]\s+expects\s+steps$/);
    const rows = lines.slice(3, 6);
    expect(rows[0]).toMatch(/^\s+0\.2\s+✓\s/);
    expect(rows[1]).toMatch(/^\s+0\.4\s+✓\s/);
    expect(rows[2]).toMatch(/^\s+0\.7\s+✗\s/); // beyond θ* the arm falls over
    expect(rows[2]).toContain('0/1 ✗');
    // columns line up: every row as wide as the rule under the header
    const width = lines[2].length;
    for (const row of rows) expect(row.length).toBeLessThanOrEqual(width);
    expect(lines.some((l) => l.startsWith('Arm.angle = 0.7 [rad]: FAIL expect settling'))).toBe(true);
    expect(r.err).toBe(''); // no progress bar when not on a terminal
  });

  it('gives stable JSON for scripts', async () => {
    const r = await cli(['sweep', 'arm.loop', '--json'], files);
    expect(r.code).toBe(1);
    const j = JSON.parse(r.out);
    expect(Object.keys(j)).toEqual(['loop', 'file', 'runs', 'failed']);
    expect(j.loop).toBe('Balance');
    expect(j.failed).toBe(true);
    expect(j.runs.map((x: { value: number }) => x.value)).toEqual([0.2, 0.4, 0.7]);
    expect(j.runs.map((x: { recovered: boolean }) => x.recovered)).toEqual([true, true, false]);
    const first = j.runs[0];
    expect(Object.keys(first)).toEqual(['label', 'target', 'value', 'unit', 'text', 'recovered', 'expects', 'steps', 'signal', 'final', 'overshoot', 'settling', 'peak']);
    expect(first).toMatchObject({ label: 'Arm.angle = 0.2 [rad]', target: 'Arm.angle', unit: 'rad', text: '0.2 [rad]', signal: 'Arm.angle' });
    expect(first.expects[0]).toMatchObject({ text: 'expect settling(Arm.seen, 2 [%]) < 5 [s]', pass: true });
    expect(Math.abs(first.final)).toBeLessThan(1e-6);
  });

  it('draws a progress bar on a terminal only', async () => {
    const tty = await cli(['sweep', 'arm.loop'], files, true);
    expect(tty.io.stderr.length).toBeGreaterThan(0);
    expect(tty.io.stderr.at(-1)).toMatch(/^(\x1b\[1A\x1b\[2K)?sweep Balance \[█{30}\] 3\/3 {2}\d+\.\d s {2}done( on \d+ threads)?$/);
    const bar = new Progress(fakeIO({}, true), 'x', 4, { width: 8, now: () => 0 });
    expect(bar.line(2)).toBe('x [████░░░░] 2/4  0.0 s');
    const quiet = fakeIO({}, false);
    const off = new Progress(quiet, 'x', 4);
    off.update(1);
    off.finish(4);
    expect(quiet.stderr).toEqual([]);
  });

  it('finds the largest start angle the arm recovers from: asin(τmax/(m·g·l))', async () => {
    const r = await cli(['sweep', 'arm.loop', '--limit', '--resolution', '1e-4', '--json'], files);
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.status).toBe('found');
    expect(j.unit).toBe('rad');
    expect(j.fails - j.limit).toBeLessThanOrEqual(1e-4);
    // the bracket holds θ*, up to the slow escape near it within a finite run
    expect(j.limit).toBeLessThanOrEqual(THETA_STAR + 1e-6);
    expect(j.fails).toBeGreaterThanOrEqual(THETA_STAR - 1e-6);
    expect(Math.abs(j.limit - THETA_STAR)).toBeLessThan(2e-4);
    expect(j.runs).toBe(j.tried.length);
    const human = await cli(['sweep', 'arm.loop', '--limit', '--resolution', '0.0001 [rad]'], files);
    expect(human.code).toBe(0);
    expect(human.out).toMatch(new RegExp(`^Balance: recovers from Arm\\.angle up to 0\\.53\\d+ \\[rad\\] \\(not from 0\\.535\\d* \\[rad\\]\\); resolution 1\\.00e-4 \\[rad\\], ${j.runs} runs`));
  });

  it('reports when every value up to --max recovers, and takes --max and --resolution in other units', async () => {
    const r = await cli(['sweep', 'arm.loop', '--limit', '--max', '20 [deg]', '--json'], files);
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.status).toBe('all-recover');
    expect(j.limit).toBeCloseTo((20 * Math.PI) / 180, 12);
    expect(j.runs).toBe(1);
    const d = await cli(['sweep', 'arm.loop', '--limit', '--resolution', '0.5deg', '--json'], files);
    const k = JSON.parse(d.out);
    expect(k.resolution).toBeCloseTo((0.5 * Math.PI) / 180, 12);
    expect(Math.abs(k.limit - THETA_STAR)).toBeLessThan((0.5 * Math.PI) / 180);
  });

  it('refuses what it cannot do with one clear line', async () => {
    const noSweep = ARM.replace(/^ {2}sweep start.*$/m, '');
    const cases: Array<[string[], RegExp, number]> = [
      [['sweep', 'arm.loop', '--bogus'], /^loopwright sweep: unknown option --bogus \(see 'loopwright sweep --help'\)$/, 2],
      [['sweep', 'missing.loop'], /^loopwright sweep: cannot read missing\.loop: no such file$/, 2],
      [['sweep'], /^loopwright sweep: no file given/, 2],
      [['sweep', 'arm.loop', '--threads', 'zero'], /--threads must be a whole number/, 2],
      [['sweep', 'arm.loop', '--max', '1'], /--resolution and --max go with --limit/, 2],
      [['sweep', 'arm.loop', '--limit', '--max', '3 [m]'], /--max '3 \[m\]' is not in a unit of rad/, 2],
      [['sweep', 'arm.loop', '--loop', 'Other'], /has no loop named 'Other' \(it has Balance\)/, 2],
      [['sweep', 'nosweep.loop'], /loop 'Balance' has no sweep member/, 2],
    ];
    for (const [argv, re, code] of cases) {
      const r = await cli(argv, { ...files, 'nosweep.loop': noSweep });
      expect(r.code, argv.join(' ')).toBe(code);
      expect(r.io.stderr, argv.join(' ')).toHaveLength(1);
      expect(r.err, argv.join(' ')).toMatch(re);
      expect(r.out).toBe('');
    }
  });

  it('sweeps a sample: the oven recovers from every start and keeps its expects', async () => {
    const r = await cli(['sweep', 'samples/oven.loop', '--json']);
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.runs.map((x: { recovered: boolean }) => x.recovered)).toEqual([true, true, true]);
    expect(j.runs.every((x: { expects: Array<{ pass: boolean }> }) => x.expects.every((e) => e.pass))).toBe(true);
  });
});

describe('where the runs happen', () => {
  it('worker threads and this process give the same runs', async () => {
    const { analyze } = await import('../../language/src/analysis');
    const { compileAnalysis } = await import('../../language/src/model/compile');
    const { runSpec } = await import('../../language/src/sim/sweep');
    const { executeRuns, sweepJobs } = await import('../../language/src/cli/sweep-runs');
    const { execFileSync } = await import('node:child_process');
    execFileSync('node', ['scripts/build.mjs'], { stdio: 'pipe' }); // dist/pool-worker.js
    const c = compileAnalysis(analyze(ARM)).loop!;
    const spec = runSpec(c);
    const jobs = sweepJobs(spec.sweeps);
    const pooled = executeRuns(ARM, c, spec, { threads: 2, workerPath: 'dist/pool-worker.js' });
    const here = executeRuns(ARM, c, spec, { mode: 'in-process' });
    expect(pooled.mode).toBe('threads');
    expect(here.mode).toBe('in-process');
    const seen: number[] = [];
    const a = await pooled.run(jobs, (n) => seen.push(n));
    const b = await here.run(jobs);
    expect(seen.at(-1)).toBe(3);
    expect(a.map((r) => r.label)).toEqual(b.map((r) => r.label));
    for (let i = 0; i < a.length; i++) {
      expect(a[i].recovered).toBe(b[i].recovered);
      expect(a[i].signals['Arm.angle']).toEqual(b[i].signals['Arm.angle']);
    }
  }, 60_000);
});
