// Closed-loop assembly: one graph for the whole loop (every instance's equations with its inputs
// replaced by the wiring that feeds them), the joint state and param layout of LANGUAGE.md §5,
// algebraic-loop detection (strongly connected components over direct-feedthrough edges, LW404),
// limits with their pre-limit values for event location, sampled controllers, breakpoints, and
// the generated right-hand side with its exact Jacobian.

import { stronglyConnected } from '../graph/scc';
import type { DiagnosticSink, Span } from '../diagnostics';
import type { LoopSymbol, SymbolTable, Target } from '../check/symbols';
import type { Arrow, Expr, ParamDecl, SignalDecl, StartDecl, AroundDecl } from '../syntax/ast';
import { pathText, walkExpr } from '../syntax/ast';
import { compileModule, type FnSpec, type FnWrite } from './codegen';
import { DEP, Graph, evaluate } from './graph';
import { lowerExpr, planSystem, SystemLowering, type LowerEnv, type NameLowering, type SystemPlan } from './lower';
import { compileSystem } from './system';
import { LimitMode, type CompiledLoop, type CompiledSystem, type InstanceLayout, type LoopEvaluator, type LoopLimit, type OperatingPoint, type SampledController, type TracedSignal, type VarInfo } from './types';
import { displayUnit, signalUnitText, type InferredUnits } from './units';

/** A traced signal request: the expression and how to name it. */
export interface TraceRequest {
  expr: Expr;
  name: string;
  shown: boolean;
}

export interface LoopCompileInput {
  text: string;
  symbols: SymbolTable;
  loop: LoopSymbol;
  env: LowerEnv;
  traces: TraceRequest[];
}

/** Raised inside the generated rhs when Newton's method fails; the run driver reports LW706. */
export class AlgebraicLoopFailure extends Error {
  constructor(
    readonly time: number,
    readonly residual: number,
    readonly loopText: string,
  ) {
    super(`algebraic loop ${loopText} did not converge at t = ${time} s (residual ${residual.toExponential(3)})`);
  }
}

interface Inst {
  name: string;
  plan: SystemPlan;
  compiled: CompiledSystem;
  xOffset: number;
  pOffset: number;
  limitOffset: number;
  sampled: boolean;
  heldOffset: number;
  low?: SystemLowering;
  disc?: SystemLowering;
}

