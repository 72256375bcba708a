// AST → model graph for one system: its structure (the plan: states with hidden ones, params and
// realization slots, linear parts, limits) and the lowering of its equations into a graph whose
// leaves are supplied by the caller (a system on its own, or an instance inside a loop).
//
// Linear parts (transfer relations, PID laws, `linear` blocks) are lowered as
//     x_h' = A x_h + B v,   w = C x_h + D v
// with the matrix entries read from param slots that `makeParams` fills (so a sweep of a gain
// re-realizes without recompiling). Entries that are structurally fixed are constants instead:
// the companion rows and input column of the controllable canonical form of a transfer relation
// (linear/realize.ts documents it: ones above the diagonal, last row −an … −a1, B = e_n,
// C = [bn … b1], D the direct term), the zeros of a PID's diagonal A, a strictly proper
// relation's D = 0. A sampled controller's parts read a second set of slots with the discrete
// matrices (linear/discretize.ts) instead.
//
// PID anti-windup (back-calculation, Åström & Hägglund's tracking form; common practice): with
// `antiwindup = Tt` and a limit on the output, the integrator state xi of realizePid
// (xi' = e, contributing ki·xi) gets the extra input (u_sat − u)/(ki·Tt), i.e. the integral
// term ki·xi moves at (u_sat − u)/Tt, where u is the law's output before its limit and u_sat
// after it.

import type { DiagnosticSink, Span } from '../diagnostics';
import type { SymbolTable, SystemSymbol, Target } from '../check/symbols';
import type { Expr, LimitDecl, LinearBlock, ParamDecl, PidLaw, QuantityExpr, SampleMethod, TransferRel } from '../syntax/ast';
import { walkExpr } from '../syntax/ast';
import { Graph, evaluate, type Op } from './graph';
import { displayUnit, quantitySI, cyclesOf, type DisplayUnit, type InferredUnits, type QuantityTable } from './units';
import type { VarInfo } from './types';
import { ratAdd, ratConst, ratDiv, ratMul, ratNeg, ratPow, ratS, ratSub, relativeDegree, ratDegrees, ratNormalize, type Rational } from '../linear/rational';
import { realizePid, realizeRational } from '../linear/realize';
import { discretize, type DiscretizeMethod } from '../linear/discretize';
import type { StateSpace } from '../linear/lti';

export interface LowerEnv {
  symbols: SymbolTable;
  quantities?: QuantityTable;
  /** Inferred units of loop signals, for showing them (signalUnitText). */
  inferred?: InferredUnits;
  sink: DiagnosticSink;
}

type Structure = 'zero' | 'one' | 'slot';

export interface PartPlan {
  kind: 'transfer' | 'pid' | 'linear';
  span: Span;
  decl: TransferRel | PidLaw | LinearBlock;
  /** First system state index of the part's states, and how many. */
  x0: number;
  n: number;
  /** System input indices feeding the part (v), and whether an anti-windup input follows them. */
  inputs: number[];
  aw: boolean;
  outputs: number[];
  /** Offsets of the continuous A, B, C, D slots in the system's param vector. */
  slot: number;
  /** Offsets of the discrete slots (sampled controllers), else -1. */
  dslot: number;
  structure(mat: 'A' | 'B' | 'C' | 'D', i: number, j: number): Structure;
  /** Column count of B and D (inputs plus the anti-windup column). */
  m: number;
  p: number;
  /** Continuous matrices for a param vector, or why not. */
  matrices(p: Float64Array): { ok: true; ss: StateSpace } | { ok: false; message: string };
}

export interface LimitPlan {
  decl: LimitDecl;
  on: 'input' | 'output';
  target: number;
  name: string;
}

export interface SystemPlan {
  sys: SystemSymbol;
  params: ParamDecl[];
  /** Param slots in total (declared params, then realization slots). */
  nParams: number;
  states: VarInfo[];
  declaredStates: number;
  inputs: VarInfo[];
  outputs: VarInfo[];
  inputUnits: DisplayUnit[];
  outputUnits: DisplayUnit[];
  parts: PartPlan[];
  /** Output index -> the part that gives it (and its row there). */
  outputPart: Map<number, { part: PartPlan; row: number }>;
  limits: LimitPlan[];
  sample?: { method: SampleMethod; period: Expr; span: Span };
  /** Graph of param-only expressions (params, gains, matrices, bounds, start values, points). */
  cg: Graph;
  constNode(e: Expr): number;
  /** Declared param values (SI) with these pinned values; then realization and discretization slots. */
  fillParams(pinned: ReadonlyMap<number, number>): { ok: true; p: Float64Array } | { ok: false; message: string };
  ok: boolean;
}

