// A system instance compiled on its own: the generated f, g and their exact Jacobians, for
// linear analysis (trim, linearization, margins). Limits act as clamps here (slope 1 inside).

import type { SystemSymbol } from '../check/symbols';
import type { Expr } from '../syntax/ast';
import { compileModule, type FnWrite } from './codegen';
import { Graph, evaluate } from './graph';
import { planSystem, SystemLowering, type LowerEnv, type SystemPlan } from './lower';
import type { CompiledSystem, LinearPart, OperatingPoint, ParamInfo } from './types';
import { displayUnit } from './units';

const flat = (M: number[][], r: number, c: number): Float64Array => {
  const out = new Float64Array(r * c);
  for (let i = 0; i < r; i++) for (let j = 0; j < c; j++) out[i * c + j] = M[i]?.[j] ?? 0;
  return out;
};

/** Pinned param values of a plan by declared name. */
export function pinnedOf(plan: SystemPlan, overrides?: ReadonlyMap<string, number>): Map<number, number> {
  const pinned = new Map<number, number>();
  if (overrides) {
    plan.params.forEach((p, i) => {
      const v = overrides.get(p.name.name);
      if (v !== undefined) pinned.set(i, v);
    });
  }
  return pinned;
}

export interface SystemBuild {
  plan: SystemPlan;
  compiled: CompiledSystem;
}

/**
 * Compiles one instance. `overrides` are the instance's param values (SI) by name (from `use`).
 * Returns undefined when the plan has errors (reported on env.sink).
 */
