// The model's expression graph: a hash-consed DAG of numeric operations over states (x), inputs
// (u), params (p), time (t), held outputs of sampled controllers (h) and algebraic-loop unknowns
// (w). Every model equation is lowered into one graph; the code generator turns chosen roots into
// JavaScript, and `derivative` differentiates roots symbolically (forward mode over the DAG,
// with the local partial of each operation written out), which is where the exact Jacobians come
// from.
//
// Node ids grow in creation order and a node's arguments always exist before it, so increasing
// id order is a topological order. Identical nodes are shared (common subexpressions), constants
// are folded and the algebraic identities x+0, x*1, x*0, x/1, --x are applied as nodes are built.

export type Op =
  // leaves
  | 'c' | 'x' | 'u' | 'p' | 't' | 'h' | 'w'
  // arithmetic
  | 'neg' | 'add' | 'sub' | 'mul' | 'div' | 'pow'
  // comparisons and logic (1 for true, 0 for false)
  | 'lt' | 'le' | 'gt' | 'ge' | 'eq' | 'ne' | 'and' | 'or' | 'not' | 'if'
  // whitelisted functions
  | 'sin' | 'cos' | 'tan' | 'asin' | 'acos' | 'atan' | 'atan2' | 'sinh' | 'cosh' | 'tanh'
  | 'exp' | 'log' | 'log10' | 'sqrt' | 'abs' | 'sign' | 'min' | 'max'
  // lookup(x, xs..., ys...): v = number of table points; lookupSlope: its derivative in x
  | 'lookup' | 'lookupSlope'
  // lim(a, lo, hi): a limit with mode index v; limd(a, lo, hi, da): its derivative
  | 'lim' | 'limd'
  // signal functions of time: step(t, at, size), ramp(t, at, slope), pulse(t, at, width, size), sine(t, amp, w)
  | 'step' | 'ramp' | 'pulse' | 'sine';

/** Dependency bits: what a node's value can change with. */
export const DEP = { x: 1, u: 2, t: 4, h: 8, w: 16, m: 32 } as const;

export interface GNode {
  op: Op;
  args: number[];
  /** Constant value ('c'), leaf index ('x' 'u' 'p' 'h' 'w'), limit index ('lim' 'limd'), table size ('lookup'). */
  v: number;
  deps: number;
}

export const UNARY_FUNCS = ['sin', 'cos', 'tan', 'asin', 'acos', 'atan', 'sinh', 'cosh', 'tanh', 'exp', 'log', 'log10', 'sqrt', 'abs', 'sign'] as const;

const LEAF_DEPS: Partial<Record<Op, number>> = { c: 0, p: 0, x: DEP.x, u: DEP.u, t: DEP.t, h: DEP.h, w: DEP.w };

export class Graph {
  readonly nodes: GNode[] = [];
  private readonly index = new Map<string, number>();
  readonly ZERO: number;
  readonly ONE: number;

  constructor() {
    this.ZERO = this.c(0);
    this.ONE = this.c(1);
  }

  private make(op: Op, args: number[], v = 0): number {
    const key = op === 'c' ? `c:${Object.is(v, -0) ? '0' : String(v)}` : `${op}:${v}:${args.join(',')}`;
    const hit = this.index.get(key);
    if (hit !== undefined) return hit;
    let deps = LEAF_DEPS[op] ?? 0;
    for (const a of args) deps |= this.nodes[a].deps;
    if (op === 'lim' || op === 'limd') deps |= DEP.m;
    const id = this.nodes.length;
    this.nodes.push({ op, args, v: op === 'c' && Object.is(v, -0) ? 0 : v, deps });
    this.index.set(key, id);
    return id;
  }

  c(v: number): number {
    return this.make('c', [], v);
  }
  leaf(op: 'x' | 'u' | 'p' | 'h' | 'w', i: number): number {
    return this.make(op, [], i);
  }
  t(): number {
    return this.make('t', []);
  }

  isConst(a: number): boolean {
    return this.nodes[a].op === 'c';
  }
  value(a: number): number {
    return this.nodes[a].v;
  }
  private isC(a: number, v: number): boolean {
    const n = this.nodes[a];
    return n.op === 'c' && n.v === v;
  }