export function compileLoop(input: LoopCompileInput): CompiledLoop | undefined {
  const { loop, env, symbols } = input;
  const sink: DiagnosticSink = env.sink;
  const errorsBefore = sink.items.filter((d) => d.severity === 'error').length;

  // ---- loop params (a constant graph of their own) ----
  const loopParams: ParamDecl[] = [...loop.params.values()].filter((p) => !p.name.missing);
  const lcg = new Graph();
  const lpIndex = new Map<ParamDecl, number>(loopParams.map((p, i) => [p, i]));
  const lcNames: NameLowering = (_e, t) => (t?.kind === 'loopParam' && lpIndex.has(t.decl) ? lcg.leaf('p', lpIndex.get(t.decl)!) : undefined);
  const lcNode = (e: Expr) => lowerExpr(lcg, e, env, lcNames, (span, msg) => sink.error('LW506', span, `${msg}: a constant is needed`));
  const lpNodes = loopParams.map((p) => lcNode(p.value));
  const loopParamValues = (pinned: ReadonlyMap<string, number>): Float64Array => {
    const v = new Float64Array(loopParams.length);
    loopParams.forEach((p, i) => {
      const pin = pinned.get(p.name.name);
      v[i] = pin !== undefined ? pin : evaluate(lcg, [lpNodes[i]], { p: v })[0];
    });
    return v;
  };
  const lp0 = loopParamValues(new Map());

  // ---- instances ----
  const insts: Inst[] = [];
  let xOff = 0, pOff = 0, limOff = 0, heldOff = 0;
  for (const li of loop.instances.values()) {
    const overrides = new Map<string, number>();
    for (const o of li.use?.overrides ?? []) {
      if (!o.name.missing) overrides.set(o.name.name, evaluate(lcg, [lcNode(o.value)], { p: lp0 })[0]);
    }
    const plan = planSystem(li.system, env, li.name);
    const built = compileSystem(li.system, env, li.name, overrides, plan);
    if (!built) continue;
    const sampled = li.system.kind === 'controller' && !!plan.sample;
    insts.push({ name: li.name, plan, compiled: built.compiled, xOffset: xOff, pOffset: pOff, limitOffset: limOff, sampled, heldOffset: sampled ? heldOff : -1 });
    xOff += plan.states.length;
    pOff += plan.nParams;
    limOff += plan.limits.length;
    if (sampled) heldOff += plan.outputs.length;
  }
  if (sink.items.filter((d) => d.severity === 'error').length > errorsBefore) return undefined;
  const n = xOff;
  const lpOffset = pOff;
  const nP = pOff + loopParams.length;
  const byName = new Map(insts.map((i) => [i.name, i]));

  // ---- arrows ----
  const arrows = loop.block.members.filter((m): m is Arrow => m.kind === 'arrow' && m.target.length === 2 && !m.target.some((p) => p.missing));
  const arrowOf = new Map<string, Arrow>();
  for (const a of arrows) if (!arrowOf.has(pathText(a.target))) arrowOf.set(pathText(a.target), a);

  // ---- algebraic loops: SCCs over direct-feedthrough dependencies between arrows ----
  const deps = new Map<Arrow, Set<Arrow>>();
  const readsOf = (e: Expr, out: Set<Arrow>, seenSignals: Set<SignalDecl>) => {
    walkExpr(e, (x) => {
      const t = symbols.resolved.get(x);
      if (!t) return;
      if (t.kind === 'signal' && !seenSignals.has(t.decl)) {
        seenSignals.add(t.decl);
        readsOf(t.decl.value, out, seenSignals);
      }
      if (t.kind === 'member' && x.kind === 'member') {
        const inst = byName.get(x.path[0].name);
        if (!inst || inst.sampled) return;
        if (t.member.kind === 'output') {
          const o = inst.plan.outputs.findIndex((v) => v.name === t.member.name);
          inst.compiled.feedthrough[o]?.forEach((ft, j) => {
            const a = ft ? arrowOf.get(`${inst.name}.${inst.plan.inputs[j].name}`) : undefined;
            if (a) out.add(a);
          });
        } else if (t.member.kind === 'input') {
          const a = arrowOf.get(`${inst.name}.${t.member.name}`);
          if (a) out.add(a);
        }
      }
    });
  };
  for (const a of arrowOf.values()) {
    const s = new Set<Arrow>();
    readsOf(a.source, s, new Set());
    deps.set(a, s);
  }
  const sccs = stronglyConnected([...arrowOf.values()], (a) => [...(deps.get(a) ?? [])]).filter((c) => c.length > 1 || deps.get(c[0])?.has(c[0]));
  const solveAlgebraic = loop.block.members.some((m) => m.kind === 'solveAlgebraic');
  if (sccs.length && !solveAlgebraic) {
    for (const c of sccs) {
      const names = c.map((a) => pathText(a.target));
      for (const a of c) {
        sink.error('LW404', a.span, `algebraic loop: ${names.join(' → ')} → ${names[0]} feed each other with no state in between; add a state or a filter, or write 'solve algebraic' in the loop`, {
          related: c.filter((b) => b !== a).map((b) => ({ span: b.span, message: `part of the same algebraic loop: -> ${pathText(b.target)}` })),
        });
      }
    }
    return undefined;
  }
  const tears: Arrow[] = sccs.flat();
  const tearIndex = new Map(tears.map((a, i) => [a, i]));

  // ---- the loop graph ----
  const g = new Graph();
  const order: string[] = [];
  const wiredMemo = new Map<string, number>();
  const busy = new Set<string>();
  const signalMemo = new Map<SignalDecl, number>();
  const loopNames: NameLowering = (x, t) => loopName(x, t);
  const lowerLoop = (e: Expr) => lowerExpr(g, e, env, loopNames, (span, msg) => sink.error('LW506', span, msg));

  function wired(inst: Inst, j: number): number {
    const key = `${inst.name}.${inst.plan.inputs[j].name}`;
    const hit = wiredMemo.get(key);
    if (hit !== undefined) return hit;
    const a = arrowOf.get(key);
    if (!a) return g.c(NaN);
    const ti = tearIndex.get(a);
    if (ti !== undefined) return g.leaf('w', ti);
    if (busy.has(key)) return g.c(NaN);
    busy.add(key);
    const v = lowerLoop(a.source);
    busy.delete(key);
    wiredMemo.set(key, v);
    return v;
  }
  const leavesOf = (inst: Inst) => ({
    x: (i: number) => g.leaf('x', inst.xOffset + i),
    p: (i: number) => g.leaf('p', inst.pOffset + i),
    u: (j: number) => wired(inst, j),
    limit: (k: number) => inst.limitOffset + k,
  });
  for (const inst of insts) {
    inst.low = new SystemLowering(inst.plan, g, leavesOf(inst), env, 'continuous');
    if (inst.sampled) inst.disc = new SystemLowering(inst.plan, g, leavesOf(inst), env, 'discrete');
  }
  const noteOrder = (name: string) => {
    if (!order.includes(name)) order.push(name);
  };

  function loopName(x: Expr, t: Target | undefined): number | undefined {
    if (!t) return undefined;
    switch (t.kind) {
      case 'builtin':
        return t.name === 't' ? g.t() : t.name === 'pi' ? g.c(Math.PI) : undefined;
      case 'loopParam': {
        const i = lpIndex.get(t.decl);
        return i === undefined ? undefined : g.leaf('p', lpOffset + i);
      }
      case 'signal': {
        let v = signalMemo.get(t.decl);
        if (v === undefined) {
          v = lowerLoop(t.decl.value);
          signalMemo.set(t.decl, v);
        }
        return v;
      }
      case 'pointValue': {
        if (x.kind !== 'member') return undefined;
        const inst = byName.get(x.path[0].name);
        const pt = inst?.plan.sys.points.find((p) => p.name.name === t.point.name);
        const entry = pt?.entries.find((e) => e.name.name === t.member.name);
        if (!inst || !entry) return undefined;
        return inst.low!.constant(entry.value);
      }
      case 'member': {
        if (x.kind !== 'member') return undefined;
        const inst = byName.get(x.path[0].name);
        if (!inst) return undefined;
        const m = t.member;
        const low = inst.low!;
        switch (m.kind) {
          case 'state': {
            const i = inst.plan.states.findIndex((s, k) => k < inst.plan.declaredStates && s.name === m.name);
            return i < 0 ? undefined : g.leaf('x', inst.xOffset + i);
          }
          case 'output': {
            const i = inst.plan.outputs.findIndex((s) => s.name === m.name);
            if (i < 0) return undefined;
            const v = inst.sampled ? g.leaf('h', inst.heldOffset + i) : low.output(i);
            noteOrder(inst.name);
            return v;
          }
          case 'input': {
            const i = inst.plan.inputs.findIndex((s) => s.name === m.name);
            return i < 0 ? undefined : low.input(i);
          }
          case 'param': {
            const i = inst.plan.params.indexOf(m.decl as ParamDecl);
            return i < 0 ? undefined : g.leaf('p', inst.pOffset + i);
          }
          default:
            return undefined;
        }
      }
      default:
        return undefined;
    }
  }

  // derivatives (sampled controllers' states are held by the integrator)
  const der: number[] = new Array(n).fill(g.ZERO);
  for (const inst of insts) {
    if (inst.sampled) continue;
    for (let i = 0; i < inst.plan.states.length; i++) der[inst.xOffset + i] = inst.low!.derivative(i);
    noteOrder(inst.name);
  }
  // every wired input is evaluated (sampled controllers read theirs at the instants)
  const inputNodes: number[] = [];
  const outputNodes: number[] = [];
  for (const inst of insts) {
    inst.plan.inputs.forEach((_, j) => inputNodes.push(inst.low!.input(j)));
    inst.plan.outputs.forEach((_, j) => outputNodes.push(inst.sampled ? g.leaf('h', inst.heldOffset + j) : inst.low!.output(j)));
  }
  // residuals of the torn arrows
  const residual = tears.map((a, i) => g.sub(lowerLoop(a.source), g.leaf('w', i)));

  // limits
  const limits: LoopLimit[] = [];
  const limPre: number[] = [], limLo: number[] = [], limHi: number[] = [];
  for (const inst of insts) {
    inst.plan.limits.forEach((l, k) => {
      const info = inst.compiled.limits[k];
      limits.push({ index: inst.limitOffset + k, instance: inst.name, info, qualified: `${inst.name}.${l.name}`, sampled: inst.sampled });
      const b = inst.low!.limitBounds(k);
      limPre.push(inst.sampled ? g.c(0) : inst.low!.limitPre(k));
      limLo.push(b.lo);
      limHi.push(b.hi);
    });
  }

  // sampled controllers: outputs from the current discrete state and sampled inputs, next states
  const sampledList: SampledController[] = [];
  const sampleFns: FnSpec[] = [];
  for (const inst of insts) {
    if (!inst.sampled) continue;
    const period = inst.disc!.constant(inst.plan.sample!.period);
    const hw: FnWrite[] = inst.plan.outputs.map((_, j) => ({ target: 'hn', index: j, node: inst.disc!.output(j) }));
    const xw: FnWrite[] = inst.plan.states.map((_, i) => ({ target: 'xn', index: i, node: inst.disc!.next(i, period) }));
    // pre-limit values and bounds of the controller's limits at the instant (for time at a limit)
    const lw: FnWrite[] = inst.plan.limits.flatMap((_, k) => {
      const b = inst.disc!.limitBounds(k);
      const o = inst.limitOffset + k;
      return [{ target: 'lpre', index: o, node: inst.disc!.limitPre(k) }, { target: 'llo', index: o, node: b.lo }, { target: 'lhi', index: o, node: b.hi }];
    });
    sampleFns.push({ name: `sample${sampledList.length}`, args: ['t', 'x', 'hn', 'xn', 'lpre', 'llo', 'lhi'], writes: [...hw, ...xw, ...lw] });
    sampledList.push({ instance: inst.name, span: inst.plan.sample!.span, period: inst.compiled.sample!.period, method: inst.plan.sample!.method, xOffset: inst.xOffset, nStates: inst.plan.states.length, heldOffset: inst.heldOffset, nOutputs: inst.plan.outputs.length });
  }

  // traced signals
  const traced: TracedSignal[] = [];
  const traceNodes: number[] = [];
  for (const req of input.traces) {
    if (traced.some((t) => t.name === req.name)) {
      if (req.shown) traced.find((t) => t.name === req.name)!.shown = true;
      continue;
    }
    const info = traceInfo(req, symbols, byName, limits, env.inferred);
    traced.push(info);
    traceNodes.push(lowerLoop(req.expr));
  }

  if (sink.items.filter((d) => d.severity === 'error').length > errorsBefore) return undefined;

  // ---- generated code ----
  const m = tears.length;
  const pro = m > 0 ? ('solveAlgebraic' as const) : undefined;
  const jacCols = (roots: number[], leaf: 'x' | 'w', cols: number, target: string): FnWrite[] => {
    const w: FnWrite[] = [];
    for (let j = 0; j < cols; j++) {
      const d = g.derivative(roots, new Map([[g.leaf(leaf, j), g.ONE]]));
      d.forEach((node, i) => w.push({ target, index: i * cols + j, node }));
    }
    return w;
  };
  const fns: FnSpec[] = [
    { name: 'rhs', args: ['t', 'x', 'dx'], prologue: pro, writes: der.map((node, i) => ({ target: 'dx', index: i, node })) },
    { name: 'jacx', args: ['t', 'x', 'J'], prologue: pro, zero: ['J'], writes: jacCols(der, 'x', n, 'J') },
    { name: 'lim', args: ['t', 'x', 'pre', 'lo', 'hi'], prologue: pro, writes: [...limPre.map((node, i) => ({ target: 'pre', index: i, node })), ...limLo.map((node, i) => ({ target: 'lo', index: i, node })), ...limHi.map((node, i) => ({ target: 'hi', index: i, node }))] },
    { name: 'traced', args: ['t', 'x', 'out'], prologue: pro, writes: traceNodes.map((node, i) => ({ target: 'out', index: i, node })) },
    { name: 'sig', args: ['t', 'x', 'ins', 'outs'], prologue: pro, writes: [...inputNodes.map((node, i) => ({ target: 'ins', index: i, node })), ...outputNodes.map((node, i) => ({ target: 'outs', index: i, node }))] },
    ...sampleFns.map((f) => ({ ...f, prologue: pro })),
  ];
  if (m > 0) {
    fns.push(
      { name: 'jacw', args: ['t', 'x', 'J'], zero: ['J'], writes: jacCols(der, 'w', m, 'J') },
      { name: 'res', args: ['t', 'x', 'r'], writes: residual.map((node, i) => ({ target: 'r', index: i, node })) },
      { name: 'resx', args: ['t', 'x', 'J'], zero: ['J'], writes: jacCols(residual, 'x', n, 'J') },
      { name: 'resw', args: ['t', 'x', 'J'], zero: ['J'], writes: jacCols(residual, 'w', m, 'J') },
    );
  }
  const mod = compileModule(g, { context: ['p', 'm', 'h', 'w', 'S'], hoist: true, modes: 'array', fns });

  // breakpoints: edges of step / pulse and ramp starts, evaluated per param vector
  const bpNodes: number[] = [];
  for (const id of g.reachable([...der, ...traceNodes, ...inputNodes])) {
    const nd = g.nodes[id];
    if (nd.op === 'step' || nd.op === 'ramp' || nd.op === 'pulse') {
      if (g.nodes[nd.args[1]].deps === 0) bpNodes.push(nd.args[1]);
      if (nd.op === 'pulse' && g.nodes[nd.args[2]].deps === 0) bpNodes.push(g.add(nd.args[1], nd.args[2]));
    }
  }

  // ---- params ----
  const instOverrides = (all: ReadonlyMap<string, number>, inst: Inst): Map<string, number> => {
    const o = new Map<string, number>();
    for (const [k, v] of all) if (k.startsWith(inst.name + '.')) o.set(k.slice(inst.name.length + 1), v);
    return o;
  };
  const makeParams = (overrides?: ReadonlyMap<string, number>): { ok: true; p: Float64Array } | { ok: false; message: string } => {
    const all = overrides ?? new Map<string, number>();
    const p = new Float64Array(nP);
    const lpPinned = new Map<string, number>();
    for (const [k, v] of all) if (!k.includes('.')) lpPinned.set(k, v);
    const lpv = loopParamValues(lpPinned);
    p.set(lpv, lpOffset);
    for (const inst of insts) {
      const r = inst.compiled.makeParams(instOverrides(all, inst));
      if (!r.ok) return { ok: false, message: `${inst.name}: ${r.message}` };
      p.set(r.p, inst.pOffset);
    }
    return { ok: true, p };
  };
  const p0r = makeParams();
  if (!p0r.ok) {
    sink.error('LW506', loop.nameSpan, p0r.message);
    return undefined;
  }
  const params = p0r.p;
  const paramIndex = new Map<string, number>();
  for (const inst of insts) inst.plan.params.forEach((pd, i) => paramIndex.set(`${inst.name}.${pd.name.name}`, inst.pOffset + i));
  loopParams.forEach((pd, i) => paramIndex.set(pd.name.name, lpOffset + i));

  // ---- start vector and operating points ----
  const around = new Map<string, OperatingPoint>();
  const aroundDecl = loop.block.members.find((x): x is AroundDecl => x.kind === 'around');
  for (const inst of insts) {
    if (inst.compiled.kind !== 'plant' || inst.compiled.points.length === 0) continue;
    const chosen = aroundDecl && aroundDecl.target[0]?.name === inst.name ? inst.compiled.points.find((pt) => pt.name === aroundDecl.target[1]?.name) : undefined;
    around.set(inst.name, chosen ?? inst.compiled.points[0]);
  }
  const starts = loop.block.members.filter((x): x is StartDecl => x.kind === 'start' && x.target.length === 2);
  const constNodes = new Map<Expr, number>();
  const constant = (e: Expr, p: Float64Array = params): number => {
    let id = constNodes.get(e);
    if (id === undefined) {
      id = lowerLoop(e);
      constNodes.set(e, id);
    }
    return evaluate(g, [id], { p, t: 0 })[0];
  };
  const startFor = (p: Float64Array, overrides?: ReadonlyMap<string, number>): Float64Array => {
    const x = new Float64Array(n);
    for (const inst of insts) {
      const pt = around.get(inst.name);
      const base = inst.compiled.x0;
      for (let i = 0; i < inst.plan.states.length; i++) {
        x[inst.xOffset + i] = pt && i < inst.plan.declaredStates && pt.givenStates[i] ? pt.x[i] : base[i];
      }
      // state defaults may depend on params that a sweep changes
      inst.plan.sys.states.filter((s) => !s.name.missing).forEach((s, i) => {
        if (s.init && !(pt && pt.givenStates[i])) x[inst.xOffset + i] = evaluate(inst.plan.cg, [inst.plan.constNode(s.init)], { p: p.subarray(inst.pOffset, inst.pOffset + inst.plan.nParams) })[0];
      });
    }
    for (const s of starts) {
      const inst = byName.get(s.target[0].name);
      const i = inst ? inst.plan.states.findIndex((v, k) => k < inst.plan.declaredStates && v.name === s.target[1].name) : -1;
      if (inst && i >= 0) x[inst.xOffset + i] = constant(s.value, p);
    }
    for (const [k, v] of overrides ?? []) {
      const [iname, sname] = k.split('.');
      const inst = byName.get(iname);
      const i = inst ? inst.plan.states.findIndex((vv, kk) => kk < inst.plan.declaredStates && vv.name === sname) : -1;
      if (inst && i >= 0) x[inst.xOffset + i] = v;
    }
    return x;
  };
  const start = startFor(params);

  const states: VarInfo[] = insts.flatMap((inst) => inst.plan.states);
  const nLim = limits.length;
  const nHeld = heldOff;
  const algebraicLoops = sccs.map((c) => c.map((a) => pathText(a.target)));

  const evaluator = (pIn: Float64Array = params): LoopEvaluator => {
    const p = Float64Array.from(pIn);
    const modes = new Float64Array(nLim).fill(LimitMode.CLAMP);
    const held = new Float64Array(nHeld);
    const w = new Float64Array(m);
    const S = { solve: (_t: number, _x: Float64Array) => undefined as void };
    const fns = mod.bind(p, modes, held, w, S) as unknown as Record<string, (...a: unknown[]) => void>;
    for (const l of limits) if (l.sampled) modes[l.index] = LimitMode.CLAMP;
    if (m > 0) S.solve = newtonSolver(n, m, w, fns, algebraicLoops);
    const jw = new Float64Array(n * m), rx = new Float64Array(m * n), rw = new Float64Array(m * m);
    const hn = sampledList.map((s) => new Float64Array(s.nOutputs));
    const xn = sampledList.map((s) => new Float64Array(s.nStates));
    const sampledLimits = { pre: new Float64Array(nLim), lo: new Float64Array(nLim), hi: new Float64Array(nLim) };
    const bps = evaluate(g, bpNodes, { p }).filter((v) => Number.isFinite(v));
    const sortedBps = [...new Set(bps)].sort((a, b) => a - b);
    return {
      p,
      modes,
      held,
      rhs: fns.rhs as (t: number, x: Float64Array, dx: Float64Array) => void,
      jac: m === 0
        ? (fns.jacx as (t: number, x: Float64Array, J: Float64Array) => void)
        : (t, x, J) => {
            fns.jacx(t, x, J);
            fns.jacw(t, x, jw);
            fns.resx(t, x, rx);
            fns.resw(t, x, rw);
            implicitCorrection(n, m, J, jw, rx, rw);
          },
      limitValues: fns.lim as LoopEvaluator['limitValues'],
      traced: fns.traced as LoopEvaluator['traced'],
      signals: fns.sig as LoopEvaluator['signals'],
      sample: (k, t, x) => {
        const s = sampledList[k];
        fns[`sample${k}`](t, x, hn[k], xn[k], sampledLimits.pre, sampledLimits.lo, sampledLimits.hi);
        held.set(hn[k], s.heldOffset);
        x.set(xn[k], s.xOffset);
      },
      breakpoints: () => sortedBps.slice(),
      sampledLimits,
    };
  };
  const def = evaluator(params);

  const compiled: CompiledLoop & LoopExtras = {
    name: loop.name,
    span: loop.block.span,
    description: loop.block.description?.text,
    instances: insts.map((i): InstanceLayout => ({ system: i.compiled, xOffset: i.xOffset, pOffset: i.pOffset })),
    n,
    states,
    params,
    paramIndex,
    makeParams,
    start,
    around,
    limits,
    sampled: sampledList,
    traced,
    evaluationOrder: order,
    algebraicLoops,
    evaluator,
    rhs: def.rhs,
    jac: def.jac,
    constant,
    startFor,
    source: mod.source,
    symbol: loop,
    tracedTimeDependent: traceNodes.map((id) => (g.nodes[id].deps & DEP.t) !== 0),
    tracedSameAs: traceNodes.map((id, i) => {
      const first = traceNodes.indexOf(id);
      return first < i && traced[first].offset === traced[i].offset ? first : i;
    }),
    text: input.text,
    periodOf: (k, p) => evaluate(g, [insts.find((i) => i.name === sampledList[k].instance)!.disc!.constant(insts.find((i) => i.name === sampledList[k].instance)!.plan.sample!.period)], { p })[0],
  };
  return compiled;
}

