// Sweeps on worker threads give the same runs as in-process sweeps (same compiled code, same
// integrator: the results must agree to the last bit).

import { describe, expect, it } from 'vitest';
import { build } from 'esbuild';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runPool } from '../../language/src/sim/pool';
import { simulate } from '../../language/src/sim/run';
import { runSpec, sweepJobs } from '../../language/src/sim/sweep';
import { compile, sample } from './helpers';

describe('run pool', () => {
  it('two workers reproduce the sweep of the boom loop', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'loopwright-pool-'));
    const workerPath = join(dir, 'pool-worker.js');
    await build({ entryPoints: [join(__dirname, '..', '..', 'language', 'src', 'sim', 'pool-worker.ts')], bundle: true, platform: 'node', format: 'cjs', outfile: workerPath, logLevel: 'warning' });
    const text = sample('boom.loop');
    const c = compile(text);
    const local = simulate(c, { mode: 'sweep' }).filter((r) => r.kind === 'sweep');
    const jobs = sweepJobs(runSpec(c));
    expect(jobs).toHaveLength(4);
    const pooled = await runPool({ text, jobs, threads: 2, workerPath });
    expect(pooled.map((r) => r.label)).toEqual(local.map((r) => r.label));
    pooled.forEach((r, i) => {
      expect(r.signals['Boom.tilt']).toEqual(local[i].signals['Boom.tilt']);
      expect(r.metrics).toEqual(local[i].metrics);
    });
  }, 60000);
});
