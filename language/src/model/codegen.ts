// The only place that writes JavaScript source. Input is a model graph (model/graph.ts), never
// user text: every temporary is a mangled `v<id>`, every number is printed from its parsed value
// (String(x) round-trips a double exactly), and only the operations of the graph exist, each
// mapped below to a Math function from a fixed whitelist or to an inline expression. The
// generated functions are built with `new Function` once per compile and bound to their context
// (param vector, limit modes, held outputs) by a factory, so sweeps need no recompilation.

import { type Graph, type GNode, DEP, lookupSlopeValue, lookupValue } from './graph';

export interface FnWrite {
  /** Name of the output array argument (one of the function's `args`). */
  target: string;
  index: number;
  node: number;
}

export interface FnSpec {
  name: string;
  /** Parameter names of the generated function; leaves read `t`, `x`, `u`, `p`, `h`, `w` by these names. */
  args: string[];
  /** A fixed call emitted first (algebraic-loop solve); never built from user text. */
  prologue?: 'solveAlgebraic';
  /** Arrays filled with 0 before the writes (Jacobians). */
  zero?: string[];
  writes: FnWrite[];
}

export interface ModuleSpec {
  /** Factory parameters: the context arrays the functions close over (`p`, `m`, `h`, `w`, `S`). */
  context: string[];
  /** Compute param-only nodes once in the factory (the context `p` is fixed per factory call). */
  hoist: boolean;
  /** 'array': limits read their mode from context `m`; 'clamp': limits always clamp. */
  modes: 'array' | 'clamp';
  fns: FnSpec[];
}

/** Whitelisted Math functions by graph op. */
const MATH: Record<string, string> = {
  sin: 'sin', cos: 'cos', tan: 'tan', asin: 'asin', acos: 'acos', atan: 'atan', atan2: 'atan2',
  sinh: 'sinh', cosh: 'cosh', tanh: 'tanh', exp: 'exp', log: 'log', log10: 'log10', sqrt: 'sqrt',
  abs: 'abs', sign: 'sign', min: 'min', max: 'max', pow: 'pow',
};

const HELPERS = { lookup: lookupValue, lookupSlope: lookupSlopeValue };

export function numLiteral(v: number): string {
  if (Number.isNaN(v)) return 'NaN';
  if (v === Infinity) return 'Infinity';
  if (v === -Infinity) return '(-Infinity)';
  const s = String(v);
  return v < 0 ? `(${s})` : s;
}

class Emitter {
  private readonly names = new Map<number, string>();
  readonly lines: string[] = [];
  constructor(
    private readonly g: Graph,
    private readonly modes: 'array' | 'clamp',
    private readonly hoisted: Map<number, string> | null,
  ) {}

  ref(id: number): string {
    const n = this.g.nodes[id];
    if (n.op === 'c') return numLiteral(n.v);
    const h = this.hoisted?.get(id);
    if (h) return h;
    const name = this.names.get(id);
    if (!name) throw new Error(`codegen: node ${id} used before it was emitted`);
    return name;
  }

  emit(ids: number[], prefix: string): void {
    for (const id of ids) {
      const n = this.g.nodes[id];
      if (n.op === 'c' || this.hoisted?.has(id) || this.names.has(id)) continue;
      const name = `${prefix}${id}`;
      this.lines.push(`const ${name} = ${this.expr(n)};`);
      this.names.set(id, name);
    }
  }

