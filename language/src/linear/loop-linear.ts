// The closed loop linearized at its operating point, built from the parts: each instance's own
// A, B, C, D (jacobian.ts, from the compiler's exact Jacobians) and the linearized wiring, whose
// arrows are differentiated by forward-mode AD over the AST (ad.ts). This is independent of the
// compiled loop's own Jacobian, and the tests hold the two against each other.
//
// Notation: x the joint state (plants, then controllers, LANGUAGE.md §5), u every instance input
// and y every instance output (instance by instance, in layout order), r the loop signals that
// arrows read. Blockwise x' = A x + B u, y = C x + D u. Each arrow linearizes to
// u = Wy y + Wx x + Wr r, so with M = I − Wy D and K = Wy C + Wx:
//   u = M⁻¹ (K x + Wr r),   x' = (A + B M⁻¹ K) x + B M⁻¹ Wr r,   y = (C + D M⁻¹ K) x + D M⁻¹ Wr r.
// M singular means the wiring has no unique solution (an algebraic loop without one).
//
// Breaking the loop at instance input j: the arrow into j is cut and j is driven by v; the value
// the arrow would give is z = Wy[j] y + Wx[j] x. The loop transfer is L = −G_{v→z} (the usual
// negative-feedback sign: L = C·P for u = −C·y around P).
//
// The closed-loop operating point: plant states from the loop's `around` points (the first point
// of each plant by default, zero without one); the states of controllers and the hidden states of
// plants are solved so that their derivatives vanish and the wired plant inputs equal the
// point's inputs (Newton with exact Jacobians and minimum-norm least-squares steps from the
// default start, so an integrator takes the value whose output holds the plant input). Loop
// signals are taken at t = 0. Sampled controllers enter by their continuous relations (their
// discrete matrices are reported per instance).
//
// API
//   loopLinear(analysis, loopName?) → LoopLinear             memoised in analysis.cache
//   breakAt(lin, input) → StateSpace                          L(s) cut at an instance input
//   drivenInputs(lin) → number[]                              plant inputs that controllers drive

import { Matrix, pseudoInverse } from 'ml-matrix';
import type { Analysis } from '../analysis';
import type { LoopSymbol } from '../check/symbols';
import { compileAnalysis, type Compiled } from '../model/compile';
import type { CompiledSystem, InstanceLayout, VarInfo } from '../model/types';
import type { Expr, QuantityExpr, SignalDecl } from '../syntax/ast';
import { walkExpr } from '../syntax/ast';
import { constant, evalDual, seed, type AdEnv, type Dual } from './ad';
import { identity, matAdd, matMul, solve, zeros, type Mat } from './dense';
import { completeHidden, systemJacobians } from './jacobian';
import type { StateSpace } from './lti';
import { quantityTable } from './model-system';

export interface InstanceLinear {
  layout: InstanceLayout;
  name: string;
  kind: 'plant' | 'controller';
  ss: StateSpace;
  x: Float64Array;
  u: Float64Array;
  y: Float64Array;
  /** Offsets of its inputs and outputs in the joint u and y. */
  uOffset: number;
  yOffset: number;
}

export interface SignalInput {
  name: string;
  decl: SignalDecl;
  /** Value at t = 0 (SI). */
  value: number;
}

export interface LoopLinear {
  ok: boolean;
  problem?: string;
  name: string;
  compiled?: Compiled;
  instances: InstanceLinear[];
  states: VarInfo[];
  inputs: VarInfo[];
  outputs: VarInfo[];
  signals: SignalInput[];
  /** Closed-loop operating point: joint state, every instance input and output (SI). */
  x: Float64Array;
  u: Float64Array;
  y: Float64Array;
  /** Closed-loop state derivative at the operating point (SI). */
  residual: Float64Array;
  /** Closed loop from the loop signals: x' = A x + B r, y = C x + D r; inputs u = Cu x + Du r. */
  closed: StateSpace;
  Cu: Mat;
  Du: Mat;
  /** The blocks and the linearized wiring. */
  blocks: { A: Mat; B: Mat; C: Mat; D: Mat };
  W: { y: Mat; x: Mat; r: Mat };
  /** Which joint inputs an arrow feeds (false for unwired ones). */
  wired: boolean[];
  /** Instance outputs each arrow reads, structurally: arrowReads[j] = output indices. */
  arrowReads: number[][];
  notes: string[];
  /** Value (SI) of a loop expression at time t with the given joint state, inputs and outputs. */
  evalExpr(e: Expr, at: { x: Float64Array; u: Float64Array; y: Float64Array }, t: number): number;
  /** Values (SI) of every loop signal at time t, by name. */
  signalsAt(t: number): Map<string, number>;
}

