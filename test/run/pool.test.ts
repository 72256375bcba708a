// Sweeps on worker threads give the same runs as in-process sweeps (same compiled code, same
// integrator: the results must agree to the last bit), whatever the number of threads and jobs;
// a pool is reused across calls and loops, cancels, and reports failures with what and where.

import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { build } from 'esbuild';
import fc from 'fast-check';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { analyze } from '../../language/src/analysis';
import type { RunResult } from '../../language/src/protocol';
import { compileForRun } from '../../language/src/runs';
import { createRunPool, plainRun, runJob, runPool, type PoolJob, type PooledRun, type RunPool } from '../../language/src/sim/pool';
import { RunPacker, unpackRuns, type WireBatch } from '../../language/src/sim/pool-wire';
import { simulate } from '../../language/src/sim/run';
import { runSpec, sweepJobs } from '../../language/src/sim/sweep';
import { compile, sample } from './helpers';

const dir = mkdtempSync(join(tmpdir(), 'loopwright-pool-'));
const workerPath = join(dir, 'pool-worker.js');
const boom = sample('boom.loop');

/** Runs compared field by field; only the wall-clock time of a run may differ. */
const same = (r: RunResult) => ({ ...r, stats: { ...r.stats, ms: 0 } });

/** The jobs run here, one after another, as the pool's workers run them. */
function here(text: string, jobs: PoolJob[], loop?: string): RunResult[] {
  const r = compileForRun(analyze(text), loop);
  if (!r.compiled) throw new Error(`does not compile: ${r.reason}`);
  const spec = runSpec(r.compiled);
  return jobs.map((j) => plainRun(runJob(r.compiled!, spec, j)));
}

const tilts = (n: number): PoolJob[] => Array.from({ length: n }, (_, i) => ({ label: `tilt ${i}`, starts: [['Boom.tilt', 0.05 + (0.9 * i) / Math.max(1, n - 1)]] }));

beforeAll(async () => {
  await build({ entryPoints: [join(__dirname, '..', '..', 'language', 'src', 'sim', 'pool-worker.ts')], bundle: true, platform: 'node', format: 'cjs', outfile: workerPath, logLevel: 'warning' });
}, 60000);

describe('run pool', () => {
  it('two workers reproduce the sweep of the boom loop', async () => {
    const c = compile(boom);
    const local = simulate(c, { mode: 'sweep' }).filter((r) => r.kind === 'sweep');
    const jobs = sweepJobs(runSpec(c));
    expect(jobs).toHaveLength(4);
    const pooled = await runPool({ text: boom, jobs, threads: 2, workerPath });
    expect(pooled.map((r) => r.label)).toEqual(local.map((r) => r.label));
    pooled.forEach((r, i) => {
      expect(r.signals['Boom.tilt']).toEqual(local[i].signals['Boom.tilt']);
      expect(r.metrics).toEqual(local[i].metrics);
    });
  }, 60000);

});

