// Executes the sweep command's runs: on worker threads through the run pool (sim/pool.ts) when
// its bundled worker script is at hand, otherwise in this process one after another. The pool
// is started once per call and reports progress as its batches come back.

import { existsSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import type { Compiled } from '../model/compile';
import type { RunResult } from '../protocol';
import { createRunPool, plainRun, runJob, type PoolJob } from '../sim/pool';
import type { RunSpec, SweepSpec } from '../sim/sweep';

export interface RunExecutor {
  /** Runs the jobs; results in job order. `onDone(n)` reports how many have finished. */
  run(jobs: PoolJob[], onDone?: (finished: number) => void): Promise<RunResult[]>;
  /** 'threads' or 'in-process', and the thread count used. */
  readonly mode: 'threads' | 'in-process';
  readonly threads: number;
}

export interface ExecutorOptions {
  threads?: number;
  /** Path of the pool's worker script; default: dist/pool-worker.js beside the CLI bundle. */
  workerPath?: string;
  /** Force one mode (tests). */
  mode?: 'threads' | 'in-process';
}

/** The pool jobs of a loop's sweeps, in the order the runs are reported. */
export function sweepJobs(sweeps: SweepSpec[]): PoolJob[] {
  return sweeps.flatMap((sw) =>
    sw.values.map((v): PoolJob => ({
      label: `${sw.target} = ${v.text}`,
      kind: 'sweep',
      sweep: { target: sw.target, value: v.display, unit: sw.unit.text, text: v.text },
      ...(sw.kind === 'start' ? { starts: [[sw.target, v.si]] } : { params: [[sw.target, v.si]] }),
    })),
  );
}

function findWorker(explicit?: string): string | undefined {
  const candidates = explicit ? [explicit] : [
    ...(process.env.LOOPWRIGHT_ROOT ? [join(process.env.LOOPWRIGHT_ROOT, 'dist', 'pool-worker.js')] : []),
    ...(typeof __dirname !== 'undefined' ? [join(__dirname, 'pool-worker.js')] : []),
    ...(process.argv[1] ? [join(dirname(resolve(process.argv[1])), 'pool-worker.js')] : []),
    join(process.cwd(), 'dist', 'pool-worker.js'),
  ];
  return candidates.map((p) => resolve(p)).find((p) => existsSync(p));
}

const tick = () => new Promise<void>((r) => setImmediate(r));

export function executeRuns(text: string, c: Compiled, spec: RunSpec, o: ExecutorOptions = {}): RunExecutor {
  const threads = Math.max(1, o.threads ?? availableParallelism());
  const worker = o.mode === 'in-process' ? undefined : findWorker(o.workerPath);
  if (worker && threads > 1) {
    return {
      mode: 'threads',
      threads,
      async run(jobs, onDone) {
        if (!jobs.length) return [];
        const pool = createRunPool({ threads: Math.min(threads, jobs.length), workerPath: worker });
        try {
          const got = await pool.run({ text, loop: c.name, jobs, onProgress: onDone });
          if (got.length !== jobs.length) throw new Error(`the run pool returned ${got.length} of ${jobs.length} runs`);
          return got.map(plainRun);
        } finally {
          await pool.close();
        }
      },
    };
  }
  return {
    mode: 'in-process',
    threads: 1,
    async run(jobs, onDone) {
      const out: RunResult[] = [];
      for (const job of jobs) {
        await tick();
        out.push(plainRun(runJob(c, spec, job)));
        onDone?.(out.length);
      }
      return out;
    },
  };
}