  /** Builds an operation node, folding constants and trivial identities. */
  op(op: Op, args: number[], v = 0): number {
    if (op !== 'lim' && op !== 'limd' && args.length > 0 && args.every((a) => this.isConst(a))) {
      const vals = args.map((a) => this.nodes[a].v);
      return this.c(applyOp(op, vals, v, 2));
    }
    switch (op) {
      case 'add': {
        const [a, b] = args;
        if (this.isC(a, 0)) return b;
        if (this.isC(b, 0)) return a;
        if (this.nodes[b].op === 'neg') return this.op('sub', [a, this.nodes[b].args[0]]);
        break;
      }
      case 'sub': {
        const [a, b] = args;
        if (this.isC(b, 0)) return a;
        if (this.isC(a, 0)) return this.op('neg', [b]);
        if (a === b) return this.ZERO;
        break;
      }
      case 'mul': {
        const [a, b] = args;
        if (this.isC(a, 0) || this.isC(b, 0)) return this.ZERO;
        if (this.isC(a, 1)) return b;
        if (this.isC(b, 1)) return a;
        if (this.isC(a, -1)) return this.op('neg', [b]);
        if (this.isC(b, -1)) return this.op('neg', [a]);
        // constants first, so k*x and x*k share a node
        if (this.isConst(b) && !this.isConst(a)) return this.make('mul', [b, a]);
        break;
      }
      case 'div': {
        const [a, b] = args;
        if (this.isC(a, 0)) return this.ZERO;
        if (this.isC(b, 1)) return a;
        if (this.isC(b, -1)) return this.op('neg', [a]);
        break;
      }
      case 'neg': {
        const n = this.nodes[args[0]];
        if (n.op === 'neg') return n.args[0];
        break;
      }
      case 'pow': {
        const [a, b] = args;
        if (this.isC(b, 1)) return a;
        if (this.isC(b, 0)) return this.ONE;
        break;
      }
      case 'if': {
        const [c, a, b] = args;
        if (this.isConst(c)) return this.nodes[c].v !== 0 ? a : b;
        if (a === b) return a;
        break;
      }
      default:
        break;
    }
    return this.make(op, args, v);
  }

  add(a: number, b: number): number {
    return this.op('add', [a, b]);
  }
  sub(a: number, b: number): number {
    return this.op('sub', [a, b]);
  }
  mul(a: number, b: number): number {
    return this.op('mul', [a, b]);
  }
  div(a: number, b: number): number {
    return this.op('div', [a, b]);
  }
  neg(a: number): number {
    return this.op('neg', [a]);
  }
  fn(name: Op, ...args: number[]): number {
    return this.op(name, args);
  }
  sum(terms: number[]): number {
    let s = this.ZERO;
    for (const t of terms) s = this.add(s, t);
    return s;
  }

  /** Ids reachable from the roots, ascending (a topological order). */
  reachable(roots: Iterable<number>): number[] {
    const list = Array.isArray(roots) ? roots : [...roots];
    if (list.length === 0) return [];
    if (list.length === 1) {
      // a node's arguments never change, so its reachable set can be kept
      const hit = this.single.get(list[0]);
      if (hit) return hit;
      const r = this.reachableUncached(list);
      this.single.set(list[0], r);
      return r;
    }
    return this.reachableUncached(list);
  }

  private readonly single = new Map<number, number[]>();

  private reachableUncached(roots: number[]): number[] {
    const seen = new Uint8Array(this.nodes.length);
    const stack: number[] = [];
    for (const r of roots) if (!seen[r]) (seen[r] = 1), stack.push(r);
    while (stack.length) {
      const n = this.nodes[stack.pop()!];
      for (const a of n.args) if (!seen[a]) (seen[a] = 1), stack.push(a);
    }
    const out: number[] = [];
    for (let i = 0; i < seen.length; i++) if (seen[i]) out.push(i);
    return out;
  }

  /** Do the roots depend on the leaf node `leafId`? */
  dependsOn(root: number, leafId: number): boolean {
    if (root === leafId) return true;
    const mask = LEAF_DEPS[this.nodes[leafId].op] ?? 0;
    if (mask && !(this.nodes[root].deps & mask)) return false;
    return this.reachable([root]).includes(leafId);
  }

  /**
   * Directional derivatives of `roots` for the seeds (leaf node id -> derivative node id of that
   * leaf; every other leaf has derivative 0). Exact: each operation contributes its symbolic
   * partials. Returns one derivative node per root.
   */
  derivative(roots: number[], seeds: ReadonlyMap<number, number>): number[] {
    const order = this.reachable(roots);
    const d = new Map<number, number>();
    const Z = this.ZERO;
    const dOf = (a: number): number => d.get(a) ?? Z;
    for (const id of order) {
      const n = this.nodes[id];
      const seed = seeds.get(id);
      if (seed !== undefined) {
        d.set(id, seed);
        continue;
      }
      if (n.args.length === 0) continue;
      if (!n.args.some((a) => d.has(a) && d.get(a) !== Z)) continue;
      const r = this.partial(id, n, dOf);
      if (r !== Z) d.set(id, r);
    }
    return roots.map(dOf);
  }

