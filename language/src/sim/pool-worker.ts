// A worker of the run pool: compiles the loop once from the source text, then runs jobs.

import { parentPort } from 'node:worker_threads';
import { analyze } from '../analysis';
import type { Compiled } from '../model/compile';
import { compileForRun } from '../runs';
import { runOnce } from './run';
import { runSpec, type RunSpec } from './sweep';
import type { PoolOptions, WorkerReply, WorkerRequest } from './pool';

let compiled: Compiled | undefined;
let spec: RunSpec | undefined;
let runOpts: PoolOptions['run'] = {};

parentPort?.on('message', (m: WorkerRequest) => {
  const reply = (r: WorkerReply) => parentPort!.postMessage(r);
  try {
    if (m.type === 'init') {
      // the same compile-and-seed step as in-process runs, so threads and main thread agree
      const r = compileForRun(analyze(m.text), m.loop);
      if (!r.compiled) return reply({ type: 'failed', message: r.reason ?? 'the loop does not compile' });
      compiled = r.compiled;
      spec = runSpec(compiled);
      runOpts = m.run ?? {};
      reply({ type: 'ready' });
    } else if (m.type === 'run' && compiled && spec) {
      const c = compiled;
      const pr = m.job.params?.length ? c.makeParams(new Map(m.job.params)) : { ok: true as const, p: c.params };
      if (!pr.ok) {
        reply({ type: 'result', id: m.id, run: { label: m.job.label, kind: m.job.kind ?? 'sweep', t: [], signals: {}, atLimit: {}, metrics: {}, expects: [], recovered: false, error: { code: 'LW509', message: pr.message, time: 0 }, stats: { steps: 0, rejected: 0, evaluations: 0, jacobians: 0, ms: 0 } } });
        return;
      }
      const x0 = c.startFor(pr.p, new Map(m.job.starts ?? []));
      const run = runOnce(c, spec, { label: m.job.label, kind: m.job.kind ?? 'sweep', sweep: m.job.sweep, p: pr.p, x0 }, runOpts);
      reply({ type: 'result', id: m.id, run });
    }
  } catch (e) {
    reply({ type: 'failed', message: (e as Error).message });
  }
});
