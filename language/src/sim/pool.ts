// Runs spread over worker threads (node:worker_threads).
//
// A pool (createRunPool) keeps its workers between calls: each worker compiles a loop once from
// its source text and keeps it until a call brings another text or loop, so start-up and compile
// are paid once per pool and model, not per call. Jobs go out in batches, each worker holding
// up to two so it never waits for the main thread; batch sizes shrink as the jobs run out
// (a share of what is left, divided by the workers), so the workers finish together. Results
// come back per batch in transferred buffers (pool-wire.ts); the runs keep their samples as
// views on them (PooledRun) until a consumer asks for number arrays (plainRun). runPool is the
// one-call form: a pool for one set of jobs, closed afterwards, with number arrays.
//
// The worker script is dist/pool-worker.js (bundled from pool-worker.ts by scripts/build.mjs)
// unless a path is given.

import { Worker } from 'node:worker_threads';
import { join } from 'node:path';
import type { Compiled } from '../model/compile';
import { RUN_WORKER_LIMITS, type RunResult, type SampledRun } from '../protocol';
import { failedRun, runOnce, type Cancellation, type RunOptions } from './run';
import type { RunSpec } from './sweep';
import { plainRun, unpackRuns, type PooledRun, type WireBatch } from './pool-wire';

export { plainRun, type PooledRun } from './pool-wire';

/** One run: a label and the start values / params (SI, by qualified name) that differ from the file's. */
export interface PoolJob {
  label: string;
  kind?: RunResult['kind'];
  sweep?: RunResult['sweep'];
  starts?: Array<[string, number]>;
  params?: Array<[string, number]>;
}

/** One job run in this thread, exactly as a worker of the pool runs it. */
export function runJob(c: Compiled, spec: RunSpec, job: PoolJob, opts: RunOptions = {}): SampledRun {
  const input = { label: job.label, kind: job.kind ?? ('sweep' as const), sweep: job.sweep, p: c.params, x0: c.start };
  const pr = job.params?.length ? c.makeParams(new Map(job.params)) : { ok: true as const, p: c.params };
  if (!pr.ok) return failedRun(input, spec, { code: 'LW509', message: `${job.label}: ${pr.message}`, time: 0 });
  return runOnce(c, spec, { ...input, p: pr.p, x0: c.startFor(pr.p, new Map(job.starts ?? [])) }, opts);
}

export type PoolRunOptions = Pick<RunOptions, 'points' | 'budgetMs' | 'tolerance' | 'abstol' | 'method'>;

/** One call of a pool: the loop (source text and name) and its jobs. */
export interface PoolRequest {
  text: string;
  loop?: string;
  jobs: PoolJob[];
  run?: PoolRunOptions;
  /**
   * Polled while the call runs: once set, runs under way stop (they end with error LW705, as
   * in-process runs do), no further job starts, and the call resolves with the results of the
   * jobs before the first one that did not run, in job order.
   */
  cancel?: Cancellation;
  /** Called as batches come back, with the number of jobs finished so far. */
  onProgress?: (finished: number) => void;
}

export interface PoolOptions extends Omit<PoolRequest, 'onProgress'> {
  threads: number;
  /** Path of the bundled worker script (default: pool-worker.js beside this bundle). */
  workerPath?: string;
}

export interface RunPool {
  /** Most workers the pool starts (it starts no more than a call has jobs). */
  readonly threads: number;
  /** Runs the jobs; resolves with their results in job order. Calls run one after another. */
  run(req: PoolRequest): Promise<PooledRun[]>;
  /** Stops the workers; a call still running rejects. */
  close(): Promise<void>;
}

export type WorkerRequest =
  | { type: 'load'; model: number; text: string; loop?: string }
  | {
      type: 'batch';
      model: number;
      batch: number;
      jobs: PoolJob[];
      run?: PoolRunOptions;
      /** Int32 flag: non-zero stops the batch (between jobs; within runs too when `cancellable`). */
      stop: SharedArrayBuffer;
      cancellable: boolean;
    };

export type WorkerReply =
  | { type: 'started' }
  | { type: 'done'; batch: number; runs: WireBatch }
  | { type: 'failed'; batch?: number; model?: number; message: string };

function defaultWorkerPath(): string {
  return join(typeof __dirname !== 'undefined' ? __dirname : '.', 'pool-worker.js');
}

/** Largest batch: bounds the wait for progress and the results held back in a worker. */
const MAX_BATCH = 32;
/** Batches a worker holds at once: one running, one waiting, so it never waits for the main thread. */
const IN_FLIGHT = 2;
/** How often a call looks at its cancel flag while it runs (ms). */
const CANCEL_POLL_MS = 10;