const BINOP: Record<string, Op> = { '+': 'add', '-': 'sub', '*': 'mul', '/': 'div', '^': 'pow', '<': 'lt', '<=': 'le', '>': 'gt', '>=': 'ge', '==': 'eq', '!=': 'ne', and: 'and', or: 'or' };
const UNARY_FN = new Set(['sin', 'cos', 'tan', 'asin', 'acos', 'atan', 'sinh', 'cosh', 'tanh', 'exp', 'log', 'log10', 'sqrt', 'abs', 'sign']);

/** Resolves a name-like expression to a node; returns undefined when it cannot. */
export type NameLowering = (e: Expr, target: Target | undefined) => number | undefined;

/**
 * Lowers an expression with the whitelisted operations; names go through `names`. Unknown
 * constructs become NaN and are reported through `fail` (they cannot occur in checked code).
 */
export function lowerExpr(g: Graph, e: Expr, env: LowerEnv, names: NameLowering, fail: (span: Span, msg: string) => void): number {
  const rec = (x: Expr): number => lowerExpr(g, x, env, names, fail);
  switch (e.kind) {
    case 'number':
      return g.c(e.value);
    case 'quantity':
      return g.c(quantitySI(e, env.quantities));
    case 'name':
    case 'member':
    case 'deriv': {
      const t = env.symbols.resolved.get(e);
      if (e.kind === 'name' && t?.kind === 'builtin' && t.name === 'pi') return g.c(Math.PI);
      const r = names(e, t);
      if (r === undefined) {
        fail(e.span, `cannot evaluate '${e.kind === 'name' ? e.name : e.kind === 'member' ? e.path.map((p) => p.name).join('.') : e.name.name + "'"}' here`);
        return g.c(NaN);
      }
      return r;
    }
    case 'unary': {
      const a = rec(e.operand);
      if (e.op === '-') return g.neg(a);
      if (e.op === 'not') return g.op('not', [a]);
      return a;
    }
    case 'binary': {
      const op = BINOP[e.op];
      return g.op(op, [rec(e.left), rec(e.right)]);
    }
    case 'if':
      return g.op('if', [rec(e.cond), rec(e.then), rec(e.else)]);
    case 'call': {
      const name = e.callee.name;
      const args = e.args.map((a) => (a.kind === 'list' ? -1 : rec(a)));
      if (UNARY_FN.has(name) && args.length === 1) return g.op(name as Op, args);
      if (name === 'atan2' && args.length === 2) return g.op('atan2', args);
      if ((name === 'min' || name === 'max') && args.length >= 2) return args.slice(1).reduce((acc, a) => g.op(name, [acc, a]), args[0]);
      if (name === 'clamp' && args.length === 3) {
        const [x, lo, hi] = args;
        return g.op('if', [g.op('lt', [x, lo]), lo, g.op('if', [g.op('gt', [x, hi]), hi, x])]);
      }
      if (name === 'lookup' && e.args.length === 3 && e.args[1].kind === 'list' && e.args[2].kind === 'list') {
        const xs = e.args[1].items.map(rec), ys = e.args[2].items.map(rec);
        const k = Math.min(xs.length, ys.length);
        return g.op('lookup', [rec(e.args[0]), ...xs.slice(0, k), ...ys.slice(0, k)], k);
      }
      const t = g.t();
      if (name === 'step' && args.length === 2) return g.op('step', [t, args[0], args[1]]);
      if (name === 'ramp' && args.length === 2) return g.op('ramp', [t, args[0], args[1]]);
      if (name === 'pulse' && args.length === 3) return g.op('pulse', [t, args[0], args[1], args[2]]);
      if (name === 'sine' && args.length === 2) {
        // frequency in Hz counts cycles: ω = 2π f
        const w = hertzFactor(e.args[1], env) === 1 ? g.mul(g.c(2 * Math.PI), args[1]) : args[1];
        return g.op('sine', [t, args[0], w]);
      }
      fail(e.span, `'${name}' cannot be evaluated here`);
      return g.c(NaN);
    }
    default:
      fail(e.span, 'this expression cannot be evaluated');
      return g.c(NaN);
  }
}

/** 1 when an expression is a frequency written in Hz (a literal, or a param whose value is one). */
function hertzFactor(e: Expr, env: LowerEnv, depth = 0): number {
  if (depth > 20) return 0;
  if (e.kind === 'quantity') return cyclesOf(e as QuantityExpr) === 1 ? 1 : 0;
  if (e.kind === 'name' || e.kind === 'member') {
    const t = env.symbols.resolved.get(e);
    if (t?.kind === 'member' && t.member.kind === 'param') return hertzFactor((t.member.decl as ParamDecl).value, env, depth + 1);
    if (t?.kind === 'loopParam') return hertzFactor(t.decl.value, env, depth + 1);
  }
  if (e.kind === 'binary' && (e.op === '*' || e.op === '/')) return Math.max(hertzFactor(e.left, env, depth + 1), e.op === '*' ? hertzFactor(e.right, env, depth + 1) : 0);
  if (e.kind === 'unary') return hertzFactor(e.operand, env, depth + 1);
  return 0;
}