function failed(name: string, problem: string): LoopLinear {
  const e: Mat = [];
  return {
    ok: false, problem, name, instances: [], states: [], inputs: [], outputs: [], signals: [], x: new Float64Array(), u: new Float64Array(),
    y: new Float64Array(), residual: new Float64Array(), closed: { A: e, B: e, C: e, D: e }, Cu: e, Du: e, blocks: { A: e, B: e, C: e, D: e },
    W: { y: e, x: e, r: e }, wired: [], arrowReads: [], notes: [], evalExpr: () => NaN, signalsAt: () => new Map(),
  };
}

export function loopLinear(analysis: Analysis, loopName?: string): LoopLinear {
  const key = `linear:loop:${loopName ?? ''}`;
  const hit = analysis.cache.get(key) as LoopLinear | undefined;
  if (hit) return hit;
  let r: LoopLinear;
  try {
    r = build(analysis, loopName);
  } catch (err) {
    r = failed(loopName ?? '', `internal error in the linear analysis (please report): ${(err as Error).message}`);
  }
  analysis.cache.set(key, r);
  return r;
}

interface Ctx {
  analysis: Analysis;
  loop: LoopSymbol;
  compiled: Compiled;
  inst: InstanceLayout[];
  byName: Map<string, number>;
  uOff: number[];
  yOff: number[];
  nu: number;
  ny: number;
  arrowOf: Map<number, Expr>;
  signals: SignalDecl[];
  signalIndex: Map<SignalDecl, number>;
  quantity?: (q: QuantityExpr) => number | undefined;
}

/** Values of every input and output at joint state x (lazily, through feedthrough). */
function evaluateSignals(ctx: Ctx, x: Float64Array, t: number): { u: Float64Array; y: Float64Array } {
  const u = new Float64Array(ctx.nu).fill(NaN), y = new Float64Array(ctx.ny).fill(NaN);
  const uDone = new Set<number>(), yDone = new Set<number>(), busy = new Set<string>();
  const xs = (k: number) => x.subarray(ctx.inst[k].xOffset, ctx.inst[k].xOffset + ctx.inst[k].system.states.length);
  const outputsOf = (k: number): void => {
    if (yDone.has(k) || busy.has(`y${k}`)) return;
    busy.add(`y${k}`);
    const sys = ctx.inst[k].system;
    const uk = new Float64Array(sys.inputs.length);
    for (let j = 0; j < uk.length; j++) {
      const needed = sys.feedthrough.some((row) => row[j]);
      uk[j] = needed ? inputValue(ctx.uOff[k] + j) : 0;
    }
    const yk = new Float64Array(sys.outputs.length);
    sys.g(xs(k), uk, sys.params, yk);
    y.set(yk, ctx.yOff[k]);
    yDone.add(k);
    busy.delete(`y${k}`);
  };
  const inputValue = (j: number): number => {
    if (uDone.has(j)) return u[j];
    if (busy.has(`u${j}`)) return NaN;
    busy.add(`u${j}`);
    const e = ctx.arrowOf.get(j);
    const v = e ? evalDual(e, wiringEnv(ctx, x, t, 0, { y: (o) => { outputsOf(ownerOfOutput(ctx, o)); return y[o]; }, u: inputValue })).v : 0;
    u[j] = v;
    uDone.add(j);
    busy.delete(`u${j}`);
    return v;
  };
  for (let k = 0; k < ctx.inst.length; k++) outputsOf(k);
  for (let j = 0; j < ctx.nu; j++) inputValue(j);
  return { u, y };
}

function ownerOfOutput(ctx: Ctx, o: number): number {
  let k = 0;
  while (k + 1 < ctx.inst.length && ctx.yOff[k + 1] <= o) k++;
  return k;
}

/**
 * AD environment of loop expressions. With k > 0, seeds are laid out as [y (ny), x (n), r (ns)]
 * and outputs, states and signals read their seed; with k = 0 everything is a value.
 */