/** Loop-level helpers the run driver uses beyond the shared interface. */
export interface LoopExtras {
  /** Value of a loop-level constant expression (start, sweep values, durations) for a param vector. */
  constant(e: Expr, p?: Float64Array): number;
  /** Start vector for a param vector, with extra start values by `Inst.state` (SI). */
  startFor(p: Float64Array, overrides?: ReadonlyMap<string, number>): Float64Array;
  /** The generated source (for inspection). */
  source: string;
  /** Sample period of sampled controller k for a param vector. */
  periodOf(k: number, p: Float64Array): number;
  /** Per traced signal: does it depend on time directly (signal functions), not only through states? */
  tracedTimeDependent: boolean[];
  /**
   * Per traced signal: the first traced signal with the same value (the same node of the loop's
   * expression graph, e.g. an output that is a state) and the same unit offset, or its own index.
   */
  tracedSameAs: number[];
  /** The loop's symbol and the document text (run options, sweeps and expects are read from them). */
  symbol: LoopSymbol;
  text: string;
}

function traceInfo(req: TraceRequest, symbols: SymbolTable, byName: Map<string, Inst>, limits: LoopLimit[], inferred?: InferredUnits): TracedSignal {
  const e = req.expr;
  const t = symbols.resolved.get(e);
  if (t?.kind === 'signal') {
    const u = displayUnit(signalUnitText(t.decl, inferred));
    return { name: req.name, kind: 'signal', unit: u.text, scale: u.scale, offset: u.offset, shown: req.shown };
  }
  if (t?.kind === 'member' && e.kind === 'member') {
    const inst = byName.get(e.path[0].name);
    const m = t.member;
    if (inst) {
      const list = m.kind === 'state' ? inst.plan.states : m.kind === 'input' ? inst.plan.inputs : m.kind === 'output' ? inst.plan.outputs : undefined;
      const v = list?.find((x) => x.name === m.name);
      if (v) {
        const lim = m.kind === 'input' || m.kind === 'output' ? limits.find((l) => l.instance === inst.name && l.info.name === m.name && l.info.on === m.kind) : undefined;
        const kind = inst.compiled.kind === 'controller' ? (m.kind === 'state' ? 'controller' : (m.kind as 'input' | 'output')) : (m.kind as 'state' | 'input' | 'output');
        return { name: req.name, kind, instance: inst.name, unit: v.unit, scale: v.scale, offset: v.offset, limit: lim?.index, shown: req.shown, description: inst.compiled.description };
      }
    }
  }
  return { name: req.name, kind: 'expr', unit: '', scale: 1, offset: 0, shown: req.shown };
}