function usesLaplace(e: Expr, symbols: SymbolTable): boolean {
  let found = false;
  walkExpr(e, (x) => {
    if (x.kind === 'name') {
      const t = symbols.resolved.get(x);
      if (t?.kind === 'builtin' && t.name === 's') found = true;
    }
  });
  return found;
}

/** The transfer expression as a rational function of s; constant parts evaluated with `value`. */
export function rationalOf(e: Expr, symbols: SymbolTable, value: (e: Expr) => number): { ok: true; r: Rational } | { ok: false; span: Span; message: string } {
  const rec = (x: Expr): { ok: true; r: Rational } | { ok: false; span: Span; message: string } => rationalOf(x, symbols, value);
  if (!usesLaplace(e, symbols)) return { ok: true, r: ratConst(value(e)) };
  switch (e.kind) {
    case 'name':
      return { ok: true, r: ratS() };
    case 'unary': {
      const a = rec(e.operand);
      if (!a.ok) return a;
      return e.op === '-' ? { ok: true, r: ratNeg(a.r) } : e.op === '+' ? a : { ok: false, span: e.span, message: "'not' of the Laplace variable is not a rational function" };
    }
    case 'binary': {
      if (e.op === '^') {
        if (usesLaplace(e.right, symbols)) return { ok: false, span: e.right.span, message: 's in an exponent is not a rational function of s' };
        const k = value(e.right);
        if (!Number.isInteger(k)) return { ok: false, span: e.right.span, message: `a power of s must be an integer, not ${k}` };
        const a = rec(e.left);
        return a.ok ? { ok: true, r: ratPow(a.r, k) } : a;
      }
      const a = rec(e.left);
      if (!a.ok) return a;
      const b = rec(e.right);
      if (!b.ok) return b;
      switch (e.op) {
        case '+': return { ok: true, r: ratAdd(a.r, b.r) };
        case '-': return { ok: true, r: ratSub(a.r, b.r) };
        case '*': return { ok: true, r: ratMul(a.r, b.r) };
        case '/': return { ok: true, r: ratDiv(a.r, b.r) };
        default: return { ok: false, span: e.opSpan, message: `'${e.op}' of the Laplace variable is not a rational function` };
      }
    }
    case 'call':
      return { ok: false, span: e.span, message: `${e.callee.name}(...) of the Laplace variable is not a rational function of s` };
    case 'if':
      return { ok: false, span: e.span, message: 'a condition on the Laplace variable is not a rational function of s' };
    default:
      return { ok: false, span: e.span, message: 'not a rational function of s' };
  }
}

const toRows = (flat: number[][]): number[][] => flat;