function wiringEnv(ctx: Ctx, x: Float64Array, t: number, k: number, read: { y(o: number): number; u(j: number): number }): AdEnv {
  const { analysis, compiled } = ctx;
  const symbols = analysis.symbols;
  const n = compiled.n;
  const signalValue = (d: SignalDecl, depth: number): number => {
    if (depth > 32) return NaN;
    return evalDual(d.value, { k: 0, t, quantity: ctx.quantity, name: (e) => names(e, 0, depth + 1) }).v;
  };
  const names = (e: Expr, kk: number, depth: number): Dual | undefined => {
    const tg = symbols.resolved.get(e);
    if (!tg) return undefined;
    switch (tg.kind) {
      case 'builtin':
        return tg.name === 'pi' ? constant(Math.PI, kk) : tg.name === 't' ? constant(t, kk) : undefined;
      case 'signal': {
        const v = signalValue(tg.decl, depth);
        const i = ctx.signalIndex.get(tg.decl);
        return kk > 0 && i !== undefined ? seed(v, kk, ctx.ny + n + i) : constant(v, kk);
      }
      case 'loopParam':
        return constant(compiled.constant(tg.decl.value), kk);
      case 'pointValue': {
        if (e.kind !== 'member') return undefined;
        const ki = ctx.byName.get(e.path[0].name);
        if (ki === undefined) return undefined;
        const pt = ctx.inst[ki].system.points.find((p) => p.name === tg.point.name);
        const v = pt?.values.get(tg.member.name);
        return v === undefined ? undefined : constant(v, kk);
      }
      case 'member': {
        if (e.kind !== 'member') return undefined;
        const ki = ctx.byName.get(e.path[0].name);
        if (ki === undefined) return undefined;
        const sys = ctx.inst[ki].system;
        const m = tg.member;
        if (m.kind === 'output') {
          const i = sys.outputs.findIndex((v) => v.name === m.name);
          if (i < 0) return undefined;
          const o = ctx.yOff[ki] + i;
          return kk > 0 ? seed(read.y(o), kk, o) : constant(read.y(o), kk);
        }
        if (m.kind === 'state') {
          const i = sys.states.findIndex((v, s) => s < sys.declaredStates && v.name === m.name);
          if (i < 0) return undefined;
          const xi = ctx.inst[ki].xOffset + i;
          return kk > 0 ? seed(x[xi], kk, ctx.ny + xi) : constant(x[xi], kk);
        }
        if (m.kind === 'input') {
          const i = sys.inputs.findIndex((v) => v.name === m.name);
          if (i < 0) return undefined;
          const j = ctx.uOff[ki] + i;
          const src = ctx.arrowOf.get(j);
          if (kk > 0 && src && depth < 32) return evalDual(src, { k: kk, t, quantity: ctx.quantity, name: (q) => names(q, kk, depth + 1) });
          return constant(read.u(j), kk);
        }
        if (m.kind === 'param') {
          const v = sys.params[sys.paramIndex.get(m.name) ?? -1];
          return v === undefined ? undefined : constant(v, kk);
        }
        return undefined;
      }
      default:
        return undefined;
    }
  };
  return { k, t, quantity: ctx.quantity, name: (e) => names(e, k, 0) };
}

/** Linearized wiring at state x: rows per joint input, columns y | x | r. */
function wiringJacobian(ctx: Ctx, x: Float64Array, y: Float64Array, u: Float64Array, t: number): { Wy: Mat; Wx: Mat; Wr: Mat } {
  const n = ctx.compiled.n, ns = ctx.signals.length;
  const k = ctx.ny + n + ns;
  const Wy = zeros(ctx.nu, ctx.ny), Wx = zeros(ctx.nu, n), Wr = zeros(ctx.nu, ns);
  for (const [j, e] of ctx.arrowOf) {
    const d = evalDual(e, wiringEnv(ctx, x, t, k, { y: (o) => y[o], u: (i) => u[i] })).d;
    for (let c = 0; c < ctx.ny; c++) Wy[j][c] = d[c];
    for (let c = 0; c < n; c++) Wx[j][c] = d[ctx.ny + c];
    for (let c = 0; c < ns; c++) Wr[j][c] = d[ctx.ny + n + c];
  }
  return { Wy, Wx, Wr };
}