/** Solves A X = B in place (A m×m, B m×k, row-major) by Gaussian elimination with partial pivoting; false when singular. */
export function solveInPlace(A: Float64Array, B: Float64Array, m: number, k: number): boolean {
  for (let c = 0; c < m; c++) {
    let piv = c, best = Math.abs(A[c * m + c]);
    for (let r = c + 1; r < m; r++) if (Math.abs(A[r * m + c]) > best) (best = Math.abs(A[r * m + c])), (piv = r);
    if (!(best > 0) || !Number.isFinite(best)) return false;
    if (piv !== c) {
      for (let j = 0; j < m; j++) [A[c * m + j], A[piv * m + j]] = [A[piv * m + j], A[c * m + j]];
      for (let j = 0; j < k; j++) [B[c * k + j], B[piv * k + j]] = [B[piv * k + j], B[c * k + j]];
    }
    for (let r = c + 1; r < m; r++) {
      const f = A[r * m + c] / A[c * m + c];
      if (f === 0) continue;
      for (let j = c; j < m; j++) A[r * m + j] -= f * A[c * m + j];
      for (let j = 0; j < k; j++) B[r * k + j] -= f * B[c * k + j];
    }
  }
  for (let c = m - 1; c >= 0; c--) {
    for (let j = 0; j < k; j++) {
      let s = B[c * k + j];
      for (let r = c + 1; r < m; r++) s -= A[c * m + r] * B[r * k + j];
      B[c * k + j] = s / A[c * m + c];
    }
  }
  return true;
}