/** Builds the plan of a system (structure, slots, param evaluation). Reports LW5xx on `env.sink`. */
export function planSystem(sys: SystemSymbol, env: LowerEnv, instance: string): SystemPlan {
  const symbols = env.symbols;
  const cg = new Graph();
  let ok = true;
  const fail = (span: Span, msg: string, code = 'LW506') => {
    env.sink.error(code, span, msg);
    ok = false;
  };
  const params = sys.params.filter((p) => !p.name.missing);
  const pIndex = new Map<ParamDecl, number>(params.map((p, i) => [p, i]));
  const nodeCache = new Map<Expr, number>();
  const constNames: NameLowering = (e, t) => {
    if (t?.kind === 'member' && t.member.system === sys && t.member.kind === 'param') {
      const i = pIndex.get(t.member.decl as ParamDecl);
      return i === undefined ? undefined : cg.leaf('p', i);
    }
    return undefined;
  };
  const constNode = (e: Expr): number => {
    let n = nodeCache.get(e);
    if (n === undefined) {
      n = lowerExpr(cg, e, env, constNames, (span, msg) => fail(span, `${msg}: a constant is needed`));
      nodeCache.set(e, n);
    }
    return n;
  };
  const paramNodes = params.map((p) => constNode(p.value));
  const defaults = new Float64Array(params.length);
  for (let i = 0; i < params.length; i++) defaults[i] = evaluate(cg, [paramNodes[i]], { p: defaults })[0];
  const valueAt = (p: Float64Array) => (e: Expr) => evaluate(cg, [constNode(e)], { p })[0];

  const q = (d: { name: { name: string; span: Span }; unit?: { text: string } }, extra?: Partial<VarInfo>): VarInfo => {
    const u = displayUnit(d.unit?.text);
    return { name: d.name.name, qualified: `${instance}.${d.name.name}`, unit: u.text, scale: u.scale, offset: u.offset, span: d.name.span, ...extra };
  };
  const inputs = sys.inputs.filter((x) => !x.name.missing);
  const outputs = sys.outputs.filter((x) => !x.name.missing);
  const inIdx = new Map(inputs.map((x, i) => [x.name.name, i]));
  const outIdx = new Map(outputs.map((x, i) => [x.name.name, i]));
  const states: VarInfo[] = sys.states.filter((s) => !s.name.missing).map((s) => q(s));
  const declaredStates = states.length;
  const inputUnits = inputs.map((x) => displayUnit(x.unit?.text));
  const outputUnits = outputs.map((x) => displayUnit(x.unit?.text));

  const limits: LimitPlan[] = [];
  for (const [name, decl] of sys.limits) {
    if (inIdx.has(name)) limits.push({ decl, on: 'input', target: inIdx.get(name)!, name });
    else if (outIdx.has(name)) limits.push({ decl, on: 'output', target: outIdx.get(name)!, name });
  }
  for (const l of limits) {
    const lo = evaluate(cg, [constNode(l.decl.lo)], { p: defaults })[0];
    const hi = evaluate(cg, [constNode(l.decl.hi)], { p: defaults })[0];
    if (!(lo <= hi)) fail(l.decl.span, `the limit of '${l.name}' has lo > hi (${lo} > ${hi} in SI)`, 'LW505');
  }

  let nSlots = params.length;
  const parts: PartPlan[] = [];
  const outputPart = new Map<number, { part: PartPlan; row: number }>();
  const sampled = sys.kind === 'controller' && sys.sample !== undefined;
  const addState = (v: VarInfo): number => {
    states.push(v);
    return states.length - 1;
  };

  const slotCount = (n: number, m: number, p: number) => n * n + n * m + p * n + p * m;

  // transfer relations
  for (const tr of sys.transfers) {
    if (tr.output.missing || tr.input.missing) continue;
    const oi = outIdx.get(tr.output.name), ii = inIdx.get(tr.input.name);
    if (oi === undefined || ii === undefined) continue;
    const r0 = rationalOf(tr.value, symbols, valueAt(defaults));
    if (!r0.ok) {
      fail(r0.span, r0.message, 'LW502');
      continue;
    }
    const rn = ratNormalize(r0.r);
    const rel = relativeDegree(rn);
    if (rel < 0) {
      fail(tr.value.span, `the transfer relation ${tr.output.name}/${tr.input.name} is improper: its numerator degree exceeds the denominator degree by ${-rel}; add poles (e.g. a roll-off 1/(1 + s/w))`, 'LW501');
      continue;
    }
    const real = realizeRational(rn);
    if (!real.ok) {
      fail(tr.value.span, `the transfer relation ${tr.output.name}/${tr.input.name} cannot be realized: ${real.message}`, 'LW502');
      continue;
    }
    const n = real.order;
    const strictly = rel > 0 || rn.num.every((c) => c === 0);
    const degrees = ratDegrees(rn);
    const x0 = states.length;
    for (let k = 0; k < n; k++) {
      addState({ name: `${tr.output.name}/${tr.input.name}#${k + 1}`, qualified: `${instance}.${tr.output.name}/${tr.input.name}#${k + 1}`, unit: '', scale: 1, offset: 0, span: tr.span, hidden: { kind: 'transfer', span: tr.span, role: `state ${k + 1} of ${n} of the controllable canonical realization` } });
    }
    const part: PartPlan = {
      kind: 'transfer', span: tr.span, decl: tr, x0, n, inputs: [ii], aw: false, outputs: [oi], slot: nSlots, dslot: -1, m: 1, p: 1,
      structure: (mat, i, j) => {
        if (mat === 'A') return i < n - 1 ? (j === i + 1 ? 'one' : 'zero') : 'slot';
        if (mat === 'B') return i === n - 1 ? 'one' : 'zero';
        if (mat === 'D') return strictly ? 'zero' : 'slot';
        return 'slot';
      },
      matrices: (p) => {
        const r = rationalOf(tr.value, symbols, valueAt(p));
        if (!r.ok) return { ok: false, message: r.message };
        const g = ratNormalize(r.r);
        const d = ratDegrees(g);
        if (d.den !== degrees.den || (strictly && relativeDegree(g) <= 0 && !g.num.every((c) => c === 0))) {
          return { ok: false, message: `the transfer relation ${tr.output.name}/${tr.input.name} changes its order for these param values` };
        }
        const rr = realizeRational(g);
        if (!rr.ok) return { ok: false, message: rr.message };
        return { ok: true, ss: rr.ss };
      },
    };
    nSlots += slotCount(n, 1, 1);
    parts.push(part);
    outputPart.set(oi, { part, row: 0 });
  }

  // PID laws
  for (const pid of sys.pids) {
    if (pid.output.missing || pid.input.missing) continue;
    const oi = outIdx.get(pid.output.name), ii = inIdx.get(pid.input.name);
    if (oi === undefined || ii === undefined) continue;
    const entry = (k: string) => pid.entries.find((e) => e.name.name === k)?.value;
    const hasI = entry('ki') !== undefined, hasD = entry('kd') !== undefined;
    if (hasD && entry('rolloff') === undefined) {
      fail(entry('kd')!.span, `the derivative term of the pid law for '${pid.output.name}' needs a roll-off: a pure derivative kd·s is improper; add 'rolloff = ...' (rad/s)`, 'LW504');
      continue;
    }
    const limited = sys.limits.has(pid.output.name);
    const awExpr = entry('antiwindup');
    if (awExpr && !limited) {
      env.sink.warning('LW507', awExpr.span, `anti-windup of the pid law for '${pid.output.name}' has no effect without a limit on '${pid.output.name}': declare 'limit ${pid.output.name} within LO .. HI' in ${sys.name}`);
    }
    const aw = !!awExpr && limited && hasI;
    const inU = inputUnits[ii];
    const x0 = states.length;
    const roles: string[] = [];
    if (hasI) {
      roles.push('integral');
      addState({ name: `${pid.output.name}:integral`, qualified: `${instance}.${pid.output.name}:integral`, unit: inU.text ? `${inU.text}*s` : 's', scale: inU.scale, offset: 0, span: pid.span, hidden: { kind: 'pid', span: pid.span, role: 'integral of the error' } });
    }
    if (hasD) {
      roles.push('filter');
      addState({ name: `${pid.output.name}:filter`, qualified: `${instance}.${pid.output.name}:filter`, unit: inU.text, scale: inU.scale, offset: 0, span: pid.span, hidden: { kind: 'pid', span: pid.span, role: 'error through the derivative roll-off filter' } });
    }
    const n = roles.length;
    const m = aw ? 2 : 1;
    const part: PartPlan = {
      kind: 'pid', span: pid.span, decl: pid, x0, n, inputs: [ii], aw, outputs: [oi], slot: nSlots, dslot: -1, m, p: 1,
      structure: (mat, i, j) => {
        if (mat === 'A') return i === j && roles[i] === 'filter' ? 'slot' : 'zero';
        if (mat === 'B') return j === 0 ? (roles[i] === 'integral' ? 'one' : 'slot') : roles[i] === 'integral' ? 'slot' : 'zero';
        if (mat === 'D') return j === 0 ? 'slot' : 'zero';
        return 'slot';
      },
      matrices: (p) => {
        const v = valueAt(p);
        const gains = { kp: entry('kp') ? v(entry('kp')!) : 0, ki: hasI ? v(entry('ki')!) : 0, kd: hasD ? v(entry('kd')!) : 0, rolloff: hasD ? v(entry('rolloff')!) : undefined };
        const r = realizePid(gains);
        if (!r.ok) return { ok: false, message: `pid law for '${pid.output.name}': ${r.message}` };
        // realizePid omits a state whose gain is zero; keep the planned layout.
        const A = Array.from({ length: n }, () => new Array<number>(n).fill(0));
        const B = Array.from({ length: n }, () => new Array<number>(m).fill(0));
        const C = [new Array<number>(n).fill(0)];
        const D = [new Array<number>(m).fill(0)];
        D[0][0] = r.ss.D[0][0];
        r.states.forEach((name, k) => {
          const i = roles.indexOf(name);
          if (i < 0) return;
          A[i][i] = r.ss.A[k][k];
          B[i][0] = r.ss.B[k][0];
          C[0][i] = r.ss.C[0][k];
        });
        if (hasI && roles[0] === 'integral' && r.states.indexOf('integral') < 0) B[0][0] = 1;
        if (aw) {
          const tt = v(awExpr!);
          if (!(tt > 0)) return { ok: false, message: `anti-windup time of the pid law for '${pid.output.name}' must be positive` };
          B[0][1] = gains.ki !== 0 ? 1 / (gains.ki * tt) : 0;
        }
        return { ok: true, ss: { A, B, C, D } };
      },
    };
    nSlots += slotCount(n, m, 1);
    parts.push(part);
    outputPart.set(oi, { part, row: 0 });
  }

  // linear blocks: the block describes the whole system
  for (const lb of sys.linears) {
    const mat = (k: string) => lb.entries.find((e) => e.name.name === k)?.value;
    const rowsOf = (k: string): Expr[][] => {
      const e = mat(k);
      if (!e) return [];
      if (e.kind === 'matrix') return e.rows;
      return [[e]];
    };
    const A = rowsOf('A'), B = rowsOf('B'), C = rowsOf('C'), D = rowsOf('D');
    const nIn = inputs.length, nOut = outputs.length;
    let n: number;
    let x0: number;
    if (sys.linearUsesDeclaredStates) {
      n = declaredStates;
      x0 = 0;
    } else {
      n = A.length;
      x0 = states.length;
      for (let k = 0; k < n; k++) addState({ name: `linear#${k + 1}`, qualified: `${instance}.linear#${k + 1}`, unit: '', scale: 1, offset: 0, span: lb.span, hidden: { kind: 'linear', span: lb.span, role: `state ${k + 1} of the linear block` } });
    }
    const shapeOk = (M: Expr[][], r: number, c: number) => (r === 0 || c === 0 ? M.length === 0 || M.every((row) => row.length === 0) || (M.length === r && M.every((row) => row.length === c)) : M.length === r && M.every((row) => row.length === c));
    if (!shapeOk(A, n, n) || !shapeOk(B, n, nIn) || !shapeOk(C, nOut, n) || !shapeOk(D, nOut, nIn)) {
      // sizes are the unit checker's LW309; without fitting sizes the block cannot be compiled
      ok = false;
      continue;
    }
    const at = (M: Expr[][], i: number, j: number): Expr | undefined => M[i]?.[j];
    const constZero = (M: Expr[][], i: number, j: number): boolean => {
      const e = at(M, i, j);
      if (!e) return true;
      const nd = constNode(e);
      return cg.isConst(nd) && cg.value(nd) === 0;
    };
    const part: PartPlan = {
      kind: 'linear', span: lb.span, decl: lb, x0, n, inputs: inputs.map((_, i) => i), aw: false, outputs: outputs.map((_, i) => i), slot: nSlots, dslot: -1, m: nIn, p: nOut,
      structure: (mk, i, j) => (constZero({ A, B, C, D }[mk], i, j) ? 'zero' : 'slot'),
      matrices: (p) => {
        const v = valueAt(p);
        const num = (M: Expr[][], r: number, c: number) => Array.from({ length: r }, (_, i) => Array.from({ length: c }, (_, j) => (at(M, i, j) ? v(at(M, i, j)!) : 0)));
        return { ok: true, ss: { A: toRows(num(A, n, n)), B: num(B, n, nIn), C: num(C, nOut, n), D: num(D, nOut, nIn) } };
      },
    };
    nSlots += slotCount(n, nIn, nOut);
    parts.push(part);
    outputs.forEach((_, i) => outputPart.set(i, { part, row: i }));
    break; // one linear block per system
  }

  let sample: SystemPlan['sample'];
  if (sampled && sys.sample) {
    const method = (sys.sample.method?.name ?? 'tustin') as SampleMethod;
    sample = { method, period: sys.sample.period, span: sys.sample.span };
    const T = evaluate(cg, [constNode(sys.sample.period)], { p: defaults })[0];
    if (!(T > 0) || !Number.isFinite(T)) fail(sys.sample.period.span, `the sample period must be positive (it is ${T} s)`, 'LW503');
    for (const part of parts) {
      part.dslot = nSlots;
      nSlots += slotCount(part.n, part.m, part.p);
    }
  }

  const plan: SystemPlan = {
    sys, params, nParams: nSlots, states, declaredStates, inputs: inputs.map((x) => q(x)), outputs: outputs.map((x) => q(x)), inputUnits, outputUnits,
    parts, outputPart, limits, sample, cg, constNode, ok,
    fillParams: (pinned) => {
      const p = new Float64Array(nSlots);
      for (let i = 0; i < params.length; i++) {
        const pin = pinned.get(i);
        p[i] = pin !== undefined ? pin : evaluate(cg, [paramNodes[i]], { p })[0];
      }
      for (const part of parts) {
        const r = part.matrices(p);
        if (!r.ok) return { ok: false, message: r.message };
        writeSlots(p, part.slot, r.ss, part);
        if (part.dslot >= 0 && sample) {
          const T = evaluate(cg, [constNode(sample.period)], { p })[0];
          const method: DiscretizeMethod = sample.method === 'hold' ? 'zoh' : sample.method;
          const d = discretize(r.ss, T, method);
          if (!d.ok || !d.ss) return { ok: false, message: `discretizing ${part.kind === 'transfer' ? 'a transfer relation' : part.kind === 'pid' ? 'a pid law' : 'the linear block'} of ${sys.name}: ${d.message ?? 'failed'}` };
          writeSlots(p, part.dslot, d.ss, part);
        }
      }
      return { ok: true, p };
    },
  };
  return plan;
}

