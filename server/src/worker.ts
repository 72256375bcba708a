// The run worker: for each job it is sent, analyses the text, compiles the loop, runs what the
// mode asks for (simulate: the nonlinear run; compare: with the linearized run; sweep: with one
// run per sweep value), posts progress and the report. It runs in its own thread, so the server
// can stop it at any time (cancel, time budget): it sets the job's stop flag, which the runs
// check at every step, and terminates the thread only when the job does not answer soon.
// Otherwise the worker stays for the next job, with its code already compiled (see RunWorkers
// in runs.ts).

import { parentPort } from 'node:worker_threads';
import { analyze } from '../../language/src/analysis';
import { compileForRun, reportFor } from '../../language/src/runs';
import { linearRunner } from '../../language/src/linear/linear-run';
import type { LoopRunReport } from '../../language/src/protocol';
import type { IntegratorMethod } from '../../language/src/sim/solver';
import { simulate, type Cancellation } from '../../language/src/sim/run';
import type { JobMessage, JobUpdate, RunJob } from './worker-protocol';

const METHODS = new Set(['adaptive', 'extrapolation', 'stiff']);

function main(job: RunJob, post: (m: JobUpdate) => void, cancel?: Cancellation): void {
  post({ type: 'progress', percentage: 0, message: `checking ${job.loop}` });
  const analysis = analyze(job.text);
  const errors = analysis.diagnostics.filter((d) => d.severity === 'error');
  if (errors.length) {
    post({ type: 'error', message: `${job.loop} cannot run: the file has ${errors.length} error${errors.length > 1 ? 's' : ''}, the first: ${errors[0].code} ${errors[0].message}`, code: errors[0].code });
    return;
  }
  if (!analysis.symbols.loops.has(job.loop)) {
    post({ type: 'error', message: `there is no loop named '${job.loop}' in this file` });
    return;
  }
  post({ type: 'progress', percentage: 5, message: `compiling ${job.loop}` });
  const compiled = compileForRun(analysis, job.loop);
  if (!compiled.compiled) {
    const first = compiled.diagnostics.find((d) => d.severity === 'error');
    post({ type: 'error', message: `${job.loop} cannot run: ${compiled.reason ?? 'the loop could not be compiled'}`, code: first?.code });
    return;
  }
  post({ type: 'progress', percentage: 10, message: `simulating ${job.loop}` });
  const method = job.settings.method && METHODS.has(job.settings.method) ? (job.settings.method as IntegratorMethod) : undefined;
  if (cancel?.cancelled) return post({ type: 'stopped' });
  const runs = simulate(compiled.compiled, { mode: job.mode, budgetMs: job.budgetMs, linear: linearRunner(analysis), ...(job.settings.tolerance ? { tolerance: job.settings.tolerance } : {}), ...(method ? { method } : {}), ...(cancel ? { cancel } : {}) });
  if (cancel?.cancelled) return post({ type: 'stopped' });
  post({ type: 'progress', percentage: 90, message: `${runs.length} run${runs.length === 1 ? '' : 's'} done` });
  const report: LoopRunReport = reportFor(analysis, compiled.compiled, runs);
  post({ type: 'done', report });
}

parentPort?.on('message', (m: JobMessage) => {
  if (m?.type !== 'job') return;
  const post = (u: JobUpdate) => parentPort?.postMessage({ ...u, id: m.id });
  const flag = m.stop instanceof SharedArrayBuffer ? new Int32Array(m.stop) : undefined;
  const cancel: Cancellation | undefined = flag && {
    get cancelled() {
      return Atomics.load(flag, 0) !== 0;
    },
  };
  try {
    main(m.job, post, cancel);
  } catch (err) {
    post({ type: 'error', message: `the run failed on an internal error: ${(err as Error)?.message ?? String(err)}` });
  }
});