export function compileSystem(sys: SystemSymbol, env: LowerEnv, instance: string, overrides?: ReadonlyMap<string, number>, plan = planSystem(sys, env, instance)): SystemBuild | undefined {
  if (!plan.ok) return undefined;
  const base = new Map(overrides ?? []);
  const first = plan.fillParams(pinnedOf(plan, base));
  if (!first.ok) {
    env.sink.error('LW506', sys.nameSpan, `${instance}: ${first.message}`);
    return undefined;
  }
  const g = new Graph();
  const nx = plan.states.length, nu = plan.inputs.length, ny = plan.outputs.length;
  const low = new SystemLowering(plan, g, { x: (i) => g.leaf('x', i), u: (i) => g.leaf('u', i), p: (i) => g.leaf('p', i), limit: (k) => k }, env);
  const fNodes = Array.from({ length: nx }, (_, i) => low.derivative(i));
  const gNodes = Array.from({ length: ny }, (_, i) => low.output(i));
  const jacWrites = (roots: number[], leaf: 'x' | 'u', cols: number, target: string): FnWrite[] => {
    const w: FnWrite[] = [];
    for (let j = 0; j < cols; j++) {
      const d = g.derivative(roots, new Map([[g.leaf(leaf, j), g.ONE]]));
      d.forEach((node, i) => w.push({ target, index: i * cols + j, node }));
    }
    return w;
  };
  const mod = compileModule(g, {
    context: [],
    hoist: false,
    modes: 'clamp',
    fns: [
      { name: 'f', args: ['x', 'u', 'p', 'dx'], writes: fNodes.map((node, i) => ({ target: 'dx', index: i, node })) },
      { name: 'g', args: ['x', 'u', 'p', 'y'], writes: gNodes.map((node, i) => ({ target: 'y', index: i, node })) },
      { name: 'dfdx', args: ['x', 'u', 'p', 'J'], zero: ['J'], writes: jacWrites(fNodes, 'x', nx, 'J') },
      { name: 'dfdu', args: ['x', 'u', 'p', 'J'], zero: ['J'], writes: jacWrites(fNodes, 'u', nu, 'J') },
      { name: 'dgdx', args: ['x', 'u', 'p', 'J'], zero: ['J'], writes: jacWrites(gNodes, 'x', nx, 'J') },
      { name: 'dgdu', args: ['x', 'u', 'p', 'J'], zero: ['J'], writes: jacWrites(gNodes, 'u', nu, 'J') },
    ],
  }).bind();
  type F = (x: Float64Array, u: Float64Array, p: Float64Array, out: Float64Array) => void;

  const boundNodes = plan.limits.map((l) => [plan.constNode(l.decl.lo), plan.constNode(l.decl.hi)]);
  const constAt = (e: Expr, p: Float64Array) => evaluate(plan.cg, [plan.constNode(e)], { p })[0];
  const x0 = new Float64Array(nx);
  const p0 = first.p;
  plan.sys.states.filter((s) => !s.name.missing).forEach((s, i) => {
    if (s.init) x0[i] = constAt(s.init, p0);
  });
  const points: OperatingPoint[] = plan.sys.points.filter((pt) => !pt.name.missing).map((pt) => {
    const x = new Float64Array(nx), u = new Float64Array(nu);
    const givenStates = new Array<boolean>(nx).fill(false), givenInputs = new Array<boolean>(nu).fill(false);
    const values = new Map<string, number>();
    for (const e of pt.entries) {
      if (e.name.missing) continue;
      const v = constAt(e.value, p0);
      values.set(e.name.name, v);
      const si = plan.states.findIndex((s, k) => k < plan.declaredStates && s.name === e.name.name);
      if (si >= 0) {
        x[si] = v;
        givenStates[si] = true;
      }
      const ii = plan.inputs.findIndex((s) => s.name === e.name.name);
      if (ii >= 0) {
        u[ii] = v;
        givenInputs[ii] = true;
      }
    }
    for (let i = 0; i < plan.declaredStates; i++) if (!givenStates[i]) x[i] = x0[i];
    return { name: pt.name.name, span: pt.name.span, x, u, givenStates, givenInputs, values };
  });
  const feedthrough = gNodes.map((node) => Array.from({ length: nu }, (_, j) => g.dependsOn(node, g.leaf('u', j))));
  const linearParts: LinearPart[] = plan.parts.map((part) => ({
    kind: part.kind,
    span: part.span,
    states: Array.from({ length: part.n }, (_, i) => part.x0 + i),
    inputs: part.inputs.slice(),
    outputs: part.outputs.slice(),
    matrices: (p: Float64Array) => {
      const r = part.matrices(p);
      const nIn = part.inputs.length;
      if (!r.ok) return { A: new Float64Array(part.n * part.n).fill(NaN), B: new Float64Array(part.n * nIn).fill(NaN), C: new Float64Array(part.p * part.n).fill(NaN), D: new Float64Array(part.p * nIn).fill(NaN) };
      return { A: flat(r.ss.A, part.n, part.n), B: flat(r.ss.B, part.n, nIn), C: flat(r.ss.C, part.p, part.n), D: flat(r.ss.D, part.p, nIn) };
    },
  }));
  const paramInfo: ParamInfo[] = plan.params.map((p) => {
    const lit = p.value.kind === 'quantity' || p.value.kind === 'number' ? { span: p.value.span, text: p.value.text } : undefined;
    const u = p.value.kind === 'quantity' ? displayUnit(p.value.unit.text) : displayUnit(undefined);
    return { name: p.name.name, qualified: `${instance}.${p.name.name}`, unit: u.text, scale: u.scale, offset: u.offset, span: p.name.span, literal: lit };
  });
  const sample = plan.sample
    ? {
        span: plan.sample.span,
        period: constAt(plan.sample.period, p0),
        periodOf: (p: Float64Array) => constAt(plan.sample!.period, p),
        method: plan.sample.method,
      }
    : undefined;
  const compiled: CompiledSystem = {
    instance,
    system: plan.sys.name,
    kind: plan.sys.kind,
    description: plan.sys.block.description?.text,
    span: plan.sys.block.span,
    states: plan.states,
    declaredStates: plan.declaredStates,
    inputs: plan.inputs,
    outputs: plan.outputs,
    params: p0,
    paramIndex: new Map(plan.params.map((p, i) => [p.name.name, i])),
    paramInfo,
    makeParams: (more) => {
      const all = new Map(base);
      for (const [k, v] of more ?? []) all.set(k, v);
      return plan.fillParams(pinnedOf(plan, all));
    },
    x0,
    points,
    limits: plan.limits.map((l, index) => ({ index, on: l.on, target: l.target, name: l.name, qualified: `${instance}.${l.name}`, span: l.decl.span })),
    limitBounds: (p, lo, hi) => {
      boundNodes.forEach(([a, b], k) => {
        const [va, vb] = evaluate(plan.cg, [a, b], { p });
        lo[k] = va;
        hi[k] = vb;
      });
    },
    feedthrough,
    linearParts,
    sample,
    f: mod.f as unknown as F,
    g: mod.g as unknown as F,
    dfdx: mod.dfdx as unknown as F,
    dfdu: mod.dfdu as unknown as F,
    dgdx: mod.dgdx as unknown as F,
    dgdu: mod.dgdu as unknown as F,
  };
  return { plan, compiled };
}