/** Block-diagonal instance models at joint state x with inputs u. */
function blocksAt(ctx: Ctx, x: Float64Array, u: Float64Array): { A: Mat; B: Mat; C: Mat; D: Mat; per: StateSpace[] } {
  const n = ctx.compiled.n;
  const A = zeros(n, n), B = zeros(n, ctx.nu), C = zeros(ctx.ny, n), D = zeros(ctx.ny, ctx.nu);
  const per: StateSpace[] = [];
  ctx.inst.forEach((L, k) => {
    const sys = L.system;
    const nx = sys.states.length;
    const ss = systemJacobians(sys, x.slice(L.xOffset, L.xOffset + nx), u.slice(ctx.uOff[k], ctx.uOff[k] + sys.inputs.length));
    per.push(ss);
    const xo = L.xOffset, uo = ctx.uOff[k], yo = ctx.yOff[k];
    ss.A.forEach((r, i) => r.forEach((v, j) => (A[xo + i][xo + j] = v)));
    ss.B.forEach((r, i) => r.forEach((v, j) => (B[xo + i][uo + j] = v)));
    ss.C.forEach((r, i) => r.forEach((v, j) => (C[yo + i][xo + j] = v)));
    ss.D.forEach((r, i) => r.forEach((v, j) => (D[yo + i][uo + j] = v)));
  });
  return { A, B, C, D, per };
}

interface Closed {
  closed: StateSpace;
  Cu: Mat;
  Du: Mat;
  ok: boolean;
}

function closeLoop(blk: { A: Mat; B: Mat; C: Mat; D: Mat }, W: { Wy: Mat; Wx: Mat; Wr: Mat }): Closed {
  const nu = W.Wy.length;
  const M = matAdd(identity(nu), matMul(W.Wy, blk.D), -1);
  const K = matAdd(matMul(W.Wy, blk.C), W.Wx);
  const ns = W.Wr[0]?.length ?? 0;
  const X = nu ? solve(M, K.map((r, i) => r.concat(W.Wr[i]))) : [];
  if (!X) {
    const e: Mat = [];
    return { ok: false, closed: { A: e, B: e, C: e, D: e }, Cu: e, Du: e };
  }
  const n = blk.A.length;
  const Cu = X.map((r) => r.slice(0, n)), Du = X.map((r) => r.slice(n, n + ns));
  const fixEmpty = (m: Mat, r: number, c: number): Mat => (m.length === r ? m : zeros(r, c));
  const CuF = fixEmpty(Cu, nu, n), DuF = fixEmpty(Du, nu, ns);
  return {
    ok: true,
    Cu: CuF,
    Du: DuF,
    closed: {
      A: matAdd(blk.A, matMul(blk.B, CuF)),
      B: nu ? matMul(blk.B, DuF) : zeros(n, ns),
      C: matAdd(blk.C, matMul(blk.D, CuF)),
      D: nu ? matMul(blk.D, DuF) : zeros(blk.C.length, ns),
    },
  };
}