function writeSlots(p: Float64Array, at: number, ss: StateSpace, part: PartPlan): void {
  const { n, m, p: np } = part;
  let k = at;
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) p[k++] = ss.A[i]?.[j] ?? 0;
  for (let i = 0; i < n; i++) for (let j = 0; j < m; j++) p[k++] = ss.B[i]?.[j] ?? 0;
  for (let i = 0; i < np; i++) for (let j = 0; j < n; j++) p[k++] = ss.C[i]?.[j] ?? 0;
  for (let i = 0; i < np; i++) for (let j = 0; j < m; j++) p[k++] = ss.D[i]?.[j] ?? 0;
}

export function slotIndex(part: PartPlan, base: number, mat: 'A' | 'B' | 'C' | 'D', i: number, j: number): number {
  const { n, m, p } = part;
  switch (mat) {
    case 'A': return base + i * n + j;
    case 'B': return base + n * n + i * m + j;
    case 'C': return base + n * n + n * m + i * n + j;
    case 'D': return base + n * n + n * m + p * n + i * m + j;
  }
}

// ---------- lowering equations with caller-supplied leaves ----------

export interface Leaves {
  /** Node of system state i. */
  x(i: number): number;
  /** Node of system input i as it arrives (before the input's limit). */
  u(i: number): number;
  /** Node of system param slot i. */
  p(i: number): number;
  /** Limit mode index of the system's limit k. */
  limit(k: number): number;
}

