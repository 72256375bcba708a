// A system's equations read straight from the AST and evaluated on dual numbers (ad.ts): the
// independent route to values and exact derivatives that the equilibrium check, trim and the
// closed-loop cross-check use. It knows the declared states, inputs and outputs of one system
// instance, its params (with `use` overrides), lets, limits and operating points, all in SI.
//
// Limits act as in the model: an input limit clamps the input as it enters (slope 1 inside,
// 0 outside), an output limit clamps the output as it leaves. Outputs whose value comes from a
// transfer relation, a pid law or a linear block live on hidden states this evaluator does not
// realize: they read the values in `hidden` when the caller gives them, else NaN (and nothing is
// judged on NaN).
//
// API
//   systemModel(analysis, sym, overrides?) → SystemModel
//   model.evaluate(x, u, { seeds?, hidden?, ignoreLimits? }) → { dx: Dual[], y: Dual[] }
//     seeds: 'none' (k = 0), 'xu' (x then u, k = nx + nu), or an explicit k with duals given
//   model.points → OperatingPointValues[]   (SI, NaN where an entry cannot be evaluated)

import type { Analysis } from '../analysis';
import type { SymbolTable, SystemSymbol, Target } from '../check/symbols';
import type { Span } from '../diagnostics';
import type { Expr, InputDecl, LetDecl, OperatingPointDecl, OutputDecl, ParamDecl, QuantityExpr, StateDecl } from '../syntax/ast';
import { parseUnit } from '../units/registry';
import { constant, evalDual, seed, clampDual, type AdEnv, type Dual } from './ad';

/** Display unit of a declared variable: SI = display·scale + offset. */
export interface UnitOf {
  text: string;
  scale: number;
  offset: number;
}

export function unitOf(text: string | undefined): UnitOf {
  const t = text?.trim() ?? '';
  if (t === '' || t === '1') return { text: '', scale: 1, offset: 0 };
  const r = parseUnit(t);
  return r.ok ? { text: t, scale: r.unit.scale, offset: r.unit.offset * r.unit.scale } : { text: t, scale: NaN, offset: 0 };
}

export const toDisplay = (si: number, u: UnitOf): number => (si - u.offset) / u.scale;
export const toSi = (display: number, u: UnitOf): number => display * u.scale + u.offset;
/** A difference (residual, increment) carries no offset. */
export const diffToDisplay = (si: number, u: UnitOf): number => si / u.scale;

/** The SI value table of the unit checker, when the analysis has one. */
export function quantityTable(analysis: Analysis): ((q: QuantityExpr) => number | undefined) | undefined {
  const u = analysis.units as { quantities?: Map<QuantityExpr, { si: number }> } | undefined;
  const table = u?.quantities;
  if (!(table instanceof Map)) return undefined;
  return (q) => table.get(q)?.si;
}

export interface OperatingPointValues {
  name: string;
  decl: OperatingPointDecl;
  /** SI values of the declared states and inputs (0 where not given). */
  x: number[];
  u: number[];
  givenStates: boolean[];
  givenInputs: boolean[];
  /** Span of each entry's value, by state/input name. */
  entrySpans: Map<string, Span>;
}

export interface LimitValues {
  on: 'input' | 'output';
  index: number;
  name: string;
  lo: number;
  hi: number;
  span: Span;
}

export interface EvalOptions {
  /** Duals for the states and inputs (their k sets the gradient size); default constants. */
  xd?: Dual[];
  ud?: Dual[];
  /** Seed x then u (k = nx + nu); ignored when xd/ud are given. */
  seedXU?: boolean;
  /** Values of outputs that come from hidden states, by output name. */
  hidden?: Map<string, Dual>;
  /** Evaluate as if no input or output had a limit (trim searches the raw input). */
  ignoreLimits?: boolean;
}

export interface SystemModel {
  sym: SystemSymbol;
  states: StateDecl[];
  inputs: InputDecl[];
  outputs: OutputDecl[];
  stateUnits: UnitOf[];
  inputUnits: UnitOf[];
  outputUnits: UnitOf[];
  /** Param values (SI) by name; NaN where not evaluable. */
  params: Map<string, number>;
  limits: LimitValues[];
  points: OperatingPointValues[];
  quantity?: (q: QuantityExpr) => number | undefined;
  /** State derivatives and outputs at (x, u). */
  evaluate(x: ArrayLike<number>, u: ArrayLike<number>, opts?: EvalOptions): { dx: Dual[]; y: Dual[] };
  /** An expression of the system evaluated at (x, u) (e.g. one term of an equation). */
  evalAt(e: Expr, x: ArrayLike<number>, u: ArrayLike<number>, opts?: EvalOptions): Dual;
}