function build(analysis: Analysis, loopName?: string): LoopLinear {
  const cr = compileAnalysis(analysis, loopName);
  const loop = loopName ? analysis.symbols.loops.get(loopName) : analysis.symbols.loops.values().next().value;
  const name = loop?.name ?? loopName ?? '';
  if (!cr.loop || !loop) return failed(name, cr.reason ?? 'the loop could not be compiled');
  const compiled = cr.loop;
  const inst = compiled.instances;
  const uOff: number[] = [], yOff: number[] = [];
  let nu = 0, ny = 0;
  for (const L of inst) {
    uOff.push(nu);
    yOff.push(ny);
    nu += L.system.inputs.length;
    ny += L.system.outputs.length;
  }
  const byName = new Map(inst.map((L, k) => [L.system.instance, k]));
  const arrowOf = new Map<number, Expr>();
  const arrowReads: number[][] = Array.from({ length: nu }, () => []);
  const signals: SignalDecl[] = [];
  const signalIndex = new Map<SignalDecl, number>();
  for (const m of loop.block.members) {
    if (m.kind !== 'arrow' || m.target.length !== 2) continue;
    const k = byName.get(m.target[0].name);
    if (k === undefined) continue;
    const i = inst[k].system.inputs.findIndex((v) => v.name === m.target[1].name);
    if (i < 0 || arrowOf.has(uOff[k] + i)) continue;
    const j = uOff[k] + i;
    arrowOf.set(j, m.source);
    walkExpr(m.source, (e) => {
      const tg = analysis.symbols.resolved.get(e);
      if (tg?.kind === 'signal' && !signalIndex.has(tg.decl)) {
        signalIndex.set(tg.decl, signals.length);
        signals.push(tg.decl);
      }
      if (tg?.kind === 'member' && tg.member.kind === 'output' && e.kind === 'member') {
        const ki = byName.get(e.path[0].name);
        if (ki === undefined) return;
        const o = inst[ki].system.outputs.findIndex((v) => v.name === tg.member.name);
        if (o >= 0) arrowReads[j].push(yOff[ki] + o);
      }
    });
  }
  const ctx: Ctx = { analysis, loop, compiled, inst, byName, uOff, yOff, nu, ny, arrowOf, signals, signalIndex, quantity: quantityTable(analysis) };
  const notes: string[] = [];
  const t0 = 0;

  // ---- closed-loop operating point ----
  const n = compiled.n;
  const x = new Float64Array(n);
  const target: { j: number; value: number }[] = [];
  const free: number[] = [];
  inst.forEach((L, k) => {
    const sys = L.system;
    if (sys.kind === 'plant') {
      const pt = compiled.around.get(sys.instance);
      for (let i = 0; i < sys.declaredStates; i++) x[L.xOffset + i] = pt ? pt.x[i] : 0;
      for (let i = sys.declaredStates; i < sys.states.length; i++) free.push(L.xOffset + i);
      sys.inputs.forEach((_, i) => target.push({ j: uOff[k] + i, value: pt && pt.givenInputs[i] ? pt.u[i] : NaN }));
    } else {
      for (let i = 0; i < sys.states.length; i++) {
        x[L.xOffset + i] = sys.x0[i];
        free.push(L.xOffset + i);
      }
    }
  });
  const pins = target.filter((p) => Number.isFinite(p.value) && arrowOf.has(p.j));
  const rhsOf = (xx: Float64Array, uu: Float64Array): Float64Array => {
    const dx = new Float64Array(n);
    inst.forEach((L, k) => {
      const sys = L.system;
      const out = new Float64Array(sys.states.length);
      sys.f(xx.slice(L.xOffset, L.xOffset + sys.states.length), uu.slice(uOff[k], uOff[k] + sys.inputs.length), sys.params, out);
      dx.set(out, L.xOffset);
    });
    return dx;
  };
  // Plant hidden states first hold their own parts, then Newton on every free state.
  inst.forEach((L, k) => {
    const sys = L.system;
    if (sys.kind !== 'plant' || sys.declaredStates === sys.states.length) return;
    const pt = compiled.around.get(sys.instance);
    const xs = x.slice(L.xOffset, L.xOffset + sys.states.length);
    const uu = pt ? pt.u : new Float64Array(sys.inputs.length);
    x.set(completeHidden(sys, xs, uu).x, L.xOffset);
    void k;
  });
  let sig = evaluateSignals(ctx, x, t0);
  const resid = (dx: Float64Array, uu: Float64Array): number[] => [...free.map((i) => dx[i]), ...pins.map((p) => uu[p.j] - p.value)];
  let R = resid(rhsOf(x, sig.u), sig.u);
  for (let it = 0; it < 30 && free.length && R.some((v) => v !== 0); it++) {
    const blk = blocksAt(ctx, x, sig.u);
    const W = wiringJacobian(ctx, x, sig.y, sig.u, t0);
    const cl = closeLoop(blk, W);
    if (!cl.ok) break;
    const J = new Matrix([...free.map((i) => free.map((c) => cl.closed.A[i][c])), ...pins.map((p) => free.map((c) => cl.Cu[p.j][c]))]);
    const step = pseudoInverse(J).mmul(Matrix.columnVector(R)).to1DArray();
    if (!step.every(Number.isFinite)) break;
    const before = Math.hypot(...R);
    const xt = Float64Array.from(x);
    let accepted = false;
    for (let lambda = 1, h = 0; h < 30; h++, lambda /= 2) {
      free.forEach((i, c) => (xt[i] = x[i] - lambda * step[c]));
      const st = evaluateSignals(ctx, xt, t0);
      const Rt = resid(rhsOf(xt, st.u), st.u);
      if (Rt.every(Number.isFinite) && Math.hypot(...Rt) < before) {
        x.set(xt);
        sig = st;
        R = Rt;
        accepted = true;
        break;
      }
    }
    if (!accepted) break;
  }

  // ---- linearization there ----
  const blk = blocksAt(ctx, x, sig.u);
  const W = wiringJacobian(ctx, x, sig.y, sig.u, t0);
  const cl = closeLoop(blk, W);
  if (!cl.ok) return failed(name, 'the linearized wiring has no unique solution (an algebraic loop with a singular gain)');
  const residual = rhsOf(x, sig.u);
  const instances: InstanceLinear[] = inst.map((L, k) => ({
    layout: L,
    name: L.system.instance,
    kind: L.system.kind,
    ss: blk.per[k],
    x: x.slice(L.xOffset, L.xOffset + L.system.states.length),
    u: sig.u.slice(uOff[k], uOff[k] + L.system.inputs.length),
    y: sig.y.slice(yOff[k], yOff[k] + L.system.outputs.length),
    uOffset: uOff[k],
    yOffset: yOff[k],
  }));
  for (const p of pins) {
    if (Math.abs(sig.u[p.j] - p.value) > 1e-9 * Math.max(1, Math.abs(p.value))) {
      const v = varOf(inst, uOff, p.j);
      notes.push(`the controllers cannot hold ${v?.qualified ?? 'a plant input'} at its operating value`);
    }
  }
  return {
    ok: true,
    name,
    compiled,
    instances,
    states: compiled.states,
    inputs: inst.flatMap((L) => L.system.inputs),
    outputs: inst.flatMap((L) => L.system.outputs),
    signals: signals.map((d) => ({ name: d.name.name, decl: d, value: evalDual(d.value, wiringEnv(ctx, x, t0, 0, { y: (o) => sig.y[o], u: (j) => sig.u[j] })).v })),
    x,
    u: sig.u,
    y: sig.y,
    residual,
    closed: cl.closed,
    Cu: cl.Cu,
    Du: cl.Du,
    blocks: { A: blk.A, B: blk.B, C: blk.C, D: blk.D },
    W: { y: W.Wy, x: W.Wx, r: W.Wr },
    wired: Array.from({ length: nu }, (_, j) => arrowOf.has(j)),
    arrowReads,
    notes,
    evalExpr: (e, at, t) => evalDual(e, wiringEnv(ctx, at.x, t, 0, { y: (o) => at.y[o], u: (j) => at.u[j] })).v,
    signalsAt: (t) => {
      const out = new Map<string, number>();
      for (const d of loop.signals.values()) out.set(d.name.name, evalDual(d.value, wiringEnv(ctx, x, t, 0, { y: (o) => sig.y[o], u: (j) => sig.u[j] })).v);
      return out;
    },
  };
}

