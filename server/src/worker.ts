// The run worker: for each job it is sent, analyses the text, compiles the loop, runs what the
// mode asks for (simulate: the nonlinear run; compare: with the linearized run; sweep: with one
// run per sweep value), posts progress and the report. It runs in its own thread, so the server
// can stop it at any time (cancel, time budget): it sets the job's stop flag, which the runs
// check at every step, and terminates the thread only when the job does not answer soon.
// Otherwise the worker stays for the next job, with its code already compiled (see RunWorkers
// in runs.ts).

import { parentPort, workerData } from 'node:worker_threads';
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

/**
 * A small loop of our own that a worker started ahead runs once before its first job (nothing is
 * posted), so that the first real run finds the analysis, the compiler, both run drivers and the
 * report code already compiled by the engine. A job sent meanwhile waits for it, which costs no
 * more than running it cold.
 */
export const WARM_UP = `plant Lag {
  param tau = 2 [s]
  state y [1]
  input u [1]
  output seen [1] = y
  limit u within -2 [1] .. 2 [1]
  y' = (u - y) / tau
  operating point rest { y = 0 [1], u = 0 [1] }
}
controller Pi {
  param kp = 3 [1]
  param ki = 1 [1/s]
  input err [1]
  output u [1]
  pid u from err { kp = kp, ki = ki, antiwindup = 1 [s] }
}
loop Warm {
  signal target = step(0.5 [s], 1 [1])
  target - Lag.seen -> Pi.err
  Pi.u -> Lag.u
  around Lag.rest
  simulate 10 [s]
  compare linear
  sweep Pi.kp over 1 [1] .. 5 [1] steps 2
  sweep start Lag.y over 0.2 [1], 0.4 [1]
  expect settling(Lag.seen, 2 [%]) < 10 [s]
}
`;

if ((workerData as { warm?: boolean } | undefined)?.warm) {
  try {
    main({ text: WARM_UP, loop: 'Warm', mode: 'sweep', budgetMs: 2000, settings: {} }, () => undefined);
    main({ text: WARM_UP, loop: 'Warm', mode: 'compare', budgetMs: 2000, settings: {} }, () => undefined);
  } catch {
    // a warm-up that fails costs only its time; the jobs report their own errors
  }
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
