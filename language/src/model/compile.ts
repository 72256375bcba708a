// Entry point of the model compiler: a checked document and a loop name in, the compiled loop out
// (or diagnostics saying why not). Memoised per analysis; model diagnostics go to the analysis'
// sink once.

import type { Analysis } from '../analysis';
import { DiagnosticSink, type Diagnostic } from '../diagnostics';
import type { LoopSymbol } from '../check/symbols';
import type { Expr } from '../syntax/ast';
import { pathText, walkExpr } from '../syntax/ast';
import { compileLoop, type LoopExtras, type TraceRequest } from './loop';
import type { CompiledLoop } from './types';
import type { QuantityTable } from './units';

export type Compiled = CompiledLoop & LoopExtras;

export interface CompileResult {
  loop?: Compiled;
  /** Model diagnostics (LW4xx algebraic loops, LW5xx). */
  diagnostics: Diagnostic[];
  /** Why nothing was compiled, when nothing was. */
  reason?: string;
}

/** The signal name as written: `Boom.tilt`, `target`, or the expression's text. */
export function signalName(e: Expr, text: string): string {
  if (e.kind === 'member') return pathText(e.path);
  if (e.kind === 'name') return e.name;
  return text.slice(e.span.start, e.span.end).replace(/\s+/g, ' ').trim();
}

const METRICS = new Set(['settling', 'overshoot', 'rise', 'peak', 'final', 'iae', 'saturated']);

/** Shown signals (default: plant outputs, then plant inputs) and what expects measure. */
export function traceRequests(loop: LoopSymbol, text: string): TraceRequest[] {
  const out: TraceRequest[] = [];
  const show = loop.block.members.find((m) => m.kind === 'show');
  if (show && show.kind === 'show') {
    for (const e of show.signals) if (e.kind !== 'error') out.push({ expr: e, name: signalName(e, text), shown: true });
  } else {
    // default: plant outputs and plant inputs, as member expressions made for the purpose
    for (const inst of loop.instances.values()) {
      if (inst.system.kind !== 'plant') continue;
      for (const d of [...inst.system.outputs, ...inst.system.inputs]) {
        if (d.name.missing) continue;
        out.push({ expr: syntheticMember(inst.name, d.name.name, d.name.span), name: `${inst.name}.${d.name.name}`, shown: true });
      }
    }
  }
  for (const m of loop.block.members) {
    if (m.kind !== 'expect') continue;
    walkExpr(m.test, (x) => {
      if (x.kind === 'call' && METRICS.has(x.callee.name) && x.args[0] && x.callee.name !== 'saturated') {
        out.push({ expr: x.args[0], name: signalName(x.args[0], text), shown: false });
      }
    });
  }
  return out;
}

function syntheticMember(inst: string, name: string, span: { start: number; end: number }): Expr {
  return { kind: 'member', span, path: [{ name: inst, span }, { name, span }] };
}

/** Compiles a loop of an analysed document (the first loop by default). Never throws. */
export function compileAnalysis(analysis: Analysis, loopName?: string): CompileResult {
  const key = `model:${loopName ?? ''}`;
  const hit = analysis.cache.get(key) as CompileResult | undefined;
  if (hit) return hit;
  const result = compileUncached(analysis, loopName);
  analysis.cache.set(key, result);
  return result;
}

function compileUncached(analysis: Analysis, loopName?: string): CompileResult {
  const { symbols } = analysis;
  const loop = loopName ? symbols.loops.get(loopName) : symbols.loops.values().next().value;
  if (!loop) return { diagnostics: [], reason: loopName ? `there is no loop named '${loopName}'` : 'the file has no loop' };
  const errors = analysis.diagnostics.filter((d) => d.severity === 'error');
  if (errors.length) return { diagnostics: [], reason: `the file has ${errors.length} error${errors.length > 1 ? 's' : ''}; fix ${errors.length > 1 ? 'them' : 'it'} before running` };
  const sink = new DiagnosticSink();
  const traces = traceRequests(loop, analysis.text);
  // default show entries are synthetic member expressions: resolve them like written ones
  for (const t of traces) {
    if (!symbols.resolved.has(t.expr) && t.expr.kind === 'member') {
      const inst = loop.instances.get(t.expr.path[0].name);
      const mem = inst?.system.members.get(t.expr.path[1].name);
      if (mem) symbols.resolved.set(t.expr, mem.target);
    }
  }
  const quantities = (analysis.units as { quantities?: QuantityTable } | undefined)?.quantities;
  let compiled: Compiled | undefined;
  try {
    compiled = compileLoop({ text: analysis.text, symbols, loop, env: { symbols, quantities, inferred: analysis.units?.inferred, sink }, traces }) as Compiled | undefined;
  } catch (err) {
    sink.error('LW506', loop.nameSpan, `internal error while compiling loop '${loop.name}' (please report): ${(err as Error).message}`);
  }
  analysis.sink.items.push(...sink.items);
  return { loop: compiled, diagnostics: sink.items, reason: compiled ? undefined : sink.items.find((d) => d.severity === 'error')?.message ?? 'the loop could not be compiled' };
}
