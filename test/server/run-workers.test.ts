// The server's run workers (server/src/runs.ts, RunWorkers) against the built worker
// (dist/worker.js): a job goes to the idle worker, so a re-run finds its code compiled; a
// cancelled job or one over its budget is told to stop and keeps its worker when it stops soon;
// one that does not stop in time ends its worker, and the next job runs on one started ahead;
// an idle worker that dies is replaced; runs at the same time each get a worker; a failed job
// keeps its worker.

import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { CancellationTokenSource } from 'vscode-jsonrpc/node';
import type { LoopRunReport } from '../../language/src/protocol';
import { RunErrors, RunWorkers, STOP_GRACE_MS } from '../../server/src/runs';
// @ts-expect-error a plain ES module of the benchmarks, without types
import { generateDocument } from '../bench/generate.mjs';
import type { RunJob } from '../../server/src/worker-protocol';
import { SLOW_LOOP } from './harness';
import { WARM_UP } from '../../server/src/worker';
import { analyze } from '../../language/src/analysis';

const ROOT = join(__dirname, '..', '..');
const PATH = join(ROOT, 'dist', 'worker.js');
const BOOM = readFileSync(join(ROOT, 'samples', 'boom.loop'), 'utf8');
const SLOW = SLOW_LOOP;

const job = (text: string, loop: string, mode: RunJob['mode'] = 'simulate'): RunJob => ({ text, loop, mode, budgetMs: 10_000, settings: {} });
const never = new CancellationTokenSource().token;
const quiet = { report: () => undefined };
const made: RunWorkers[] = [];
const workers = (warm = false) => {
  const w = new RunWorkers(PATH, { warm });
  made.push(w);
  return w;
};
const idleThread = (w: RunWorkers): number | undefined => (w as unknown as { idle?: { threadId: number } }).idle?.threadId;

afterEach(() => {
  for (const w of made.splice(0)) w.dispose();
});