  private partial(id: number, n: GNode, dOf: (a: number) => number): number {
    const [a, b] = n.args;
    const da = a !== undefined ? dOf(a) : this.ZERO;
    const db = b !== undefined ? dOf(b) : this.ZERO;
    const Z = this.ZERO;
    switch (n.op) {
      case 'neg':
        return this.neg(da);
      case 'add':
        return this.add(da, db);
      case 'sub':
        return this.sub(da, db);
      case 'mul':
        return this.add(this.mul(da, b), this.mul(a, db));
      case 'div':
        // (a/b)' = a'/b − (a/b)·b'/b
        return this.sub(this.div(da, b), this.mul(id, this.div(db, b)));
      case 'pow': {
        if (db === Z) {
          // n·a^(n−1)·a'
          const nm1 = this.sub(b, this.ONE);
          return this.mul(this.mul(b, this.op('pow', [a, nm1])), da);
        }
        // a^b·(b'·ln a + b·a'/a)
        return this.mul(id, this.add(this.mul(db, this.fn('log', a)), this.mul(b, this.div(da, a))));
      }
      case 'sin':
        return this.mul(this.fn('cos', a), da);
      case 'cos':
        return this.neg(this.mul(this.fn('sin', a), da));
      case 'tan':
        return this.mul(this.add(this.ONE, this.mul(id, id)), da);
      case 'asin':
        return this.div(da, this.fn('sqrt', this.sub(this.ONE, this.mul(a, a))));
      case 'acos':
        return this.neg(this.div(da, this.fn('sqrt', this.sub(this.ONE, this.mul(a, a)))));
      case 'atan':
        return this.div(da, this.add(this.ONE, this.mul(a, a)));
      case 'atan2': {
        // atan2(y, x)' = (x·y' − y·x')/(x² + y²)
        const den = this.add(this.mul(a, a), this.mul(b, b));
        return this.div(this.sub(this.mul(b, da), this.mul(a, db)), den);
      }
      case 'sinh':
        return this.mul(this.fn('cosh', a), da);
      case 'cosh':
        return this.mul(this.fn('sinh', a), da);
      case 'tanh':
        return this.mul(this.sub(this.ONE, this.mul(id, id)), da);
      case 'exp':
        return this.mul(id, da);
      case 'log':
        return this.div(da, a);
      case 'log10':
        return this.div(da, this.mul(this.c(Math.LN10), a));
      case 'sqrt':
        return this.div(da, this.mul(this.c(2), id));
      case 'abs':
        return this.mul(this.fn('sign', a), da);
      case 'min':
        return this.op('if', [this.op('le', [a, b]), da, db]);
      case 'max':
        return this.op('if', [this.op('ge', [a, b]), da, db]);
      case 'if': {
        const [c, x, y] = n.args;
        return this.op('if', [c, dOf(x), dOf(y)]);
      }
      case 'lookup': {
        const dx = da;
        if (dx === Z) return Z;
        return this.mul(this.op('lookupSlope', n.args, n.v), dx);
      }
      case 'lim': {
        if (da === Z) return Z;
        return this.op('limd', [a, n.args[1], n.args[2], da], n.v);
      }
      // piecewise constant in their arguments, or functions of time only
      case 'sign':
      case 'lt': case 'le': case 'gt': case 'ge': case 'eq': case 'ne':
      case 'and': case 'or': case 'not':
      case 'lookupSlope': case 'limd':
      case 'step': case 'ramp': case 'pulse': case 'sine':
        return Z;
      default:
        return Z;
    }
  }
}

// ---------- numeric semantics (shared by the interpreter and constant folding) ----------

export function lookupValue(x: number, xs: ArrayLike<number>, ys: ArrayLike<number>, n: number): number {
  if (n === 0) return NaN;
  if (!(x > xs[0])) return ys[0];
  if (x >= xs[n - 1]) return ys[n - 1];
  let lo = 0, hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (xs[mid] <= x) lo = mid;
    else hi = mid;
  }
  const dx = xs[hi] - xs[lo];
  return dx > 0 ? ys[lo] + ((ys[hi] - ys[lo]) * (x - xs[lo])) / dx : ys[hi];
}

export function lookupSlopeValue(x: number, xs: ArrayLike<number>, ys: ArrayLike<number>, n: number): number {
  if (n < 2 || !(x > xs[0]) || x >= xs[n - 1]) return 0;
  let lo = 0, hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (xs[mid] <= x) lo = mid;
    else hi = mid;
  }
  const dx = xs[hi] - xs[lo];
  return dx > 0 ? (ys[hi] - ys[lo]) / dx : 0;
}

/** Limit with a mode: 0 free, -1 at lo, 1 at hi, 2 clamp. */
export function limitValue(m: number, a: number, lo: number, hi: number): number {
  if (m === 0) return a;
  if (m === 2) return a < lo ? lo : a > hi ? hi : a;
  return m < 0 ? lo : hi;
}

export function limitSlope(m: number, a: number, lo: number, hi: number, da: number): number {
  if (m === 0) return da;
  if (m === 2) return a < lo || a > hi ? 0 : da;
  return 0;
}