/** Lazily lowers one system's equations into `g`; everything is memoised, so shared reads share nodes. */
export class SystemLowering {
  private readonly memo = new Map<string, number>();
  private readonly busy = new Set<string>();

  constructor(
    readonly plan: SystemPlan,
    readonly g: Graph,
    readonly leaves: Leaves,
    readonly env: LowerEnv,
    /** 'discrete' lowers a sampled controller's update (outputs and next states). */
    readonly mode: 'continuous' | 'discrete' = 'continuous',
  ) {}

  private once(key: string, f: () => number): number {
    const hit = this.memo.get(key);
    if (hit !== undefined) return hit;
    if (this.busy.has(key)) return this.g.c(NaN); // a cycle the name checks reported (LW218)
    this.busy.add(key);
    const v = f();
    this.busy.delete(key);
    this.memo.set(key, v);
    return v;
  }

  private fail = (span: Span, msg: string) => {
    this.env.sink.error('LW506', span, msg);
  };

  private lower(e: Expr): number {
    const sys = this.plan.sys;
    const names: NameLowering = (x, t) => {
      if (t?.kind !== 'member' || t.member.system !== sys) return undefined;
      const m = t.member;
      if (x.kind === 'deriv') {
        const i = this.plan.states.findIndex((s, k) => k < this.plan.declaredStates && s.name === m.name);
        return i < 0 ? undefined : this.derivative(i);
      }
      switch (m.kind) {
        case 'param': {
          const i = this.plan.params.indexOf(m.decl as ParamDecl);
          return i < 0 ? undefined : this.param(i);
        }
        case 'state': {
          const i = this.plan.states.findIndex((s, k) => k < this.plan.declaredStates && s.name === m.name);
          return i < 0 ? undefined : this.leaves.x(i);
        }
        case 'input': {
          const i = this.plan.inputs.findIndex((s) => s.name === m.name);
          return i < 0 ? undefined : this.input(i);
        }
        case 'output': {
          const i = this.plan.outputs.findIndex((s) => s.name === m.name);
          return i < 0 ? undefined : this.output(i);
        }
        case 'let':
          return this.once(`let:${m.name}`, () => this.lower((m.decl as { value: Expr }).value));
        default:
          return undefined;
      }
    };
    return lowerExpr(this.g, e, this.env, names, this.fail);
  }

