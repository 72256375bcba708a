// What an exported controller computes at one sample instant, as a model graph: the held outputs
// and the next states from the current states and the sampled inputs. This is the lowering the
// run driver uses for a sampled controller (model/lower.ts in 'discrete' mode: linear parts with
// the matrices of linear/discretize.ts, nonlinear state equations by forward difference,
// limits as clamps, PID back-calculation through the anti-windup column), so the generated code
// and the simulator evaluate the same operations in the same order.
//
// A continuous controller is exported with a given period and method: it is planned exactly as
// if it carried `sample every PERIOD by METHOD`.

import type { Analysis } from '../analysis';
import { DiagnosticSink } from '../diagnostics';
import type { SystemSymbol } from '../check/symbols';
import type { QuantityExpr, SampleDecl, SampleMethod } from '../syntax/ast';
import { Graph, evaluate, DEP } from '../model/graph';
import { planSystem, SystemLowering, type SystemPlan } from '../model/lower';
import { compileSystem } from '../model/system';
import type { VarInfo } from '../model/types';
import type { QuantityTable } from '../model/units';

export interface ExportVar {
  /** Name in the system (`err`, `heat:integral`). */
  name: string;
  unit: string;
  /** SI = value * scale + offset, for the declared unit. */
  scale: number;
  offset: number;
  /** What it is, for comments. */
  role: string;
}

export interface ExportParam {
  name: string;
  /** Value in SI. */
  si: number;
  /** The declaration as written (unit included), for comments. */
  written: string;
}

export interface ExportLimit {
  on: 'input' | 'output';
  name: string;
  lo: number;
  hi: number;
  unit: string;
}

export interface ControllerModel {
  system: string;
  description?: string;
  period: number;
  method: SampleMethod;
  /** Where the period came from: the file's `sample every`, or the caller. */
  periodSource: 'file' | 'option';
  states: ExportVar[];
  inputs: ExportVar[];
  outputs: ExportVar[];
  params: ExportParam[];
  limits: ExportLimit[];
  /** Start values of the states (SI): declared defaults, hidden states 0. */
  x0: Float64Array;
  graph: Graph;
  /** Output j after its limit, from x and u (graph leaves 'x', 'u'; params already constants). */
  outputNodes: number[];
  /** x[k+1] of state i. */
  nextNodes: number[];
  /** Param vector the graph's 'p' leaves read (SI, realization and discrete slots filled). */
  p: Float64Array;
  /** Whether a param-only node can be folded to a constant. */
  isConstant(node: number): boolean;
  /** Value of a param-only node. */
  constantValue(node: number): number;
}

export type ControllerPlan = { ok: true; model: ControllerModel } | { ok: false; message: string };

export interface ControllerOptions {
  /** Period in s for a continuous controller (or to override a sampled one's). */
  period?: number;
  /** Period as the user wrote it, for comments. */
  periodText?: string;
  method?: SampleMethod;
}

const varOf = (v: VarInfo, role: string): ExportVar => ({ name: v.name, unit: v.unit, scale: v.scale, offset: v.offset, role });

/** A synthetic `sample every` clause for a continuous controller. */
function syntheticSample(sys: SystemSymbol, period: number, method: SampleMethod): SampleDecl {
  const span = { start: sys.block.span.start, end: sys.block.span.start };
  const q: QuantityExpr = { kind: 'quantity', span, value: period, text: String(period), numberSpan: span, unit: { text: 's', span, outer: span } } as QuantityExpr;
  return { kind: 'sample', span, period: q, method: { name: method, span } };
}