interface Slot {
  index: number;
  worker: Worker;
  /** Model this worker has been sent (the load is queued before any batch of it). */
  model: number;
  /** The worker script has loaded (its first message). */
  started: boolean;
  dead: boolean;
}

interface Batch {
  slot: Slot;
  first: number;
  count: number;
}

/** The call in progress: batches out, results in, and how it ends. */
interface Call {
  model: number;
  batches: Map<number, Batch>;
  fail(message: string): void;
  done(b: number, runs: WireBatch): void;
}

/** Job ranges [first, end) for messages, counting from 1: "job 3", "jobs 1–32, 65–80". */
function jobsText(ranges: Array<[number, number]>): string {
  const one = ranges.length === 1 && ranges[0][1] - ranges[0][0] === 1;
  return `${one ? 'job' : 'jobs'} ${ranges.map(([a, b]) => (b - a === 1 ? `${a + 1}` : `${a + 1}–${b}`)).join(', ')}`;
}

/** A pool of up to `threads` workers, started as calls need them and kept until close(). */
export function createRunPool(o: { threads: number; workerPath?: string }): RunPool {
  const threads = Math.max(1, Math.min(Math.floor(o.threads) || 1, 64));
  const path = o.workerPath ?? defaultWorkerPath();
  const slots: Slot[] = [];
  let closed = false;
  let modelKey: string | undefined;
  let model = 0;
  let batchSeq = 0;
  let current: Call | undefined;
  let queue: Promise<unknown> = Promise.resolve();

  const where = (s: Slot) => `worker ${s.index + 1} of ${threads} (${path})`;
  /** The jobs a worker had been given and not returned, for messages: " with jobs 1–32, 65–80 unfinished". */
  const unfinished = (s: Slot) => {
    if (!current) return '';
    const mine = [...current.batches.values()].filter((b) => b.slot === s).sort((a, b) => a.first - b.first);
    if (!mine.length) return '';
    const ranges: Array<[number, number]> = [];
    for (const b of mine) {
      const last = ranges.at(-1);
      if (last && last[1] === b.first) last[1] = b.first + b.count;
      else ranges.push([b.first, b.first + b.count]);
    }
    return ` with ${jobsText(ranges)} unfinished`;
  };
  const drop = (s: Slot) => {
    if (s.dead) return;
    s.dead = true;
    const i = slots.indexOf(s);
    if (i >= 0) slots.splice(i, 1);
    s.worker.removeAllListeners();
    s.worker.on('error', () => {});
    void s.worker.terminate();
  };

  const spawn = (index: number): Slot => {
    let worker: Worker;
    try {
      worker = new Worker(path, { resourceLimits: RUN_WORKER_LIMITS });
    } catch (e) {
      throw new Error(`run pool: worker ${index + 1} of ${threads} could not start from ${path}: ${(e as Error).message}`);
    }
    const s: Slot = { index, worker, model: -1, started: false, dead: false };
    worker.unref();
    worker.on('message', (m: WorkerReply) => {
      if (m.type === 'started') return void (s.started = true);
      const call = current;
      if (!call) return;
      if (m.type === 'done') call.done(m.batch, m.runs);
      else if (m.batch !== undefined ? call.batches.has(m.batch) : m.model === call.model) {
        // a failure in a batch of this call, or the load of its model failed (stale ones are dropped)
        call.fail(`run pool: ${m.message} (in ${where(s)})`);
      }
    });
    worker.on('error', (e) => {
      const msg = s.started ? `run pool: ${where(s)} failed${unfinished(s)}: ${e.message}` : `run pool: ${where(s)} could not start: ${e.message}`;
      drop(s);
      current?.fail(msg);
    });
    worker.on('exit', (code) => {
      if (s.dead) return;
      const msg = `run pool: ${where(s)} stopped with exit code ${code}${unfinished(s)}`;
      drop(s);
      current?.fail(msg);
    });
    return s;
  };

  const runNow = (req: PoolRequest): Promise<PooledRun[]> =>
    new Promise<PooledRun[]>((resolve, reject) => {
      if (closed) return reject(new Error('run pool: the pool is closed'));
      const jobs = req.jobs;
      const n = jobs.length;
      if (!n || req.cancel?.cancelled) return resolve([]);
      const key = `${req.loop ?? ''}\u0000${req.text}`;
      if (key !== modelKey) {
        modelKey = key;
        model++;
      }
      const want = Math.min(threads, n);
      const active: Slot[] = [];
      try {
        for (let i = 0; i < threads && active.length < want; i++) {
          let s = slots.find((x) => x.index === i);
          if (!s) {
            s = spawn(i);
            slots.push(s);
          }
          active.push(s);
        }
      } catch (e) {
        return reject(e);
      }
      const stop = new SharedArrayBuffer(4);
      const stopFlag = new Int32Array(stop);
      const results: Array<PooledRun | undefined> = new Array(n);
      let next = 0, finished = 0, ended = false, cancelled = false;
      let timer: ReturnType<typeof setInterval> | undefined;

      const end = (err?: Error) => {
        if (ended) return;
        ended = true;
        if (timer) clearInterval(timer);
        if (err) Atomics.store(stopFlag, 0, 1); // batches still out stop between jobs
        current = undefined;
        for (const s of active) if (!s.dead) s.worker.unref();
        if (err) return reject(err);
        if (!cancelled) return resolve(results as PooledRun[]);
        const done: PooledRun[] = [];
        for (let i = 0; i < n && results[i] !== undefined; i++) done.push(results[i]!);
        resolve(done);
      };
      const checkCancel = () => {
        if (!cancelled && req.cancel?.cancelled) {
          cancelled = true;
          Atomics.store(stopFlag, 0, 1);
        }
      };
      const send = (s: Slot) => {
        if (ended || cancelled || s.dead || next >= n) return;
        // a share of what is left: large batches while there is much to do, single jobs at the end
        const size = Math.max(1, Math.min(MAX_BATCH, Math.ceil((n - next) / (2 * IN_FLIGHT * active.length))));
        const b = ++batchSeq;
        call.batches.set(b, { slot: s, first: next, count: size });
        const msg: WorkerRequest = { type: 'batch', model, batch: b, jobs: jobs.slice(next, next + size), run: req.run, stop, cancellable: !!req.cancel };
        next += size;
        try {
          s.worker.postMessage(msg);
        } catch (e) {
          end(new Error(`run pool: ${jobsText([[next - size, next]])} could not be sent to ${where(s)}: ${(e as Error).message}`));
        }
      };
      const call: Call = {
        model,
        batches: new Map(),
        fail: (message) => end(new Error(message)),
        done: (b, runs) => {
          const batch = call.batches.get(b);
          if (!batch || ended) return; // a batch of an earlier call that ended
          call.batches.delete(b);
          let got: PooledRun[];
          try {
            got = unpackRuns(runs);
          } catch (e) {
            return end(new Error(`${(e as Error).message} (${jobsText([[batch.first, batch.first + batch.count]])} from ${where(batch.slot)})`));
          }
          // a batch comes back short only when told to stop
          if (got.length > batch.count || (got.length < batch.count && !Atomics.load(stopFlag, 0))) {
            return end(new Error(`run pool: ${where(batch.slot)} returned ${got.length} of the ${batch.count} runs of ${jobsText([[batch.first, batch.first + batch.count]])}`));
          }
          for (let i = 0; i < got.length; i++) results[batch.first + i] = got[i];
          finished += got.length;
          checkCancel();
          try {
            req.onProgress?.(finished);
          } catch (e) {
            return end(new Error(`run pool: the progress callback failed: ${(e as Error).message}`));
          }
          send(batch.slot);
          if (!call.batches.size) end();
        },
      };
      current = call;
      for (const s of active) {
        s.worker.ref();
        if (s.model !== model) {
          try {
            s.worker.postMessage({ type: 'load', model, text: req.text, loop: req.loop } satisfies WorkerRequest);
          } catch (e) {
            return end(new Error(`run pool: the loop could not be sent to ${where(s)}: ${(e as Error).message}`));
          }
          s.model = model;
        }
      }
      for (let k = 0; k < IN_FLIGHT; k++) for (const s of active) send(s);
      if (req.cancel) {
        timer = setInterval(checkCancel, CANCEL_POLL_MS);
        timer.unref?.();
      }
    });

  return {
    threads,
    run(req) {
      const p = queue.then(() => runNow(req));
      queue = p.catch(() => undefined);
      return p;
    },
    async close() {
      closed = true;
      const all = slots.splice(0);
      current?.fail('run pool: the pool was closed while jobs were running');
      await Promise.all(
        all.map((s) => {
          s.dead = true;
          s.worker.removeAllListeners();
          s.worker.on('error', () => {});
          return s.worker.terminate();
        }),
      );
    },
  };
}

/**
 * Runs the jobs on `threads` workers started for them and closed afterwards; resolves with the
 * results in job order, with number arrays (plainRun).
 */
export async function runPool(opts: PoolOptions): Promise<RunResult[]> {
  const pool = createRunPool({ threads: Math.min(opts.threads, opts.jobs.length || 1), workerPath: opts.workerPath });
  try {
    return (await pool.run(opts)).map(plainRun);
  } finally {
    await pool.close();
  }
}