  /** Param i of the system (declared) as a node. */
  param(i: number): number {
    return this.leaves.p(i);
  }

  /** A param-only expression (bounds, start values) as a node of this graph. */
  constant(e: Expr): number {
    return this.lower(e);
  }

  private limitOf(on: 'input' | 'output', i: number): number {
    return this.plan.limits.findIndex((l) => l.on === on && l.target === i);
  }

  limitBounds(k: number): { lo: number; hi: number } {
    const l = this.plan.limits[k];
    return { lo: this.lower(l.decl.lo), hi: this.lower(l.decl.hi) };
  }

  /** Input i after its limit (as it enters). */
  input(i: number): number {
    return this.once(`in:${i}`, () => {
      const raw = this.leaves.u(i);
      const k = this.limitOf('input', i);
      if (k < 0) return raw;
      const { lo, hi } = this.limitBounds(k);
      return this.g.op('lim', [raw, lo, hi], this.leaves.limit(k));
    });
  }

  /** Input i before its limit. */
  inputPre(i: number): number {
    return this.leaves.u(i);
  }

  /** Output i before its limit. */
  outputPre(i: number): number {
    return this.once(`outpre:${i}`, () => {
      const src = this.plan.outputPart.get(i);
      if (src) return this.partOutput(src.part, src.row);
      const o = this.plan.sys.outputs.find((d) => d.name.name === this.plan.outputs[i].name);
      return o?.value ? this.lower(o.value) : this.g.c(NaN);
    });
  }

