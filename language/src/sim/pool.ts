// Runs spread over worker threads (node:worker_threads). Each worker gets the source text and
// the loop name, compiles once, and runs its share of the jobs; results come back as plain JSON
// RunResults in job order. The worker script is dist/pool-worker.js (bundled from
// pool-worker.ts by scripts/build.mjs) unless a path is given.

import { Worker } from 'node:worker_threads';
import { join } from 'node:path';
import type { RunResult } from '../protocol';
import type { RunOptions } from './run';

/** One run: a label and the start values / params (SI, by qualified name) that differ from the file's. */
export interface PoolJob {
  label: string;
  kind?: RunResult['kind'];
  sweep?: RunResult['sweep'];
  starts?: Array<[string, number]>;
  params?: Array<[string, number]>;
}

export interface PoolOptions {
  text: string;
  loop?: string;
  jobs: PoolJob[];
  threads: number;
  /** Path of the bundled worker script (default: pool-worker.js beside this bundle). */
  workerPath?: string;
  run?: Pick<RunOptions, 'points' | 'budgetMs' | 'tolerance' | 'abstol' | 'method'>;
  cancel?: { cancelled: boolean };
}

export type WorkerRequest =
  | { type: 'init'; text: string; loop?: string; run?: PoolOptions['run'] }
  | { type: 'run'; id: number; job: PoolJob }
  | { type: 'cancel' };

export type WorkerReply = { type: 'ready' } | { type: 'failed'; message: string } | { type: 'result'; id: number; run: RunResult };

function defaultWorkerPath(): string {
  return join(typeof __dirname !== 'undefined' ? __dirname : '.', 'pool-worker.js');
}

/** Runs the jobs on `threads` workers; resolves with the results in job order. */
export async function runPool(opts: PoolOptions): Promise<RunResult[]> {
  const threads = Math.max(1, Math.min(opts.threads, opts.jobs.length || 1, 64));
  const results: RunResult[] = new Array(opts.jobs.length);
  let next = 0;
  const path = opts.workerPath ?? defaultWorkerPath();
  const one = (): Promise<void> =>
    new Promise((resolve, reject) => {
      const w = new Worker(path);
      const finish = (err?: Error) => {
        void w.terminate();
        if (err) reject(err);
        else resolve();
      };
      const feed = () => {
        if (opts.cancel?.cancelled || next >= opts.jobs.length) return finish();
        const id = next++;
        w.postMessage({ type: 'run', id, job: opts.jobs[id] } satisfies WorkerRequest);
      };
      w.on('message', (m: WorkerReply) => {
        if (m.type === 'ready') feed();
        else if (m.type === 'failed') finish(new Error(m.message));
        else {
          results[m.id] = m.run;
          feed();
        }
      });
      w.on('error', (e) => finish(e));
      w.postMessage({ type: 'init', text: opts.text, loop: opts.loop, run: opts.run } satisfies WorkerRequest);
    });
  await Promise.all(Array.from({ length: threads }, one));
  return results.filter((r) => r !== undefined);
}
