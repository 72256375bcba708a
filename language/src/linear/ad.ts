// Forward-mode automatic differentiation over the AST: a small evaluator of expressions on dual
// numbers. A dual carries a value and its gradient with respect to k seed directions, so one pass
// gives a whole Jacobian row. Literals take their SI value (from the unit checker's table when the
// caller has it, else from the unit registry, which is the same parser); names are resolved by the
// caller's environment, so the same evaluator serves system equations, arrow sources and loop
// signals.
//
// The rules are the usual calculus ones, with these choices at the kinks (the same as the model
// compiler's symbolic derivative, so the two linearizations agree): abs' = sign (0 at 0);
// min/max follow the argument they pick (the first on a tie); clamp has slope 1 for
// lo ≤ x ≤ hi and 0 outside; lookup has the slope of the segment x lies in and 0 at or beyond the
// ends; comparisons, `sign` and the conditions of `if` are piecewise constant.
// Signal functions (loop signals only) read the environment's time `t`:
// step(at, size), ramp(at, slope), pulse(at, width, size), sine(amplitude, frequency) with a
// frequency literal in Hz counted as 2π rad/s per Hz.
//
// Never throws: anything that cannot be evaluated (an unresolved name, an error node, a list
// where a number is expected) gives NaN.
//
// API
//   type Dual = { v, d }               value and gradient (Float64Array of length k)
//   constant(v, k), seed(v, k, i)      a constant, or the i-th seed direction
//   interface AdEnv { k; name(e); quantity?(q); t? }
//   evalDual(e, env) → Dual            evalValue(e, env) → number (k = 0 is fine)
//   additiveTerms(e) → { sign, expr }[] the top-level terms of a sum or difference
//   literalSI(q)                        SI value of a quantity by the unit registry

import type { DerivExpr, Expr, MemberExpr, NameExpr, QuantityExpr } from '../syntax/ast';
import { parseUnit, toSI } from '../units/registry';

export interface Dual {
  v: number;
  d: Float64Array;
}

export const constant = (v: number, k: number): Dual => ({ v, d: new Float64Array(k) });

export function seed(v: number, k: number, i: number): Dual {
  const d = new Float64Array(k);
  if (i >= 0 && i < k) d[i] = 1;
  return { v, d };
}

export interface AdEnv {
  /** Number of seed directions. */
  k: number;
  /** The value of a name-like node; undefined when it cannot be evaluated. */
  name(e: NameExpr | MemberExpr | DerivExpr): Dual | undefined;
  /** SI value of a literal (the unit checker's table); default: the unit registry. */
  quantity?(q: QuantityExpr): number | undefined;
  /** Time, for signal functions. */
  t?: number;
}

/** SI value of a quantity literal by the unit registry; NaN for an unknown unit. */
export function literalSI(q: QuantityExpr): number {
  const r = parseUnit(q.unit.text);
  return r.ok ? toSI(q.value, r.unit) : NaN;
}

/** Net count of cycle units (Hz) in a literal's unit. */
function cycles(q: QuantityExpr): number {
  const r = parseUnit(q.unit.text);
  return r.ok ? r.unit.cycle : 0;
}

// ---- dual arithmetic (new arrays: expressions are small) ----

function lin(a: Dual, ca: number, b: Dual | undefined, cb: number, v: number): Dual {
  const d = new Float64Array(a.d.length);
  for (let i = 0; i < d.length; i++) d[i] = ca * a.d[i] + (b ? cb * b.d[i] : 0);
  return { v, d };
}

const chain = (a: Dual, slope: number, v: number): Dual => lin(a, slope, undefined, 0, v);
const add = (a: Dual, b: Dual): Dual => lin(a, 1, b, 1, a.v + b.v);
const sub = (a: Dual, b: Dual): Dual => lin(a, 1, b, -1, a.v - b.v);
const mul = (a: Dual, b: Dual): Dual => lin(a, b.v, b, a.v, a.v * b.v);
const div = (a: Dual, b: Dual): Dual => lin(a, 1 / b.v, b, -a.v / (b.v * b.v), a.v / b.v);
const flat = (v: number, k: number): Dual => constant(v, k);

function pow(a: Dual, b: Dual): Dual {
  const v = Math.pow(a.v, b.v);
  const bConst = b.d.every((x) => x === 0);
  if (bConst) return chain(a, b.v === 0 ? 0 : b.v * Math.pow(a.v, b.v - 1), v);
  return lin(a, b.v * Math.pow(a.v, b.v - 1), b, v * Math.log(a.v), v);
}

