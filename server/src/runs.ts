// `loopwright/run`: runs a loop in a worker thread (dist/worker.js) so the server keeps
// answering while it computes. The worker gets the document text, the loop and the mode; it
// reports progress, which is forwarded as work-done progress. The run is stopped when the client
// cancels or when the time budget (`loopwright.run.timeBudgetMs`) runs out; both answer at once
// with a clear error. Workers are kept warm between runs (RunWorkers): a stopped job is told to
// stop, and its worker is terminated only when it does not stop soon.

import { Worker } from 'node:worker_threads';
import { join } from 'node:path';
import { existsSync } from 'node:fs';
import { LSPErrorCodes, ResponseError, type CancellationToken } from 'vscode-languageserver/node';
import { RUN_WORKER_LIMITS, type LoopRunReport } from '../../language/src/protocol';
import type { JobMessage, RunJob, WorkerMessage } from './worker-protocol';

export interface ProgressSink {
  report(percentage: number | undefined, message: string): void;
}

/** Error codes of run failures in answers (beside LSP's RequestCancelled). */
export const RunErrors = { budget: -32001, failed: -32002, unavailable: -32003 } as const;

export function workerPath(): string {
  return join(__dirname, 'worker.js');
}

/** How long a stopped job may take to answer before its worker is ended. */
export const STOP_GRACE_MS = 500;

/**
 * Run workers kept between runs. A job goes to the idle worker when there is one, so a re-run
 * (live tuning re-runs on every pause in typing) finds the worker started and its code already
 * compiled: about 20 ms for the boom loop instead of about 270 ms for a new thread. After a job
 * the worker stays as the idle one (a second one, of runs at the same time, ends). A job that is
 * cancelled or runs out of its budget is answered at once and told to stop; its worker is kept
 * when the job stops soon, and ended otherwise (a new one is then started at once for the next
 * job). An idle worker does not keep the process alive, and one that dies while idle is simply
 * replaced.
 */
export class RunWorkers {
  private idle: Worker | undefined;
  private nextId = 1;
  private disposed = false;
  /** Workers started and jobs that found a started one (for tests and the log). */
  readonly counts = { started: 0, reused: 0, stopping: 0 };

  constructor(
    private readonly path = workerPath(),
    options: { warm?: boolean } = {},
  ) {
    if (options.warm && existsSync(path)) this.prepare();
  }

  run(job: RunJob, budgetMs: number, token: CancellationToken, progress: ProgressSink): Promise<LoopRunReport> {
    if (this.disposed) return Promise.reject(new ResponseError(RunErrors.unavailable, 'the run workers were shut down'));
    if (!existsSync(this.path)) return Promise.reject(new ResponseError(RunErrors.unavailable, `the run worker is missing (${this.path}); rebuild the extension`));
    return new Promise<LoopRunReport>((resolve, reject) => {
      const id = this.nextId++;
      const worker = this.take();
      const stop = new Int32Array(new SharedArrayBuffer(4));
      let settled = false;
      // how the job's worker is left: back for the next job, stopped (it may still answer), or ended
      const finish = (after: 'keep' | 'stop' | 'end', f: () => void) => {
        if (settled) return;
        settled = true;
        clearTimeout(timer);
        sub.dispose();
        worker.off('error', onError);
        worker.off('exit', onExit);
        if (after === 'stop') this.stopAndKeep(worker, id, stop, onMessage);
        else {
          worker.off('message', onMessage);
          if (after === 'keep') this.give(worker);
          else this.end(worker);
        }
        f();
      };
      const timer = setTimeout(() => {
        finish('stop', () => reject(new ResponseError(RunErrors.budget, `the run of ${job.loop} took longer than its time budget of ${budgetMs} ms and was stopped (setting loopwright.run.timeBudgetMs)`)));
      }, budgetMs);
      const sub = token.onCancellationRequested(() => finish('stop', () => reject(new ResponseError(LSPErrorCodes.RequestCancelled, `the run of ${job.loop} was cancelled`))));
      const onMessage = (m: WorkerMessage) => {
        if (m?.id !== id || settled) return;
        if (m.type === 'progress') progress.report(m.percentage, m.message);
        else if (m.type === 'done') finish('keep', () => resolve(m.report));
        else if (m.type === 'error') finish('keep', () => reject(new ResponseError(RunErrors.failed, m.message)));
        else if (m.type === 'stopped') finish('keep', () => reject(new ResponseError(RunErrors.failed, `the run of ${job.loop} stopped early`)));
      };
      const onError = (err: Error) => finish('end', () => reject(new ResponseError(RunErrors.failed, `the run of ${job.loop} failed: ${err.message}`)));
      const onExit = (code: number) => finish('end', () => reject(new ResponseError(RunErrors.failed, `the run of ${job.loop} stopped unexpectedly (worker exit ${code})`)));
      worker.on('message', onMessage);
      worker.on('error', onError);
      worker.on('exit', onExit);
      worker.ref();
      worker.postMessage({ type: 'job', id, job, stop: stop.buffer as SharedArrayBuffer } satisfies JobMessage);
    });
  }

