// Executes the sweep command's runs: on worker threads through the run pool (sim/pool.ts) when
// its bundled worker script is at hand, otherwise in this process one after another. Jobs go to
// the pool in chunks so the progress bar can move between them.

import { existsSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import type { Compiled } from '../model/compile';
import type { RunResult } from '../protocol';
import { runPool, type PoolJob } from '../sim/pool';
import { failedRun, runOnce } from '../sim/run';
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

/** One job in this process, as the pool's worker would run it. */
function runHere(c: Compiled, spec: RunSpec, job: PoolJob): RunResult {
  const input = { label: job.label, kind: job.kind ?? ('sweep' as const), sweep: job.sweep, p: c.params, x0: c.start };
  const pr = job.params?.length ? c.makeParams(new Map(job.params)) : { ok: true as const, p: c.params };
  if (!pr.ok) return failedRun(input, spec, { code: 'LW509', message: `${job.label}: ${pr.message}`, time: 0 });
  return runOnce(c, spec, { ...input, p: pr.p, x0: c.startFor(pr.p, new Map(job.starts ?? [])) });
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
        const out: RunResult[] = [];
        // chunks of a few rounds of the threads, so progress shows without many pool start-ups
        const chunk = Math.max(threads, Math.ceil(jobs.length / 8 / threads) * threads);
        for (let i = 0; i < jobs.length; i += chunk) {
          const part = jobs.slice(i, i + chunk);
          const got = await runPool({ text, loop: c.name, jobs: part, threads, workerPath: worker });
          if (got.length !== part.length) throw new Error(`the run pool returned ${got.length} of ${part.length} runs`);
          out.push(...got);
          onDone?.(out.length);
        }
        return out;
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
        out.push(runHere(c, spec, job));
        onDone?.(out.length);
      }
      return out;
    },
  };
}