function unary(name: string, a: Dual): Dual | undefined {
  const x = a.v;
  switch (name) {
    case 'sin': return chain(a, Math.cos(x), Math.sin(x));
    case 'cos': return chain(a, -Math.sin(x), Math.cos(x));
    case 'tan': { const t = Math.tan(x); return chain(a, 1 + t * t, t); }
    case 'asin': return chain(a, 1 / Math.sqrt(1 - x * x), Math.asin(x));
    case 'acos': return chain(a, -1 / Math.sqrt(1 - x * x), Math.acos(x));
    case 'atan': return chain(a, 1 / (1 + x * x), Math.atan(x));
    case 'sinh': return chain(a, Math.cosh(x), Math.sinh(x));
    case 'cosh': return chain(a, Math.sinh(x), Math.cosh(x));
    case 'tanh': { const t = Math.tanh(x); return chain(a, 1 - t * t, t); }
    case 'exp': { const e = Math.exp(x); return chain(a, e, e); }
    case 'log': return chain(a, 1 / x, Math.log(x));
    case 'log10': return chain(a, 1 / (Math.LN10 * x), Math.log10(x));
    case 'sqrt': { const r = Math.sqrt(x); return chain(a, 1 / (2 * r), r); }
    case 'abs': return chain(a, Math.sign(x), Math.abs(x));
    case 'sign': return flat(Math.sign(x), a.d.length);
    default: return undefined;
  }
}

/** Slope-1-inside clamp, as the model's limits. */
export function clampDual(x: Dual, lo: number, hi: number): Dual {
  if (x.v < lo) return flat(lo, x.d.length);
  if (x.v > hi) return flat(hi, x.d.length);
  return x;
}

function lookup(x: Dual, xs: number[], ys: number[]): Dual {
  const n = Math.min(xs.length, ys.length);
  const k = x.d.length;
  if (n === 0) return flat(NaN, k);
  if (!(x.v > xs[0])) return flat(ys[0], k);
  if (x.v >= xs[n - 1]) return flat(ys[n - 1], k);
  let lo = 0, hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (xs[mid] <= x.v) lo = mid;
    else hi = mid;
  }
  const dx = xs[hi] - xs[lo];
  if (!(dx > 0)) return flat(ys[hi], k);
  const slope = (ys[hi] - ys[lo]) / dx;
  return chain(x, slope, ys[lo] + slope * (x.v - xs[lo]));
}

/** Frequency argument of sine() in rad/s: literals in Hz count 2π per cycle. */
function angular(e: Expr, w: Dual): Dual {
  let q: Expr = e;
  while (q.kind === 'unary' && (q.op === '-' || q.op === '+')) q = q.operand;
  if (q.kind === 'quantity') {
    const c = cycles(q);
    if (c !== 0) return chain(w, Math.pow(2 * Math.PI, c), w.v * Math.pow(2 * Math.PI, c));
  }
  return w;
}

// ---- the evaluator ----

export function evalDual(e: Expr, env: AdEnv): Dual {
  const k = env.k;
  const nan = (): Dual => flat(NaN, k);
  const ev = (x: Expr): Dual => evalDual(x, env);
  switch (e.kind) {
    case 'number':
      return flat(e.value, k);
    case 'quantity': {
      const v = env.quantity?.(e);
      return flat(v !== undefined && Number.isFinite(v) ? v : literalSI(e), k);
    }
    case 'name':
      if (e.name === 'pi') {
        const r = env.name(e);
        return r ?? flat(Math.PI, k);
      }
      if (e.name === 't' && env.t !== undefined) {
        const r = env.name(e);
        return r ?? flat(env.t, k);
      }
      return env.name(e) ?? nan();
    case 'member':
    case 'deriv':
      return env.name(e) ?? nan();
    case 'unary': {
      const a = ev(e.operand);
      if (e.op === '-') return chain(a, -1, -a.v);
      if (e.op === '+') return a;
      return flat(a.v === 0 ? 1 : 0, k);
    }
    case 'binary': {
      if (e.op === 'and' || e.op === 'or') {
        const a = ev(e.left).v !== 0, b = ev(e.right).v !== 0;
        return flat((e.op === 'and' ? a && b : a || b) ? 1 : 0, k);
      }
      const a = ev(e.left), b = ev(e.right);
      switch (e.op) {
        case '+': return add(a, b);
        case '-': return sub(a, b);
        case '*': return mul(a, b);
        case '/': return div(a, b);
        case '^': return pow(a, b);
        case '<': return flat(a.v < b.v ? 1 : 0, k);
        case '<=': return flat(a.v <= b.v ? 1 : 0, k);
        case '>': return flat(a.v > b.v ? 1 : 0, k);
        case '>=': return flat(a.v >= b.v ? 1 : 0, k);
        case '==': return flat(a.v === b.v ? 1 : 0, k);
        case '!=': return flat(a.v !== b.v ? 1 : 0, k);
      }
      return nan();
    }
    case 'if': {
      const c = ev(e.cond).v;
      if (Number.isNaN(c)) return nan();
      return c !== 0 ? ev(e.then) : ev(e.else);
    }
    case 'call':
      return call(e.callee.name, e.args, env);
    default:
      return nan();
  }
}