/** Plans the export of controller `name` of an analysed document. Never throws. */
export function planController(analysis: Analysis, name: string, opts: ControllerOptions = {}): ControllerPlan {
  const sys = analysis.symbols.systems.get(name);
  if (!sys) {
    const ctl = [...analysis.symbols.systems.values()].filter((s) => s.kind === 'controller').map((s) => s.name);
    return { ok: false, message: `there is no controller named '${name}'${ctl.length ? ` (controllers: ${ctl.join(', ')})` : ''}` };
  }
  if (sys.kind !== 'controller') return { ok: false, message: `'${name}' is a plant; only controllers are exported` };
  const errors = analysis.diagnostics.filter((d) => d.severity === 'error');
  if (errors.length) return { ok: false, message: `the file has ${errors.length} error${errors.length > 1 ? 's' : ''}; fix ${errors.length > 1 ? 'them' : 'it'} before exporting` };
  if (!sys.sample && opts.period === undefined) return { ok: false, message: `controller '${name}' is continuous: give --period (for example --period 10ms) to export it sampled` };
  if (opts.period !== undefined && !(opts.period > 0 && Number.isFinite(opts.period))) return { ok: false, message: 'the period must be a positive time' };

  const original = sys.sample;
  const fromOption = opts.period !== undefined || opts.method !== undefined;
  if (fromOption) {
    // Plan as if the controller carried the clause (the symbol is restored right after).
    const T = opts.period;
    const method = opts.method ?? (original?.method?.name as SampleMethod | undefined) ?? 'tustin';
    sys.sample = T !== undefined ? syntheticSample(sys, T, method) : { ...original!, method: { name: method, span: original!.span } };
  }
  try {
    return planWith(analysis, sys, fromOption ? 'option' : 'file');
  } catch (err) {
    return { ok: false, message: `internal error while planning the export (please report): ${(err as Error).message}` };
  } finally {
    sys.sample = original;
  }
}

function planWith(analysis: Analysis, sys: SystemSymbol, periodSource: 'file' | 'option'): ControllerPlan {
  const sink = new DiagnosticSink();
  const quantities = (analysis.units as { quantities?: QuantityTable } | undefined)?.quantities;
  const env = { symbols: analysis.symbols, quantities, sink };
  const plan: SystemPlan = planSystem(sys, env, sys.name);
  const firstError = () => sink.items.find((d) => d.severity === 'error')?.message;
  if (!plan.ok || !plan.sample) return { ok: false, message: firstError() ?? `controller '${sys.name}' cannot be planned` };
  const built = compileSystem(sys, env, sys.name, undefined, plan);
  if (!built) return { ok: false, message: firstError() ?? `controller '${sys.name}' cannot be compiled` };
  const p = built.compiled.params;

  const g = new Graph();
  const low = new SystemLowering(plan, g, { x: (i) => g.leaf('x', i), u: (i) => g.leaf('u', i), p: (i) => g.leaf('p', i), limit: (k) => k }, env, 'discrete');
  const periodNode = low.constant(plan.sample.period);
  const outputNodes = plan.outputs.map((_, j) => low.output(j));
  const nextNodes = plan.states.map((_, i) => low.next(i, periodNode));
  if (sink.items.some((d) => d.severity === 'error')) return { ok: false, message: firstError()! };

  const period = evaluate(g, [periodNode], { p })[0];
  if (!(period > 0) || !Number.isFinite(period)) return { ok: false, message: `the sample period must be positive (it is ${period} s)` };

  // Anything that changes with time or with another system cannot be in a controller on its own.
  const bad = g.reachable([...outputNodes, ...nextNodes]).find((id) => g.nodes[id].deps & (DEP.t | DEP.h | DEP.w));
  if (bad !== undefined) return { ok: false, message: `controller '${sys.name}' reads time or another system's values and cannot run on its own` };

  const src = (s: { start: number; end: number }) => analysis.text.slice(s.start, s.end);
  const lo = new Float64Array(plan.limits.length), hi = new Float64Array(plan.limits.length);
  built.compiled.limitBounds(p, lo, hi);
  const limits: ExportLimit[] = plan.limits.map((l, k) => {
    const v = l.on === 'input' ? plan.inputs[l.target] : plan.outputs[l.target];
    return { on: l.on, name: l.name, lo: (lo[k] - v.offset) / v.scale, hi: (hi[k] - v.offset) / v.scale, unit: v.unit };
  });
  const memo = new Map<number, number>();
  const model: ControllerModel = {
    system: sys.name,
    description: sys.block.description?.text,
    period,
    method: plan.sample.method,
    periodSource,
    states: plan.states.map((v, i) => varOf(v, v.hidden ? v.hidden.role : i < plan.declaredStates ? 'declared state' : 'state')),
    inputs: plan.inputs.map((v) => varOf(v, 'input')),
    outputs: plan.outputs.map((v) => varOf(v, 'output')),
    params: plan.params.map((d, i) => ({ name: d.name.name, si: p[i], written: src(d.value.span) })),
    limits,
    x0: built.compiled.x0,
    graph: g,
    outputNodes,
    nextNodes,
    p,
    isConstant: (id) => (g.nodes[id].deps & ~0) === 0,
    constantValue: (id) => {
      let v = memo.get(id);
      if (v === undefined) {
        v = evaluate(g, [id], { p })[0];
        memo.set(id, v);
      }
      return v;
    },
  };
  return { ok: true, model };
}