describe('runs on the wire', () => {
  /** Packs runs and unpacks them from copies of what would be posted (buffers included). */
  const roundTrip = (packer: RunPacker, runs: RunResult[]): PooledRun[] => unpackRuns(structuredClone(packer.pack(runs).batch));

  it('come back as the same runs, failed ones too, with the samples as views', () => {
    const jobs: PoolJob[] = [...tilts(3), { label: 'kd 0', params: [['Steady.kd', 0]] }, { label: 'no start', starts: [['Boom.tilt', NaN]] }];
    const runs = here(boom, jobs);
    const copy = structuredClone(runs);
    const packer = new RunPacker();
    const { batch } = packer.pack(runs);
    expect(batch.samples).toBe(runs.reduce((s, r) => s + r.t.length + Object.values(r.signals).reduce((a, c) => a + c.length, 0), 0));
    const back = unpackRuns(structuredClone(batch));
    expect(back.every((r) => r.t instanceof Float64Array && Object.values(r.signals).every((v) => v instanceof Float64Array))).toBe(true);
    const plain = back.map(plainRun);
    expect(plain).toStrictEqual(copy);
    expect(plain.map((r) => Object.keys(r))).toEqual(copy.map((r) => Object.keys(r)));
    expect(plain.map((r) => Object.keys(r.metrics[Object.keys(r.metrics)[0]] ?? {}))).toEqual(copy.map((r) => Object.keys(r.metrics[Object.keys(r.metrics)[0]] ?? {})));
    expect(plain.every((r) => Array.isArray(r.t) && Object.values(r.signals).every((v) => Array.isArray(v)))).toBe(true);
    expect(JSON.stringify(plain)).toBe(JSON.stringify(copy));
    // the packer's scratch serves the next batch
    expect(roundTrip(packer, runs.slice(0, 2)).map(plainRun)).toStrictEqual(copy.slice(0, 2));
  });

  it('keep any values as they were', () => {
    const packer = new RunPacker();
    const samples = fc.array(fc.double(), { maxLength: 20 });
    const run = fc.record({
      label: fc.string(),
      t: samples,
      signals: fc.dictionary(fc.string(), samples, { maxKeys: 4 }),
      extra: fc.anything({ maxDepth: 4, withDate: true, withMap: true, withSet: true, withBigInt: true, withTypedArray: true, withNullPrototype: true }),
      odd: fc.constantFrom<unknown>(undefined, null, -0, NaN, Infinity, -Infinity, 'x', true, false, [[[]]], { __proto__: null, a: 1 }),
    });
    fc.assert(
      fc.property(fc.array(run, { maxLength: 5 }), (runs) => {
        const want = structuredClone(runs);
        const got = roundTrip(packer, runs as unknown as RunResult[]).map((r) => plainRun(r));
        expect(got).toStrictEqual(want);
      }),
      { numRuns: 300 },
    );
  });

  it('keep keys named __proto__ as own keys, and deep values', () => {
    const r = JSON.parse('{"label":"p","t":[1],"signals":{"__proto__":[2,3]},"metrics":{"__proto__":{"final":4}}}') as RunResult;
    let deep: unknown = 'bottom';
    for (let i = 0; i < 40; i++) deep = { d: [deep] };
    const got = roundTrip(new RunPacker(), [{ ...r, deep } as unknown as RunResult]).map(plainRun)[0];
    expect(Object.keys(got.signals)).toEqual(['__proto__']);
    expect(Object.getPrototypeOf(got.signals)).toBe(Object.prototype);
    expect(Object.getOwnPropertyDescriptor(got.signals, '__proto__')?.value).toEqual([2, 3]);
    expect(Object.getOwnPropertyDescriptor(got.metrics, '__proto__')?.value).toEqual({ final: 4 });
    expect((got as unknown as { deep: unknown }).deep).toStrictEqual(deep);
  });

  it('are refused with a message when a batch does not hold together', () => {
    const { batch } = new RunPacker().pack(here(boom, tilts(2)));
    const bad = (f: (b: WireBatch) => void) => {
      const b = structuredClone(batch);
      f(b);
      return () => unpackRuns(b);
    };
    expect(bad((b) => (b.nums = b.nums.subarray(0, b.nums.length - 1)))).toThrow(/run pool: a batch has fewer numbers than its values/);
    expect(bad((b) => (b.data = b.data.subarray(0, b.data.length - 1)))).toThrow(/claims \d+ samples and holds \d+/);
    expect(bad((b) => (b.runs = 3))).toThrow(/run pool: a batch ends in the middle of a value/);
    expect(bad((b) => (b.runs = 1))).toThrow(/left over/);
    expect(bad((b) => (b.samples = b.data.length + 1))).toThrow(/claims/);
    expect(bad((b) => (b.strs = []))).toThrow(/refers to string 0 of 0/);
    expect(bad((b) => (b.ops = Int32Array.from(b.ops, (x, i) => (i === 0 ? 99 : x))))).toThrow(/unknown op code 99/);
  });
});