export function stepValue(t: number, at: number, size: number): number {
  return t >= at ? size : 0;
}
export function rampValue(t: number, at: number, slope: number): number {
  return t >= at ? slope * (t - at) : 0;
}
export function pulseValue(t: number, at: number, width: number, size: number): number {
  return t >= at && t < at + width ? size : 0;
}
export function sineValue(t: number, amp: number, w: number): number {
  return amp * Math.sin(w * t);
}

const b = (c: boolean): number => (c ? 1 : 0);

/** Value of an operation on argument values; `mode` is the limit mode for 'lim'/'limd'. */
export function applyOp(op: Op, a: number[], v: number, mode: number): number {
  switch (op) {
    case 'neg': return -a[0];
    case 'add': return a[0] + a[1];
    case 'sub': return a[0] - a[1];
    case 'mul': return a[0] * a[1];
    case 'div': return a[0] / a[1];
    case 'pow': return Math.pow(a[0], a[1]);
    case 'lt': return b(a[0] < a[1]);
    case 'le': return b(a[0] <= a[1]);
    case 'gt': return b(a[0] > a[1]);
    case 'ge': return b(a[0] >= a[1]);
    case 'eq': return b(a[0] === a[1]);
    case 'ne': return b(a[0] !== a[1]);
    case 'and': return b(a[0] !== 0 && a[1] !== 0);
    case 'or': return b(a[0] !== 0 || a[1] !== 0);
    case 'not': return b(a[0] === 0);
    case 'if': return a[0] !== 0 ? a[1] : a[2];
    case 'sin': return Math.sin(a[0]);
    case 'cos': return Math.cos(a[0]);
    case 'tan': return Math.tan(a[0]);
    case 'asin': return Math.asin(a[0]);
    case 'acos': return Math.acos(a[0]);
    case 'atan': return Math.atan(a[0]);
    case 'atan2': return Math.atan2(a[0], a[1]);
    case 'sinh': return Math.sinh(a[0]);
    case 'cosh': return Math.cosh(a[0]);
    case 'tanh': return Math.tanh(a[0]);
    case 'exp': return Math.exp(a[0]);
    case 'log': return Math.log(a[0]);
    case 'log10': return Math.log10(a[0]);
    case 'sqrt': return Math.sqrt(a[0]);
    case 'abs': return Math.abs(a[0]);
    case 'sign': return Math.sign(a[0]);
    case 'min': return Math.min(a[0], a[1]);
    case 'max': return Math.max(a[0], a[1]);
    case 'lookup': return lookupValue(a[0], a.slice(1, 1 + v), a.slice(1 + v), v);
    case 'lookupSlope': return lookupSlopeValue(a[0], a.slice(1, 1 + v), a.slice(1 + v), v);
    case 'lim': return limitValue(mode, a[0], a[1], a[2]);
    case 'limd': return limitSlope(mode, a[0], a[1], a[2], a[3]);
    case 'step': return stepValue(a[0], a[1], a[2]);
    case 'ramp': return rampValue(a[0], a[1], a[2]);
    case 'pulse': return pulseValue(a[0], a[1], a[2], a[3]);
    case 'sine': return sineValue(a[0], a[1], a[2]);
    default: return NaN;
  }
}

export interface EvalEnv {
  x?: ArrayLike<number>;
  u?: ArrayLike<number>;
  p?: ArrayLike<number>;
  h?: ArrayLike<number>;
  w?: ArrayLike<number>;
  t?: number;
  /** Limit modes by limit index (default: clamp). */
  modes?: ArrayLike<number>;
}

/**
 * Interprets the graph for the given roots (used for constants: param values, start values,
 * bounds, breakpoints, operating points; the hot paths use generated code).
 */
export function evaluate(g: Graph, roots: number[], env: EvalEnv): number[] {
  const order = g.reachable(roots);
  const val = new Map<number, number>();
  for (const id of order) {
    const n = g.nodes[id];
    let r: number;
    switch (n.op) {
      case 'c': r = n.v; break;
      case 'x': r = env.x ? env.x[n.v] : NaN; break;
      case 'u': r = env.u ? env.u[n.v] : NaN; break;
      case 'p': r = env.p ? env.p[n.v] : NaN; break;
      case 'h': r = env.h ? env.h[n.v] : NaN; break;
      case 'w': r = env.w ? env.w[n.v] : NaN; break;
      case 't': r = env.t ?? NaN; break;
      default: {
        const mode = n.op === 'lim' || n.op === 'limd' ? (env.modes ? env.modes[n.v] : 2) : 2;
        r = applyOp(n.op, n.args.map((a) => val.get(a)!), n.v, mode);
      }
    }
    val.set(id, r);
  }
  return roots.map((r) => val.get(r)!);
}
