// A worker of the run pool (pool.ts): compiles the loop of a 'load' once and keeps it for the
// batches that follow; runs each batch's jobs one after another as the main thread would
// (runJob), and posts the batch's results packed (pool-wire.ts) with their buffers transferred.

import { parentPort } from 'node:worker_threads';
import { analyze } from '../analysis';
import type { Compiled } from '../model/compile';
import { compileForRun } from '../runs';
import { runJob, type WorkerReply, type WorkerRequest } from './pool';
import { RunPacker } from './pool-wire';
import type { RunOptions } from './run';
import { runSpec, type RunSpec } from './sweep';

const packer = new RunPacker();
let model = -1;
let loaded: { c: Compiled; spec: RunSpec } | undefined;
let loadError: string | undefined;

const reply = (r: WorkerReply, transfer?: ArrayBuffer[]) => parentPort!.postMessage(r, transfer);

function load(m: Extract<WorkerRequest, { type: 'load' }>): void {
  model = m.model;
  loaded = undefined;
  loadError = undefined;
  const what = m.loop !== undefined ? `loop '${m.loop}'` : "the file's first loop";
  try {
    // the same compile-and-seed step as in-process runs, so threads and main thread agree
    const r = compileForRun(analyze(m.text), m.loop);
    if (r.compiled) loaded = { c: r.compiled, spec: runSpec(r.compiled) };
    else loadError = `${what} does not compile: ${r.reason ?? 'no reason given'}`;
  } catch (e) {
    loadError = `compiling ${what} failed: ${(e as Error).message}`;
  }
  if (loadError) reply({ type: 'failed', model: m.model, message: loadError });
}

function batch(m: Extract<WorkerRequest, { type: 'batch' }>): void {
  if (m.model !== model || !loaded) {
    reply({ type: 'failed', batch: m.batch, message: loadError ?? 'no loop was loaded before the jobs' });
    return;
  }
  const stop = new Int32Array(m.stop);
  const opts: RunOptions = m.cancellable ? { ...m.run, cancel: { get cancelled() { return Atomics.load(stop, 0) !== 0; } } } : (m.run ?? {});
  packer.begin(m.jobs.length);
  for (const job of m.jobs) {
    if (Atomics.load(stop, 0) !== 0) break;
    try {
      // packed as soon as it is done: the run's arrays are garbage before the next run starts
      packer.add(runJob(loaded.c, loaded.spec, job, opts));
    } catch (e) {
      packer.finish();
      reply({ type: 'failed', batch: m.batch, message: `job '${job.label}' failed: ${(e as Error).message}` });
      return;
    }
  }
  const packed = packer.finish();
  reply({ type: 'done', batch: m.batch, runs: packed.batch }, packed.transfer);
}

parentPort?.postMessage({ type: 'started' } satisfies WorkerReply);
parentPort?.on('message', (m: WorkerRequest) => {
  try {
    if (m.type === 'load') load(m);
    else if (m.type === 'batch') batch(m);
  } catch (e) {
    reply({ type: 'failed', ...(m.type === 'batch' ? { batch: m.batch } : { model: m.model }), message: `the worker failed: ${(e as Error).message}` });
  }
});