/** J ← J − Jw·Rw⁻¹·Rx: the implicit-function correction for torn algebraic-loop unknowns. */
function implicitCorrection(n: number, m: number, J: Float64Array, jw: Float64Array, rx: Float64Array, rw: Float64Array): void {
  const X = Float64Array.from(rx);
  if (!solveInPlace(Float64Array.from(rw), X, m, n)) {
    J.fill(NaN);
    return;
  }
  for (let i = 0; i < n; i++) for (let k = 0; k < m; k++) {
    const a = jw[i * m + k];
    if (a === 0) continue;
    for (let j = 0; j < n; j++) J[i * n + j] -= a * X[k * n + j];
  }
}

/** Newton's method with the exact Jacobian of the residual, bounded, with step halving. */
function newtonSolver(n: number, m: number, w: Float64Array, fns: Record<string, (...a: unknown[]) => void>, loops: string[][]) {
  const r = new Float64Array(m), J = new Float64Array(m * m), d = new Float64Array(m), w0 = new Float64Array(m);
  const text = loops.map((c) => c.join(' → ')).join('; ');
  const norm = () => {
    let s = 0;
    for (let i = 0; i < m; i++) s = Math.max(s, Math.abs(r[i]) / (1 + Math.abs(w[i])));
    return s;
  };
  void n;
  return (t: number, x: Float64Array) => {
    fns.res(t, x, r);
    let res = norm();
    for (let it = 0; it < 60 && !(res <= 1e-12); it++) {
      fns.resw(t, x, J);
      for (let i = 0; i < m; i++) d[i] = -r[i];
      if (!solveInPlace(J, d, m, 1)) break;
      w0.set(w);
      let lambda = 1;
      let improved = false;
      for (let h = 0; h < 12; h++) {
        for (let i = 0; i < m; i++) w[i] = w0[i] + lambda * d[i];
        fns.res(t, x, r);
        const nr = norm();
        if (Number.isFinite(nr) && nr < res) {
          res = nr;
          improved = true;
          break;
        }
        lambda /= 2;
      }
      if (!improved) {
        w.set(w0);
        fns.res(t, x, r);
        break;
      }
    }
    if (!(res <= 1e-9)) {
      const worst = Math.max(...Array.from(r, Math.abs));
      throw new AlgebraicLoopFailure(t, worst, text);
    }
  };
}
