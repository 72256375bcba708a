// The run worker: analyses the text it is given, runs the loop, posts progress and the report.
// It runs in its own thread, so the server can terminate it at any time (cancel, time budget).

import { parentPort, workerData } from 'node:worker_threads';
import { analyze } from '../../language/src/analysis';
import type { RunJob, WorkerMessage } from './worker-protocol';

const post = (m: WorkerMessage) => parentPort?.postMessage(m);

function main(job: RunJob): void {
  post({ type: 'progress', percentage: 0, message: `checking ${job.loop}` });
  const analysis = analyze(job.text);
  const errors = analysis.diagnostics.filter((d) => d.severity === 'error');
  if (errors.length) {
    post({ type: 'error', message: `${job.loop} cannot run: the file has ${errors.length} error(s), the first: ${errors[0].code} ${errors[0].message}`, code: errors[0].code });
    return;
  }
  if (!analysis.symbols.loops.has(job.loop)) {
    post({ type: 'error', message: `there is no loop named '${job.loop}' in this file` });
    return;
  }
  post({ type: 'error', message: `running loops is not available in this build (the simulation layer is missing)`, code: 'LW701' });
}

try {
  main(workerData as RunJob);
} catch (err) {
  post({ type: 'error', message: `the run failed on an internal error: ${(err as Error)?.message ?? String(err)}` });
}