function varOf(inst: InstanceLayout[], uOff: number[], j: number): VarInfo | undefined {
  for (let k = inst.length - 1; k >= 0; k--) if (uOff[k] <= j) return inst[k].system.inputs[j - uOff[k]];
  return undefined;
}

/** Plant inputs (joint indices) whose arrow reads a controller output. */
export function drivenInputs(lin: LoopLinear): number[] {
  const ctrlOutputs = new Set<number>();
  for (const I of lin.instances) if (I.kind === 'controller') for (let i = 0; i < I.y.length; i++) ctrlOutputs.add(I.yOffset + i);
  const out: number[] = [];
  for (const I of lin.instances) {
    if (I.kind !== 'plant') continue;
    for (let i = 0; i < I.u.length; i++) {
      const j = I.uOffset + i;
      if (lin.arrowReads[j]?.some((o) => ctrlOutputs.has(o))) out.push(j);
    }
  }
  return out;
}

/** The open loop cut at joint input j, with the negative-feedback sign: L = −G_{v→z}. */
export function breakAt(lin: LoopLinear, j: number): StateSpace {
  const { blocks: blk, W } = lin;
  const nu = W.y.length, n = blk.A.length;
  const Wy = W.y.map((r, i) => (i === j ? r.map(() => 0) : r));
  const Wx = W.x.map((r, i) => (i === j ? r.map(() => 0) : r));
  const M = matAdd(identity(nu), matMul(Wy, blk.D), -1);
  const K = matAdd(matMul(Wy, blk.C), Wx);
  const e = Array.from({ length: nu }, (_, i) => [i === j ? 1 : 0]);
  const X = solve(M, K.map((r, i) => r.concat(e[i])));
  if (!X) return { A: [[NaN]], B: [[NaN]], C: [[NaN]], D: [[NaN]] };
  const G = X.map((r) => r.slice(0, n)), H = X.map((r) => [r[n]]);
  const A = matAdd(blk.A, matMul(blk.B, G));
  const B = matMul(blk.B, H);
  // z = Wy[j] (C x + D u) + Wx[j] x with u = G x + H v
  const wy = [W.y[j]], wx = [W.x[j]];
  const C = matAdd(matAdd(matMul(wy, blk.C), wx), matMul(matMul(wy, blk.D), G));
  const D = matMul(matMul(wy, blk.D), H);
  return { A, B: n ? B : [], C: [C[0].map((v) => -v)], D: [[-D[0][0]]] };
}