  /**
   * Stops a job whose caller has been answered (cancelled, over budget): sets its stop flag and
   * keeps the worker if the job answers within STOP_GRACE_MS (the runs check the flag at every
   * step); otherwise ends the worker, the only way to stop a computation in another thread, and
   * starts a new one for the next job.
   */
  private stopAndKeep(worker: Worker, id: number, stop: Int32Array, jobListener: (m: WorkerMessage) => void): void {
    worker.off('message', jobListener);
    Atomics.store(stop, 0, 1);
    const done = (keep: boolean) => {
      clearTimeout(grace);
      worker.off('message', onAnswer);
      worker.off('exit', onGone);
      if (keep) this.give(worker);
      else this.end(worker);
    };
    const onAnswer = (m: WorkerMessage) => {
      if (m?.id === id && m.type !== 'progress') done(true);
    };
    const onGone = () => done(false);
    const grace = setTimeout(() => done(false), STOP_GRACE_MS);
    worker.on('message', onAnswer);
    worker.on('exit', onGone);
    this.counts.stopping++;
  }

  /** Ends a worker and starts the next job's one ahead. */
  private end(worker: Worker): void {
    void worker.terminate().catch(() => undefined);
    this.prepare();
  }

  /** Ends the idle worker; later runs are refused. */
  dispose(): void {
    this.disposed = true;
    const w = this.idle;
    this.idle = undefined;
    if (w) void w.terminate().catch(() => undefined);
  }

  /** The idle worker, or a new one. */
  private take(): Worker {
    const w = this.idle;
    this.idle = undefined;
    if (w && w.threadId >= 0) {
      w.off('exit', this.onIdleExit);
      this.counts.reused++;
      return w;
    }
    return this.start();
  }

  /** A finished job's worker: the idle one from now on, unless there is one already. */
  private give(w: Worker): void {
    if (this.idle || this.disposed) {
      void w.terminate().catch(() => undefined);
      return;
    }
    this.park(w);
  }

  /** Starts the next job's worker ahead, when none is idle. */
  private prepare(): void {
    if (!this.idle && !this.disposed) this.park(this.start(true));
  }

  private park(w: Worker): void {
    this.idle = w;
    w.unref();
    w.on('exit', this.onIdleExit);
  }

  private readonly onIdleExit = (): void => {
    // an idle worker that ended (it should not) is dropped; the next job starts a new one
    if (this.idle && this.idle.threadId < 0) this.idle = undefined;
  };

  /** A new worker; one started ahead (`warm`) runs a small loop of its own first (worker.ts). */
  private start(warm = false): Worker {
    this.counts.started++;
    const w = new Worker(this.path, { resourceLimits: RUN_WORKER_LIMITS, workerData: { warm } });
    // an error of a worker between jobs must not go unhandled; during a job the job's own handler reports it
    w.on('error', () => undefined);
    return w;
  }
}

const shared = new Map<string, RunWorkers>();

/** Runs a job on the run workers of `path` (one set per path, made on first use). */
export function runInWorker(job: RunJob, budgetMs: number, token: CancellationToken, progress: ProgressSink, path = workerPath()): Promise<LoopRunReport> {
  let w = shared.get(path);
  if (!w) shared.set(path, (w = new RunWorkers(path)));
  return w.run(job, budgetMs, token, progress);
}

/** Starts the run workers of `path` ahead of the first run (the server does at its start). */
export function warmRunWorkers(path = workerPath()): RunWorkers {
  let w = shared.get(path);
  if (!w) shared.set(path, (w = new RunWorkers(path, { warm: true })));
  return w;
}
