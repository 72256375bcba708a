// Drives a sampled controller two ways with the same inputs: through the simulator (the compiled
// loop's sample function, which the run driver calls at every instant) and through the exported
// C compiled by the system compiler, then returns both output sequences.

import { execFileSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { analyze } from '../../language/src/analysis';
import { compileAnalysis } from '../../language/src/model/compile';
import type { CInterface } from '../../language/src/export/c';

export const CC_FLAGS = ['-std=c99', '-Wall', '-Werror'];

export interface Sequence {
  /** inputs[k][i] in the declared unit of input i at instant k. */
  inputs: number[][];
  /** outputs[k][j] in the declared unit of output j after instant k. */
  outputs: number[][];
}

/**
 * Runs the simulator's sampled controller `instance` of the first loop in `text` for `steps`
 * instants. The loop must wire the controller's inputs from signals only, so the inputs depend
 * on time alone; they are read back from the evaluator at each instant.
 */
export function simulatorSequence(text: string, instance: string, steps: number): Sequence {
  const a = analyze(text);
  const errors = a.diagnostics.filter((d) => d.severity === 'error');
  if (errors.length) throw new Error(`test model has errors: ${errors.map((d) => `${d.code} ${d.message}`).join('; ')}`);
  const r = compileAnalysis(a);
  if (!r.loop) throw new Error(`test loop does not compile: ${r.reason}`);
  const c = r.loop;
  const k = c.sampled.findIndex((s) => s.instance === instance);
  if (k < 0) throw new Error(`${instance} is not sampled in the test loop`);
  const sc = c.sampled[k];
  const layout = c.instances.find((i) => i.system.instance === instance)!;
  const sys = layout.system;
  let inOffset = 0, outOffset = 0;
  for (const i of c.instances) {
    if (i === layout) break;
    inOffset += i.system.inputs.length;
    outOffset += i.system.outputs.length;
  }
  const nIn = c.instances.reduce((s, i) => s + i.system.inputs.length, 0);
  const nOut = c.instances.reduce((s, i) => s + i.system.outputs.length, 0);
  const ins = new Float64Array(nIn), outs = new Float64Array(nOut);
  const ev = c.evaluator();
  const x = Float64Array.from(c.start);
  const seq: Sequence = { inputs: [], outputs: [] };
  for (let step = 0; step < steps; step++) {
    const t = step * sc.period;
    ev.signals(t, x, ins, outs);
    seq.inputs.push(sys.inputs.map((v, i) => (ins[inOffset + i] - v.offset) / v.scale));
    ev.sample(k, t, x);
    seq.outputs.push(sys.outputs.map((v, j) => (ev.held[sc.heldOffset + j] - v.offset) / v.scale));
  }
  void outOffset;
  return seq;
}

let dir: string | undefined;
const workDir = () => (dir ??= mkdtempSync(join(tmpdir(), 'lw-export-')));

/** Compiles `code` alone (-c) with the test flags plus `extra`; throws with the compiler's text. */
export function compileOnly(code: string, name: string, extra: string[] = []): void {
  const d = workDir();
  const src = join(d, `${name}.c`);
  writeFileSync(src, code);
  execFileSync('cc', [...CC_FLAGS, ...extra, '-c', src, '-o', join(d, `${name}.o`)], { stdio: 'pipe' });
}

/** Compiles the generated file with a small main that reads inputs from stdin, then runs it. */
export function runC(code: string, names: CInterface, inputs: number[][], name: string): number[][] {
  const d = workDir();
  writeFileSync(join(d, `${name}.c`), code);
  const reads = names.inputFields.map((f) => `scanf("%lf", &in.${f}) != 1`).join(' || ');
  const prints = names.outputFields.map((f) => `printf(" %.17g", out.${f});`).join(' ');
  const main = `#include <stdio.h>
#include "${name}.c"
int main(void) {
  ${names.state} s;
  ${names.inputs} in;
  ${names.outputs} out;
  ${names.init}(&s);
  for (;;) {
    ${reads ? `if (${reads}) break;` : 'break;'}
    ${names.step}(&s, &in, &out);
    ${prints}
    printf("\\n");
  }
  return 0;
}
`;
  const mainFile = join(d, `${name}-main.c`);
  writeFileSync(mainFile, main);
  const exe = join(d, `${name}-run`);
  execFileSync('cc', [...CC_FLAGS, mainFile, '-o', exe, '-lm'], { stdio: 'pipe', cwd: d });
  const stdin = inputs.map((row) => row.map((v) => v.toPrecision(17)).join(' ')).join('\n') + '\n';
  const out = execFileSync(exe, { input: stdin, encoding: 'utf8' });
  return out.trim().split('\n').map((line) => line.trim().split(/\s+/).map(Number));
}

/**
 * Largest disagreement relative to the size of each output over the sequence (so a zero
 * crossing does not inflate it): max over k, j of |a − b| / max(1e-300, max_k |b|).
 */
export function worstRelative(a: number[][], b: number[][]): number {
  if (a.length !== b.length) return Infinity;
  let worst = 0;
  const cols = b[0]?.length ?? 0;
  for (let j = 0; j < cols; j++) {
    const scale = Math.max(1e-300, ...b.map((r) => Math.abs(r[j])));
    for (let k = 0; k < b.length; k++) {
      const d = Math.abs(a[k][j] - b[k][j]) / scale;
      if (!(d <= worst)) worst = Number.isNaN(d) ? Infinity : Math.max(worst, d);
    }
  }
  return worst;
}