describe('run workers', { timeout: 60_000 }, () => {
  it('runs a job, and the next one on the same worker', async () => {
    const w = workers();
    const a = await w.run(job(BOOM, 'Upright'), 10_000, never, quiet);
    const first = idleThread(w);
    const b = await w.run(job(BOOM, 'Upright'), 10_000, never, quiet);
    expect(a.runs[0].label).toBe('nonlinear');
    expect(b.runs[0].t).toEqual(a.runs[0].t);
    expect(b.runs[0].signals).toEqual(a.runs[0].signals);
    expect(w.counts).toEqual({ started: 1, reused: 1, stopping: 0 });
    expect(first).toBeGreaterThan(0);
    expect(idleThread(w)).toBe(first);
  });

  it('started ahead, the first job already finds a worker', async () => {
    const w = workers(true);
    expect(w.counts).toEqual({ started: 1, reused: 0, stopping: 0 });
    const progress: string[] = [];
    const r = await w.run(job(BOOM, 'Upright', 'compare'), 10_000, never, { report: (_p, m) => void progress.push(m) });
    expect(r.runs.map((x) => x.label)).toEqual(['nonlinear', 'linear']);
    expect(progress[0]).toBe('checking Upright');
    expect(w.counts).toEqual({ started: 1, reused: 1, stopping: 0 });
  });

  /** Resolves once the worker of a stopped job is idle again (or a new one stands in for it). */
  const settledAfterStop = async (w: RunWorkers) => {
    await expect.poll(() => idleThread(w) !== undefined, { timeout: STOP_GRACE_MS + 2000, interval: 20 }).toBe(true);
  };

  it('a cancelled job is answered at once and stops; its worker takes the next job', async () => {
    const w = workers();
    const source = new CancellationTokenSource();
    const pending = w.run(job(SLOW, 'Long', 'sweep'), 60_000, source.token, quiet);
    setTimeout(() => source.cancel(), 300);
    await expect(pending).rejects.toMatchObject({ code: -32800, message: 'the run of Long was cancelled' });
    const t0 = Date.now();
    // the runs check the stop flag at every step: the worker stops well within the grace time
    await settledAfterStop(w);
    expect(Date.now() - t0).toBeLessThan(STOP_GRACE_MS);
    const r = await w.run(job(BOOM, 'Upright'), 10_000, never, quiet);
    expect(r.loop).toBe('Upright');
    expect(w.counts).toEqual({ started: 1, reused: 1, stopping: 1 });
  });

  it('a job over its budget is stopped with a clear error, and its worker takes the next one', async () => {
    const w = workers();
    await expect(w.run(job(SLOW, 'Long', 'sweep'), 300, never, quiet)).rejects.toMatchObject({
      code: RunErrors.budget,
      message: 'the run of Long took longer than its time budget of 300 ms and was stopped (setting loopwright.run.timeBudgetMs)',
    });
    await settledAfterStop(w);
    expect((await w.run(job(BOOM, 'Upright'), 10_000, never, quiet)).loop).toBe('Upright');
    expect(w.counts).toEqual({ started: 1, reused: 1, stopping: 1 });
  });

  it('a job that does not stop in time (still reading a huge file) ends its worker; the next job runs on a new one', async () => {
    const w = workers();
    // 200,000 lines: seconds of parsing, which does not look at the stop flag
    const huge = generateDocument(200_000) as string;
    const source = new CancellationTokenSource();
    const pending = w.run(job(huge, 'Keep0'), 60_000, source.token, quiet);
    setTimeout(() => source.cancel(), 100);
    await expect(pending).rejects.toMatchObject({ code: -32800 });
    await settledAfterStop(w);
    expect(w.counts).toEqual({ started: 2, reused: 0, stopping: 1 });
    expect((await w.run(job(BOOM, 'Upright'), 10_000, never, quiet)).loop).toBe('Upright');
    expect(w.counts).toEqual({ started: 2, reused: 1, stopping: 1 });
  });

  it('a failed job (an error in the file) keeps its worker', async () => {
    const w = workers();
    await expect(w.run(job(BOOM.replace("tilt' = rate", "tilt' = rat"), 'Upright'), 10_000, never, quiet)).rejects.toMatchObject({ code: RunErrors.failed, message: expect.stringMatching(/^Upright cannot run: the file has 1 error, the first: LW201/) });
    await w.run(job(BOOM, 'Upright'), 10_000, never, quiet);
    expect(w.counts).toEqual({ started: 1, reused: 1, stopping: 0 });
  });

  it('an idle worker that dies is replaced by a new one for the next job', async () => {
    const w = workers();
    await w.run(job(BOOM, 'Upright'), 10_000, never, quiet);
    const idle = (w as unknown as { idle: import('node:worker_threads').Worker }).idle;
    await idle.terminate();
    const r: LoopRunReport = await w.run(job(BOOM, 'Upright'), 10_000, never, quiet);
    expect(r.loop).toBe('Upright');
    expect(w.counts).toEqual({ started: 2, reused: 0, stopping: 0 });
  });

  it('jobs at the same time get a worker each; one stays idle afterwards', async () => {
    const w = workers();
    const [a, b] = await Promise.all([w.run(job(BOOM, 'Upright'), 10_000, never, quiet), w.run(job(BOOM, 'Upright', 'sweep'), 10_000, never, quiet)]);
    expect(a.runs).toHaveLength(1);
    expect(b.runs.length).toBeGreaterThan(1);
    expect(w.counts).toEqual({ started: 2, reused: 0, stopping: 0 });
    expect(idleThread(w)).toBeGreaterThan(0);
    await w.run(job(BOOM, 'Upright'), 10_000, never, quiet);
    expect(w.counts).toEqual({ started: 2, reused: 1, stopping: 0 });
  });

  it("the warm-up loop of a worker started ahead checks clean and runs every mode (else the warm-up would only cost time)", async () => {
    expect(analyze(WARM_UP).diagnostics).toEqual([]);
    const w = workers();
    for (const mode of ['simulate', 'compare', 'sweep'] as const) {
      const r = await w.run(job(WARM_UP, 'Warm', mode), 10_000, never, quiet);
      expect(r.runs.every((x) => !x.error)).toBe(true);
    }
    expect((await w.run(job(WARM_UP, 'Warm', 'sweep'), 10_000, never, quiet)).runs.map((x) => x.label)).toEqual(['nonlinear', 'Pi.kp = 1', 'Pi.kp = 5', 'Lag.y = 0.2 [1]', 'Lag.y = 0.4 [1]']);
  });

  it('after dispose, a job is refused with a clear error', async () => {
    const w = workers();
    w.dispose();
    await expect(w.run(job(BOOM, 'Upright'), 10_000, never, quiet)).rejects.toMatchObject({ code: RunErrors.unavailable, message: 'the run workers were shut down' });
  });

  it('a missing worker file is a clear error', async () => {
    const w = new RunWorkers(join(ROOT, 'dist', 'no-such-worker.js'));
    await expect(w.run(job(BOOM, 'Upright'), 10_000, never, quiet)).rejects.toMatchObject({ code: RunErrors.unavailable, message: expect.stringContaining('the run worker is missing') });
  });
});