  /** Output i after its limit (as it leaves). */
  output(i: number): number {
    return this.once(`out:${i}`, () => {
      const pre = this.outputPre(i);
      const k = this.limitOf('output', i);
      if (k < 0) return pre;
      const { lo, hi } = this.limitBounds(k);
      return this.g.op('lim', [pre, lo, hi], this.leaves.limit(k));
    });
  }

  /** Pre-limit value of the system's limit k. */
  limitPre(k: number): number {
    const l = this.plan.limits[k];
    return l.on === 'input' ? this.inputPre(l.target) : this.outputPre(l.target);
  }

  private entry(part: PartPlan, mat: 'A' | 'B' | 'C' | 'D', i: number, j: number): number {
    const base = this.mode === 'discrete' ? part.dslot : part.slot;
    if (this.mode === 'continuous') {
      const s = part.structure(mat, i, j);
      if (s === 'zero') return this.g.ZERO;
      if (s === 'one') return this.g.ONE;
    }
    return this.leaves.p(slotIndex(part, base, mat, i, j));
  }

  private partInputs(part: PartPlan): number[] {
    const v = part.inputs.map((i) => this.input(i));
    if (part.aw) {
      const o = part.outputs[0];
      v.push(this.g.sub(this.output(o), this.outputPre(o)));
    }
    return v;
  }

  private partOutput(part: PartPlan, row: number): number {
    const g = this.g;
    const terms: number[] = [];
    for (let j = 0; j < part.n; j++) terms.push(g.mul(this.entry(part, 'C', row, j), this.leaves.x(part.x0 + j)));
    // the anti-windup column never feeds the output directly (it only drives the integrator)
    const v = part.inputs.map((i) => this.input(i));
    for (let k = 0; k < v.length; k++) terms.push(g.mul(this.entry(part, 'D', row, k), v[k]));
    return g.sum(terms);
  }

  private partState(part: PartPlan, i: number, next: boolean): number {
    const g = this.g;
    const v = this.partInputs(part);
    const terms: number[] = [];
    for (let j = 0; j < part.n; j++) terms.push(g.mul(this.entry(part, 'A', i, j), this.leaves.x(part.x0 + j)));
    for (let k = 0; k < v.length; k++) terms.push(g.mul(this.entry(part, 'B', i, k), v[k]));
    void next;
    return g.sum(terms);
  }

  private partOf(stateIndex: number): { part: PartPlan; i: number } | undefined {
    for (const part of this.plan.parts) if (stateIndex >= part.x0 && stateIndex < part.x0 + part.n) return { part, i: stateIndex - part.x0 };
    return undefined;
  }

  /** Continuous-time derivative of state i. */
  derivative(i: number): number {
    return this.once(`der:${i}`, () => {
      const owner = this.partOf(i);
      if (owner) {
        if (this.mode === 'discrete') {
          // a continuous read of a discretized part: use the continuous matrices
          const cont = new SystemLowering(this.plan, this.g, this.leaves, this.env, 'continuous');
          return cont.derivative(i);
        }
        return this.partState(owner.part, owner.i, false);
      }
      const name = this.plan.states[i].name;
      const eq = this.plan.sys.derivs.get(name);
      return eq ? this.lower(eq.value) : this.g.c(NaN);
    });
  }

  /** Discrete update of state i of a sampled controller: x[k+1]. */
  next(i: number, period: number): number {
    return this.once(`next:${i}`, () => {
      const owner = this.partOf(i);
      if (owner) return this.partState(owner.part, owner.i, true);
      // a state equation of a sampled controller: forward difference x + T·f(x, u)
      return this.g.add(this.leaves.x(i), this.g.mul(period, this.derivative(i)));
    });
  }
}