function listValues(e: Expr | undefined, env: AdEnv): number[] | undefined {
  if (!e || e.kind !== 'list') return undefined;
  return e.items.map((x) => evalDual(x, { ...env, k: 0 }).v);
}

function call(name: string, args: Expr[], env: AdEnv): Dual {
  const k = env.k;
  const nan = (): Dual => flat(NaN, k);
  const ev = (x: Expr): Dual => evalDual(x, env);
  if (args.length === 1) {
    const r = unary(name, ev(args[0]));
    if (r) return r;
  }
  switch (name) {
    case 'atan2': {
      if (args.length !== 2) return nan();
      const y = ev(args[0]), x = ev(args[1]);
      const den = x.v * x.v + y.v * y.v;
      return lin(y, x.v / den, x, -y.v / den, Math.atan2(y.v, x.v));
    }
    case 'min':
    case 'max': {
      if (args.length < 2) return nan();
      let best = ev(args[0]);
      for (let i = 1; i < args.length; i++) {
        const c = ev(args[i]);
        if (Number.isNaN(c.v)) return nan();
        if (name === 'min' ? !(best.v <= c.v) : !(best.v >= c.v)) best = c;
      }
      return best;
    }
    case 'clamp': {
      if (args.length !== 3) return nan();
      const x = ev(args[0]), lo = ev(args[1]), hi = ev(args[2]);
      if (x.v < lo.v) return lo;
      if (x.v > hi.v) return hi;
      return x;
    }
    case 'lookup': {
      const xs = listValues(args[1], env), ys = listValues(args[2], env);
      if (!xs || !ys || args.length !== 3) return nan();
      return lookup(ev(args[0]), xs, ys);
    }
    case 'step':
    case 'ramp':
    case 'pulse':
    case 'sine': {
      const t = env.t;
      if (t === undefined) return nan();
      const a = args.map(ev);
      if (name === 'step' && a.length === 2) return t >= a[0].v ? a[1] : flat(0, k);
      if (name === 'ramp' && a.length === 2) {
        if (!(t >= a[0].v)) return flat(0, k);
        // slope·(t − at)
        return lin(a[1], t - a[0].v, a[0], -a[1].v, a[1].v * (t - a[0].v));
      }
      if (name === 'pulse' && a.length === 3) return t >= a[0].v && t < a[0].v + a[1].v ? a[2] : flat(0, k);
      if (name === 'sine' && a.length === 2) {
        const w = angular(args[1], a[1]);
        const s = Math.sin(w.v * t), c = Math.cos(w.v * t);
        return lin(a[0], s, w, a[0].v * c * t, a[0].v * s);
      }
      return nan();
    }
    default:
      return nan();
  }
}

export function evalValue(e: Expr, env: Omit<AdEnv, 'k'> & { k?: number }): number {
  return evalDual(e, { ...env, k: env.k ?? 0 }).v;
}

export interface Term {
  sign: 1 | -1;
  expr: Expr;
}

/**
 * The top-level additive terms of an expression: `a - b + c` gives +a, −b, +c; a leading unary
 * minus flips the sign of what it covers when that is itself a sum (`-(a + b)` gives −a, −b).
 * Parentheses are not in the AST, so `(a - b)*c` is one term.
 */
export function additiveTerms(e: Expr): Term[] {
  const out: Term[] = [];
  const walk = (x: Expr, sign: 1 | -1): void => {
    if (x.kind === 'binary' && (x.op === '+' || x.op === '-')) {
      walk(x.left, sign);
      walk(x.right, x.op === '+' ? sign : ((-sign) as 1 | -1));
    } else if (x.kind === 'unary' && x.op === '-') {
      walk(x.operand, (-sign) as 1 | -1);
    } else if (x.kind === 'unary' && x.op === '+') {
      walk(x.operand, sign);
    } else {
      out.push({ sign, expr: x });
    }
  };
  walk(e, 1);
  return out;
}