type Decl = ParamDecl | LetDecl | OutputDecl | StateDecl;

/** Builds the AST model of a system; `overrides` are SI param values of a `use` instance. */
export function systemModel(analysis: Analysis, sym: SystemSymbol, overrides?: ReadonlyMap<string, number>): SystemModel {
  const symbols = analysis.symbols;
  const quantity = quantityTable(analysis);
  const states = sym.states, inputs = sym.inputs, outputs = sym.outputs;
  const stateIdx = new Map(states.map((d, i) => [d.name.name, i]));
  const inputIdx = new Map(inputs.map((d, i) => [d.name.name, i]));
  const outputIdx = new Map(outputs.map((d, i) => [d.name.name, i]));

  // ---- params (constants, in declaration order, memoised) ----
  const params = new Map<string, number>();
  const paramBusy = new Set<string>();
  const paramValue = (name: string): number => {
    if (overrides?.has(name)) return overrides.get(name)!;
    const hit = params.get(name);
    if (hit !== undefined) return hit;
    const decl = sym.params.find((p) => p.name.name === name);
    if (!decl || paramBusy.has(name)) return NaN;
    paramBusy.add(name);
    const v = evalDual(decl.value, constEnv(symbols, sym, paramValue, quantity)).v;
    paramBusy.delete(name);
    params.set(name, v);
    return v;
  };
  for (const p of sym.params) params.set(p.name.name, paramValue(p.name.name));
  const cEnv = constEnv(symbols, sym, paramValue, quantity);
  const constOf = (e: Expr): number => evalDual(e, cEnv).v;

  // ---- limits ----
  const limits: LimitValues[] = [];
  for (const [name, decl] of sym.limits) {
    const ii = inputIdx.get(name), oi = outputIdx.get(name);
    if (ii === undefined && oi === undefined) continue;
    limits.push({ on: ii !== undefined ? 'input' : 'output', index: (ii ?? oi)!, name, lo: constOf(decl.lo), hi: constOf(decl.hi), span: decl.span.end > decl.span.start ? decl.span : { start: decl.target.span.start, end: decl.hi.span.end } });
  }
  const inputLimit = new Map(limits.filter((l) => l.on === 'input').map((l) => [l.index, l]));
  const outputLimit = new Map(limits.filter((l) => l.on === 'output').map((l) => [l.index, l]));

  // ---- evaluation at (x, u) ----
  function makeEnv(x: ArrayLike<number>, u: ArrayLike<number>, opts: EvalOptions): { env: AdEnv; xd: Dual[]; ud: Dual[]; output(i: number): Dual; deriv(i: number): Dual } {
    const nx = states.length, nu = inputs.length;
    let xd = opts.xd, ud = opts.ud;
    let k: number;
    if (xd || ud) {
      k = (xd?.[0] ?? ud?.[0])?.d.length ?? 0;
    } else {
      k = opts.seedXU ? nx + nu : 0;
    }
    xd ??= Array.from({ length: nx }, (_, i) => (opts.seedXU && !opts.xd && !opts.ud ? seed(x[i], k, i) : constant(x[i], k)));
    ud ??= Array.from({ length: nu }, (_, i) => (opts.seedXU && !opts.xd && !opts.ud ? seed(u[i], k, nx + i) : constant(u[i], k)));
    const uLim = ud.map((d, i) => {
      const l = inputLimit.get(i);
      return l && !opts.ignoreLimits ? clampDual(d, l.lo, l.hi) : d;
    });
    const memo = new Map<Decl, Dual>();
    const busy = new Set<Decl>();
    const nan = (): Dual => constant(NaN, k);
    const once = (decl: Decl, f: () => Dual): Dual => {
      const hit = memo.get(decl);
      if (hit) return hit;
      if (busy.has(decl)) return nan();
      busy.add(decl);
      const v = f();
      busy.delete(decl);
      memo.set(decl, v);
      return v;
    };
    const output = (i: number): Dual => {
      const decl = outputs[i];
      return once(decl, () => {
        let v: Dual | undefined;
        const src = sym.outputSources.get(decl.name.name);
        if (src?.kind === 'equation' && decl.value) v = evalDual(decl.value, env);
        else v = opts.hidden?.get(decl.name.name);
        if (!v) return nan();
        const l = outputLimit.get(i);
        return l && !opts.ignoreLimits ? clampDual(v, l.lo, l.hi) : v;
      });
    };
    const deriv = (i: number): Dual => {
      const decl = states[i];
      return once(decl, () => {
        const eq = sym.derivs.get(decl.name.name);
        return eq ? evalDual(eq.value, env) : nan();
      });
    };
    const fromTarget = (t: Target | undefined, isDeriv: boolean): Dual | undefined => {
      if (!t || t.kind !== 'member' || t.member.system !== sym) {
        if (t?.kind === 'builtin' && t.name === 'pi') return constant(Math.PI, k);
        return undefined;
      }
      const m = t.member;
      const name = m.name;
      if (isDeriv) {
        const i = stateIdx.get(name);
        return i === undefined ? undefined : deriv(i);
      }
      switch (m.kind) {
        case 'param':
          return constant(paramValue(name), k);
        case 'let':
          return once(m.decl as LetDecl, () => evalDual((m.decl as LetDecl).value, env));
        case 'state': {
          const i = stateIdx.get(name);
          return i === undefined ? undefined : xd![i];
        }
        case 'input': {
          const i = inputIdx.get(name);
          return i === undefined ? undefined : uLim[i];
        }
        case 'output': {
          const i = outputIdx.get(name);
          return i === undefined ? undefined : output(i);
        }
        default:
          return undefined;
      }
    };
    const env: AdEnv = {
      k,
      quantity,
      name: (e) => fromTarget(symbols.resolved.get(e), e.kind === 'deriv'),
    };
    return { env, xd, ud, output, deriv };
  }

  const evaluate: SystemModel['evaluate'] = (x, u, opts = {}) => {
    const m = makeEnv(x, u, opts);
    return { dx: states.map((_, i) => m.deriv(i)), y: outputs.map((_, i) => m.output(i)) };
  };
  const evalAt: SystemModel['evalAt'] = (e, x, u, opts = {}) => evalDual(e, makeEnv(x, u, opts).env);

  // ---- operating points ----
  const stateUnits = states.map((d) => unitOf(d.unit?.text));
  const inputUnits = inputs.map((d) => unitOf(d.unit?.text));
  const outputUnits = outputs.map((d) => unitOf(d.unit?.text));
  const points: OperatingPointValues[] = sym.points.map((decl) => {
    const x = states.map(() => 0), u = inputs.map(() => 0);
    const givenStates = states.map(() => false), givenInputs = inputs.map(() => false);
    const entrySpans = new Map<string, Span>();
    for (const e of decl.entries) {
      const name = e.name.name;
      const v = constOf(e.value);
      const si = stateIdx.get(name), ii = inputIdx.get(name);
      if (si !== undefined && !givenStates[si]) { x[si] = v; givenStates[si] = true; entrySpans.set(name, e.value.span); }
      else if (ii !== undefined && !givenInputs[ii]) { u[ii] = v; givenInputs[ii] = true; entrySpans.set(name, e.value.span); }
    }
    return { name: decl.name.name, decl, x, u, givenStates, givenInputs, entrySpans };
  });

  return { sym, states, inputs, outputs, stateUnits, inputUnits, outputUnits, params, limits, points, quantity, evaluate, evalAt };
}

/** Environment for constant expressions of a system: params, pi, literals. */
function constEnv(symbols: SymbolTable, sym: SystemSymbol, paramValue: (n: string) => number, quantity?: (q: QuantityExpr) => number | undefined): AdEnv {
  return {
    k: 0,
    quantity,
    name: (e) => {
      const t = symbols.resolved.get(e);
      if (t?.kind === 'builtin' && t.name === 'pi') return constant(Math.PI, 0);
      if (t?.kind === 'member' && t.member.system === sym && t.member.kind === 'param') return constant(paramValue(t.member.name), 0);
      return undefined;
    },
  };
}
