// Sample arrays of runs. The engine's runs hold their samples in Float64Arrays (SampledRun);
// JSON, the report and the plot page take RunResult with number arrays: plainRun is the one
// conversion between the two.

import type { RunResult, SampledRun } from '../protocol';

/** Sets a key as an own property, '__proto__' included. */
export function put(o: Record<string, unknown>, k: string, v: unknown): void {
  if (k === '__proto__') Object.defineProperty(o, k, { value: v, enumerable: true, writable: true, configurable: true });
  else o[k] = v;
}

function plainArray(v: ArrayLike<number>): number[] {
  const n = v.length;
  const a = new Array<number>(n);
  for (let i = 0; i < n; i++) a[i] = v[i];
  return a;
}

/** A run with number arrays (the same keys, in the same order; the same values bit for bit). */
export function plainRun(r: SampledRun | RunResult): RunResult {
  const signals: Record<string, number[]> = {};
  for (const k of Object.keys(r.signals)) put(signals, k, plainArray(r.signals[k]));
  return { ...r, t: plainArray(r.t), signals };
}

/**
 * A Float64Array whose memory is not cleared first, where the runtime allows that: only for
 * buffers whose every element is written before anything reads it (a run's result samples, a
 * pool batch).
 */
export function sampleBuffer(n: number): Float64Array<ArrayBuffer> {
  if (typeof Buffer !== 'undefined' && typeof Buffer.allocUnsafeSlow === 'function') return new Float64Array(Buffer.allocUnsafeSlow(n * 8).buffer as ArrayBuffer, 0, n);
  return new Float64Array(n);
}
