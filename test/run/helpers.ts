// Shared helpers of the run tests: analyse and compile a source text, failing loudly with the
// diagnostics when it does not compile.

import { analyze } from '../../language/src/analysis';
import { compileAnalysis, type Compiled } from '../../language/src/model/compile';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';

export function compile(text: string, loop?: string): Compiled {
  const a = analyze(text);
  const errors = a.diagnostics.filter((d) => d.severity === 'error');
  if (errors.length) throw new Error(`source has errors: ${errors.map((d) => `${d.code} ${d.message}`).join('; ')}`);
  const r = compileAnalysis(a, loop);
  if (!r.loop) throw new Error(`does not compile: ${r.reason} ${r.diagnostics.map((d) => `${d.code} ${d.message}`).join('; ')}`);
  return r.loop;
}

export function sample(name: string): string {
  return readFileSync(join(__dirname, '..', '..', 'samples', name), 'utf8');
}

/** Times of downward zero crossings of y on a grid, interpolated linearly. */
export function downCrossings(t: number[], y: number[]): number[] {
  const out: number[] = [];
  for (let i = 1; i < y.length; i++) {
    if (y[i - 1] > 0 && y[i] <= 0) out.push(t[i - 1] + (y[i - 1] / (y[i - 1] - y[i])) * (t[i] - t[i - 1]));
  }
  return out;
}