describe('a kept pool', () => {
  let pool: RunPool;
  beforeAll(() => {
    pool = createRunPool({ threads: 3, workerPath });
  });
  afterAll(async () => {
    await pool.close();
  });

  it('gives the in-process runs in job order for any number of jobs and threads', async () => {
    // fewer jobs than threads, one batch each, and many batches of shrinking size
    for (const n of [1, 2, 3, 7, 75]) {
      const jobs = tilts(n);
      const got = await pool.run({ text: boom, jobs });
      expect(got).toHaveLength(n);
      expect(got.map(plainRun).map(same)).toEqual(here(boom, jobs).map(same));
    }
  }, 60000);

  it('returns failed jobs as failed runs among the others', async () => {
    const jobs: PoolJob[] = [
      { label: 'kp 20', kind: 'sweep', sweep: { target: 'Steady.kp', value: 20, unit: 'N*m/rad', text: '20 [N*m/rad]' }, params: [['Steady.kp', 20]] },
      { label: 'kd 0', params: [['Steady.kd', 0]] },
      { label: 'no start', starts: [['Boom.tilt', NaN]] },
      ...tilts(2),
    ];
    const got = (await pool.run({ text: boom, jobs })).map(plainRun);
    expect(got.map((r) => r.error?.code)).toEqual([undefined, 'LW509', 'LW701', undefined, undefined]);
    expect(got[1].error?.message).toMatch(/^kd 0: Steady: /);
    expect(got.map(same)).toEqual(here(boom, jobs).map(same));
  }, 60000);

  it('is reused across calls, options and loops', async () => {
    const oven = sample('oven.loop');
    const ovenJobs = sweepJobs(runSpec(compile(oven)));
    expect(ovenJobs.length).toBeGreaterThan(0);
    const a = await pool.run({ text: boom, jobs: tilts(5) });
    const b = await pool.run({ text: oven, jobs: ovenJobs });
    const c = await pool.run({ text: boom, jobs: tilts(5), run: { points: 50 } });
    expect(a.map(plainRun).map(same)).toEqual(here(boom, tilts(5)).map(same));
    expect(b.map(plainRun).map(same)).toEqual(here(oven, ovenJobs).map(same));
    expect(c.every((r) => r.t.length === 50)).toBe(true);
    // calls made together run one after another, each with its own loop
    const [d, e] = await Promise.all([pool.run({ text: oven, jobs: ovenJobs }), pool.run({ text: boom, jobs: tilts(4) })]);
    expect(d.map(plainRun).map(same)).toEqual(here(oven, ovenJobs).map(same));
    expect(e.map(plainRun).map(same)).toEqual(here(boom, tilts(4)).map(same));
  }, 60000);

  it('reports progress up to the number of jobs', async () => {
    const seen: number[] = [];
    await pool.run({ text: boom, jobs: tilts(40), onProgress: (n) => seen.push(n) });
    expect(seen.length).toBeGreaterThan(1);
    expect(seen.every((n, i) => i === 0 || n > seen[i - 1])).toBe(true);
    expect(seen.at(-1)).toBe(40);
  }, 60000);

  it('runs nothing for no jobs or a call cancelled before it starts', async () => {
    expect(await pool.run({ text: boom, jobs: [] })).toEqual([]);
    expect(await pool.run({ text: boom, jobs: tilts(5), cancel: { cancelled: true } })).toEqual([]);
  });

  it('stops on cancel with the runs before the first that did not run, and runs on afterwards', async () => {
    const jobs = tilts(600);
    const cancel = { cancelled: false };
    let got: PooledRun[] | undefined;
    const call = pool.run({ text: boom, jobs, cancel, onProgress: () => void (cancel.cancelled = true) }).then((r) => (got = r));
    await call;
    expect(got!.length).toBeGreaterThan(0);
    expect(got!.length).toBeLessThan(jobs.length);
    expect(got!.map((r) => r.label)).toEqual(jobs.slice(0, got!.length).map((j) => j.label));
    // finished runs are whole runs; a run cut short says so
    const want = here(boom, jobs.slice(0, got!.length));
    got!.map(plainRun).forEach((r, i) => {
      if (r.error) expect(r.error.code).toBe('LW705');
      else expect(same(r)).toEqual(same(want[i]));
    });
    const after = await pool.run({ text: boom, jobs: tilts(6) });
    expect(after.map(plainRun).map(same)).toEqual(here(boom, tilts(6)).map(same));
  }, 60000);

  it('rejects a loop that does not compile and runs the next call', async () => {
    await expect(pool.run({ text: boom, loop: 'Nowhere', jobs: tilts(2) })).rejects.toThrow(/run pool: loop 'Nowhere' does not compile: .*\(in worker \d of 3/);
    const after = await pool.run({ text: boom, jobs: tilts(3) });
    expect(after.map(plainRun).map(same)).toEqual(here(boom, tilts(3)).map(same));
  }, 60000);
});

describe('pool failures', () => {
  it('names the worker script that cannot start', async () => {
    const missing = join(dir, 'missing-worker.js');
    await expect(runPool({ text: boom, jobs: tilts(2), threads: 2, workerPath: missing })).rejects.toThrow(`could not start`);
    await expect(runPool({ text: boom, jobs: tilts(2), threads: 2, workerPath: missing })).rejects.toThrow(missing);
  });

  it('names the worker and the jobs when a worker stops, and starts a new worker for the next call', async () => {
    // a worker that starts and then exits on its first batch
    const dying = join(dir, 'dying-worker.js');
    writeFileSync(dying, `const { parentPort } = require('node:worker_threads');\nparentPort.postMessage({ type: 'started' });\nparentPort.on('message', (m) => { if (m.type === 'batch') process.exit(3); });\n`);
    const pool = createRunPool({ threads: 1, workerPath: dying });
    try {
      await expect(pool.run({ text: boom, jobs: tilts(3) })).rejects.toThrow(/run pool: worker 1 of 1 \(.*dying-worker\.js\) stopped with exit code 3 with jobs 1–2 unfinished/);
      await expect(pool.run({ text: boom, jobs: tilts(1) })).rejects.toThrow(/exit code 3 with job 1 unfinished/);
    } finally {
      await pool.close();
    }
  });

  it('rejects a worker failure in a job with the job and the worker', async () => {
    const throwing = join(dir, 'throwing-worker.js');
    writeFileSync(throwing, `const { parentPort } = require('node:worker_threads');\nparentPort.postMessage({ type: 'started' });\nparentPort.on('message', (m) => { if (m.type === 'batch') parentPort.postMessage({ type: 'failed', batch: m.batch, message: "job '" + m.jobs[0].label + "' failed: out of luck" }); });\n`);
    await expect(runPool({ text: boom, jobs: tilts(2), threads: 1, workerPath: throwing })).rejects.toThrow(/run pool: job 'tilt 0' failed: out of luck \(in worker 1 of 1/);
  });

  it('rejects a job that cannot be sent to a worker', async () => {
    const odd = { label: 'odd', starts: [['Boom.tilt', 0.1]], note: () => 1 } as unknown as PoolJob;
    await expect(runPool({ text: boom, jobs: [odd], threads: 1, workerPath })).rejects.toThrow(/run pool: job 1 could not be sent to worker 1 of 1/);
  }, 60000);

  it('rejects calls on a closed pool and a call under way when it closes', async () => {
    const pool = createRunPool({ threads: 2, workerPath });
    const under = pool.run({ text: boom, jobs: tilts(200), onProgress: () => void pool.close() });
    await expect(under).rejects.toThrow(/closed while jobs were running/);
    await expect(pool.run({ text: boom, jobs: tilts(1) })).rejects.toThrow(/the pool is closed/);
  }, 60000);
});
