// Shared helpers of the linear-model tests: analyse a model text, compile one system, central
// differences (tests only: the product never differentiates numerically).

import { readFileSync } from 'node:fs';
import { analyze, type Analysis } from '../../language/src/analysis';
import { DiagnosticSink } from '../../language/src/diagnostics';
import { compileSystem } from '../../language/src/model/system';
import type { CompiledSystem } from '../../language/src/model/types';

export const sample = (name: string): string => readFileSync(new URL(`../../samples/${name}`, import.meta.url), 'utf8');

export function analysed(text: string): Analysis {
  const a = analyze(text);
  const errors = a.diagnostics.filter((d) => d.severity === 'error');
  if (errors.length) throw new Error(`model has errors: ${errors.map((d) => `${d.code} ${d.message}`).join('; ')}`);
  return a;
}

export function compiled(a: Analysis, system: string): CompiledSystem {
  const sym = a.symbols.systems.get(system);
  if (!sym) throw new Error(`no system ${system}`);
  const sink = new DiagnosticSink();
  const b = compileSystem(sym, { symbols: a.symbols, sink }, system);
  if (!b) throw new Error(`${system} did not compile: ${sink.items.map((d) => d.message).join('; ')}`);
  return b.compiled;
}

/** Central-difference Jacobian of F: R^n → R^m at z, step h·max(1, |z_j|). */
export function centralJacobian(F: (z: Float64Array) => Float64Array, z: Float64Array, h = 1e-6): number[][] {
  const f0 = F(z);
  const J = Array.from({ length: f0.length }, () => new Array<number>(z.length).fill(0));
  for (let j = 0; j < z.length; j++) {
    const d = h * Math.max(1, Math.abs(z[j]));
    const zp = Float64Array.from(z), zm = Float64Array.from(z);
    zp[j] += d;
    zm[j] -= d;
    const fp = F(zp), fm = F(zm);
    for (let i = 0; i < f0.length; i++) J[i][j] = (fp[i] - fm[i]) / (2 * d);
  }
  return J;
}

/** max |a − b| / max(1, |b|) over the entries. */
export function relErr(a: number[][], b: number[][]): number {
  let e = 0;
  a.forEach((r, i) => r.forEach((v, j) => (e = Math.max(e, Math.abs(v - b[i][j]) / Math.max(1, Math.abs(b[i][j]))))));
  return e;
}