  private expr(n: GNode): string {
    const a = n.args.map((x) => this.ref(x));
    switch (n.op) {
      case 'x': case 'u': case 'p': case 'h': case 'w':
        return `${n.op}[${n.v | 0}]`;
      case 't': return 't';
      case 'neg': return `-${a[0]}`;
      case 'add': return `${a[0]} + ${a[1]}`;
      case 'sub': return `${a[0]} - ${a[1]}`;
      case 'mul': return `${a[0]} * ${a[1]}`;
      case 'div': return `${a[0]} / ${a[1]}`;
      case 'pow': {
        const e = this.g.nodes[n.args[1]];
        if (e.op === 'c' && e.v === 2) return `${a[0]} * ${a[0]}`;
        return `pow(${a[0]}, ${a[1]})`;
      }
      case 'lt': return `(${a[0]} < ${a[1]} ? 1 : 0)`;
      case 'le': return `(${a[0]} <= ${a[1]} ? 1 : 0)`;
      case 'gt': return `(${a[0]} > ${a[1]} ? 1 : 0)`;
      case 'ge': return `(${a[0]} >= ${a[1]} ? 1 : 0)`;
      case 'eq': return `(${a[0]} === ${a[1]} ? 1 : 0)`;
      case 'ne': return `(${a[0]} !== ${a[1]} ? 1 : 0)`;
      case 'and': return `(${a[0]} !== 0 && ${a[1]} !== 0 ? 1 : 0)`;
      case 'or': return `(${a[0]} !== 0 || ${a[1]} !== 0 ? 1 : 0)`;
      case 'not': return `(${a[0]} === 0 ? 1 : 0)`;
      case 'if': return `(${a[0]} !== 0 ? ${a[1]} : ${a[2]})`;
      case 'lookup':
      case 'lookupSlope': {
        const k = n.v | 0;
        const xs = a.slice(1, 1 + k).join(', ');
        const ys = a.slice(1 + k).join(', ');
        return `H.${n.op}(${a[0]}, [${xs}], [${ys}], ${k})`;
      }
      case 'lim': {
        const [v, lo, hi] = a;
        const clamp = `(${v} < ${lo} ? ${lo} : ${v} > ${hi} ? ${hi} : ${v})`;
        if (this.modes === 'clamp') return clamp;
        const m = `m[${n.v | 0}]`;
        return `(${m} === 0 ? ${v} : ${m} === 2 ? ${clamp} : ${m} < 0 ? ${lo} : ${hi})`;
      }
      case 'limd': {
        const [v, lo, hi, dv] = a;
        const clamp = `(${v} < ${lo} || ${v} > ${hi} ? 0 : ${dv})`;
        if (this.modes === 'clamp') return clamp;
        const m = `m[${n.v | 0}]`;
        return `(${m} === 0 ? ${dv} : ${m} === 2 ? ${clamp} : 0)`;
      }
      case 'step': return `(${a[0]} >= ${a[1]} ? ${a[2]} : 0)`;
      case 'ramp': return `(${a[0]} >= ${a[1]} ? ${a[2]} * (${a[0]} - ${a[1]}) : 0)`;
      case 'pulse': return `(${a[0]} >= ${a[1]} && ${a[0]} < ${a[1]} + ${a[2]} ? ${a[3]} : 0)`;
      case 'sine': return `${a[1]} * sin(${a[2]} * ${a[0]})`;
      default: {
        const f = MATH[n.op];
        if (!f) throw new Error(`codegen: operation '${n.op}' is not allowed`);
        return `${f}(${a.join(', ')})`;
      }
    }
  }
}

const IDENT = /^[A-Za-z_][A-Za-z0-9_]*$/;

/** JavaScript source of the module factory (for inspection and tests). */
export function moduleSource(g: Graph, spec: ModuleSpec): string {
  for (const name of [...spec.context, ...spec.fns.flatMap((f) => [f.name, ...f.args, ...f.writes.map((w) => w.target)])]) {
    if (!IDENT.test(name)) throw new Error(`codegen: bad identifier ${name}`);
  }
  const lines: string[] = ['"use strict";'];
  lines.push(`const { ${Object.values(MATH).filter((v, i, s) => s.indexOf(v) === i).join(', ')} } = Math;`);
  let hoisted: Map<number, string> | null = null;
  if (spec.hoist) {
    hoisted = new Map();
    const all = g.reachable(spec.fns.flatMap((f) => f.writes.map((w) => w.node)));
    const pre = new Emitter(g, spec.modes, null);
    const ids = all.filter((id) => g.nodes[id].op !== 'c' && (g.nodes[id].deps & ~0) === 0);
    pre.emit(ids, 'k');
    lines.push(...pre.lines);
    for (const id of ids) hoisted.set(id, `k${id}`);
  }
  const fnTexts: string[] = [];
  for (const f of spec.fns) {
    const em = new Emitter(g, spec.modes, hoisted);
    const body: string[] = [];
    if (f.prologue === 'solveAlgebraic') body.push(`S.solve(${f.args.includes('t') ? 't' : '0'}, x);`);
    for (const z of f.zero ?? []) body.push(`${z}.fill(0);`);
    em.emit(g.reachable(f.writes.map((w) => w.node)), 'v');
    body.push(...em.lines);
    const zeroed = new Set(f.zero ?? []);
    for (const w of f.writes) {
      if (zeroed.has(w.target) && g.isConst(w.node) && g.value(w.node) === 0) continue;
      body.push(`${w.target}[${w.index | 0}] = ${em.ref(w.node)};`);
    }
    fnTexts.push(`${f.name}: function (${f.args.join(', ')}) {\n  ${body.join('\n  ')}\n}`);
  }
  lines.push(`return {\n${fnTexts.join(',\n')}\n};`);
  return lines.join('\n');
}

export type GeneratedModule = Record<string, (...args: never[]) => void>;

/** Compiles the module once; call the result with the context values to bind the functions. */
export function compileModule(g: Graph, spec: ModuleSpec): { source: string; bind: (...context: unknown[]) => GeneratedModule } {
  const source = moduleSource(g, spec);
  // eslint-disable-next-line @typescript-eslint/no-implied-eval
  const factory = new Function('H', ...spec.context, source) as (...a: unknown[]) => GeneratedModule;
  return { source, bind: (...context: unknown[]) => factory(HELPERS, ...context) };
}

export { DEP };
