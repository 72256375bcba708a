// `loopwright/run`: runs a loop in a worker thread (dist/worker.js) so the server keeps
// answering while it computes. The worker gets the document text, the loop and the mode; it
// reports progress, which is forwarded as work-done progress. The run is stopped — the worker
// terminated — when the client cancels or when the time budget (`loopwright.run.timeBudgetMs`)
// runs out; both answer with a clear error.

import { Worker } from 'node:worker_threads';
import { join } from 'node:path';
import { existsSync } from 'node:fs';
import { LSPErrorCodes, ResponseError, type CancellationToken } from 'vscode-languageserver/node';
import { RUN_WORKER_LIMITS, type LoopRunReport } from '../../language/src/protocol';
import type { RunJob, WorkerMessage } from './worker-protocol';

export interface ProgressSink {
  report(percentage: number | undefined, message: string): void;
}

/** Error codes of run failures in answers (beside LSP's RequestCancelled). */
export const RunErrors = { budget: -32001, failed: -32002, unavailable: -32003 } as const;

export function workerPath(): string {
  return join(__dirname, 'worker.js');
}

export function runInWorker(job: RunJob, budgetMs: number, token: CancellationToken, progress: ProgressSink, path = workerPath()): Promise<LoopRunReport> {
  if (!existsSync(path)) return Promise.reject(new ResponseError(RunErrors.unavailable, `the run worker is missing (${path}); rebuild the extension`));
  return new Promise<LoopRunReport>((resolve, reject) => {
    let settled = false;
    const worker = new Worker(path, { workerData: job, resourceLimits: RUN_WORKER_LIMITS });
    const finish = (f: () => void) => {
      if (settled) return;
      settled = true;
      clearTimeout(timer);
      sub.dispose();
      void worker.terminate().catch(() => undefined);
      f();
    };
    const timer = setTimeout(() => {
      finish(() => reject(new ResponseError(RunErrors.budget, `the run of ${job.loop} took longer than its time budget of ${budgetMs} ms and was stopped (setting loopwright.run.timeBudgetMs)`)));
    }, budgetMs);
    const sub = token.onCancellationRequested(() => finish(() => reject(new ResponseError(LSPErrorCodes.RequestCancelled, `the run of ${job.loop} was cancelled`))));
    worker.on('message', (m: WorkerMessage) => {
      if (m.type === 'progress') {
        if (!settled) progress.report(m.percentage, m.message);
      } else if (m.type === 'done') finish(() => resolve(m.report));
      else if (m.type === 'error') finish(() => reject(new ResponseError(RunErrors.failed, m.message)));
    });
    worker.on('error', (err) => finish(() => reject(new ResponseError(RunErrors.failed, `the run of ${job.loop} failed: ${err.message}`))));
    worker.on('exit', (code) => finish(() => reject(new ResponseError(RunErrors.failed, `the run of ${job.loop} stopped unexpectedly (worker exit ${code})`))));
  });
}
