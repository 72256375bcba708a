// Algebraic loops found from the structure of the file, as you type: which outputs pass an
// input straight through (direct feedthrough), and which arrows connect them. A cycle of arrows
// with feedthrough all the way round and no state in between is an algebraic loop (LW404 on
// every arrow of the cycle, each naming the others), unless the loop says `solve algebraic`.
//
// Structural means: no values are computed. An output equation feeds through when it reads an
// input (directly or through lets and other outputs); a transfer relation when the degrees of
// its numerator and denominator in `s` are equal (biproper); a PID law when it has a `kp` or a
// `kd`; a linear block through every D entry that is not a literal 0. Outputs of sampled
// controllers are held between samples and never feed through. The model compiler repeats the
// check numerically when it compiles the loop.

import type { DiagnosticSink } from '../diagnostics';
import type * as A from '../syntax/ast';
import { pathText, walkExpr } from '../syntax/ast';
import type { LoopSymbol, SymbolTable, SystemSymbol } from './symbols';
import { stronglyConnected } from '../graph/scc';

/** feedthrough.get(output)?.has(input): the output reads that input directly. */
type Feedthrough = Map<string, Set<string>>;

export function checkAlgebraicLoops(symbols: SymbolTable, sink: DiagnosticSink): void {
  const cache = new Map<SystemSymbol, Feedthrough>();
  const ftOf = (sys: SystemSymbol) => {
    let ft = cache.get(sys);
    if (!ft) cache.set(sys, (ft = feedthroughOf(sys, symbols)));
    return ft;
  };
  for (const loop of symbols.loops.values()) {
    if (loop.block.members.some((m) => m.kind === 'solveAlgebraic')) continue;
    checkLoop(loop, symbols, ftOf, sink);
  }
}

function feedthroughOf(sys: SystemSymbol, symbols: SymbolTable): Feedthrough {
  const ft: Feedthrough = new Map();
  if (sys.sample) return ft;
  const inputs = sys.inputs.filter((i) => !i.name.missing).map((i) => i.name.name);
  // inputs each let and output equation reads, transitively through lets and outputs
  const reads = new Map<string, Set<string>>();
  const direct = new Map<string, { inputs: Set<string>; via: Set<string> }>();
  const scan = (name: string, e: A.Expr | undefined) => {
    const d = { inputs: new Set<string>(), via: new Set<string>() };
    walkExpr(e, (x) => {
      const t = symbols.resolved.get(x);
      if (t?.kind !== 'member' || t.member.system !== sys) return;
      if (t.member.kind === 'input') d.inputs.add(t.member.name);
      else if (t.member.kind === 'let' || t.member.kind === 'output') d.via.add(t.member.name);
    });
    direct.set(name, d);
  };
  for (const l of sys.lets) if (!l.name.missing) scan(l.name.name, l.value);
  for (const o of sys.outputs) if (!o.name.missing && o.value) scan(o.name.name, o.value);
  const resolve = (name: string, stack: Set<string>): Set<string> => {
    const hit = reads.get(name);
    if (hit) return hit;
    const d = direct.get(name);
    const out = new Set<string>(d?.inputs ?? []);
    if (d && !stack.has(name)) {
      stack.add(name);
      for (const v of d.via) for (const i of resolve(v, stack)) out.add(i);
      stack.delete(name);
    }
    reads.set(name, out);
    return out;
  };
  for (const [out, src] of sys.outputSources) {
    if (src.kind === 'equation') ft.set(out, resolve(out, new Set()));
    else if (src.kind === 'transfer') {
      const deg = sDegrees(src.decl.value, symbols);
      if (deg && deg.num >= deg.den && !src.decl.input.missing) ft.set(out, new Set([src.decl.input.name]));
    } else if (src.kind === 'pid') {
      const gains = new Map(src.decl.entries.filter((e) => !e.name.missing).map((e) => [e.name.name, e.value]));
      const nonzero = (k: string) => gains.has(k) && !isLiteralZero(gains.get(k)!);
      if ((nonzero('kp') || nonzero('kd')) && !src.decl.input.missing) ft.set(out, new Set([src.decl.input.name]));
    } else if (src.kind === 'linear') {
      const D = src.decl.entries.find((e) => e.name.name === 'D')?.value;
      const outIndex = sys.outputs.findIndex((o) => o.name.name === out);
      const row = D?.kind === 'matrix' ? D.rows[outIndex] : undefined;
      const set = new Set<string>();
      row?.forEach((v, j) => {
        if (!isLiteralZero(v) && inputs[j]) set.add(inputs[j]);
      });
      ft.set(out, set);
    }
  }
  return ft;
}

function isLiteralZero(e: A.Expr): boolean {
  return (e.kind === 'number' || e.kind === 'quantity') && e.value === 0;
}

/** Degrees in `s` of the numerator and denominator of a transfer expression, structurally. */
function sDegrees(e: A.Expr, symbols: SymbolTable): { num: number; den: number } | undefined {
  switch (e.kind) {
    case 'number':
    case 'quantity':
      return { num: 0, den: 0 };
    case 'name': {
      const t = symbols.resolved.get(e);
      return t?.kind === 'builtin' && t.name === 's' ? { num: 1, den: 0 } : { num: 0, den: 0 };
    }
    case 'unary':
      return sDegrees(e.operand, symbols);
    case 'binary': {
      const a = sDegrees(e.left, symbols);
      const b = sDegrees(e.right, symbols);
      if (!a || !b) return undefined;
      switch (e.op) {
        case '+':
        case '-':
          return { num: Math.max(a.num + b.den, b.num + a.den), den: a.den + b.den };
        case '*':
          return { num: a.num + b.num, den: a.den + b.den };
        case '/':
          return { num: a.num + b.den, den: a.den + b.num };
        case '^': {
          const k = e.right.kind === 'number' ? e.right.value : NaN;
          if (!Number.isInteger(k)) return undefined;
          return k >= 0 ? { num: a.num * k, den: a.den * k } : { num: a.den * -k, den: a.num * -k };
        }
        default:
          return undefined;
      }
    }
    default:
      return undefined;
  }
}

function checkLoop(loop: LoopSymbol, symbols: SymbolTable, ftOf: (s: SystemSymbol) => Feedthrough, sink: DiagnosticSink): void {
  // nodes: wired instance inputs `Inst.input`; an edge u -> v when the arrow into v reads an
  // output of u's instance that feeds through from u (or reads the input u itself)
  const arrows = new Map<string, A.Arrow>();
  for (const m of loop.block.members) {
    if (m.kind === 'arrow' && m.target.length === 2 && !m.target.some((p) => p.missing)) {
      const key = pathText(m.target);
      if (!arrows.has(key)) arrows.set(key, m);
    }
  }
  const edges = new Map<string, Set<string>>();
  for (const [to, arrow] of arrows) {
    const from = new Set<string>();
    walkExpr(arrow.source, (x) => {
      if (x.kind !== 'member' || x.path.length !== 2) return;
      const inst = loop.instances.get(x.path[0].name);
      const t = symbols.resolved.get(x);
      if (!inst || t?.kind !== 'member') return;
      if (t.member.kind === 'input') from.add(`${inst.name}.${t.member.name}`);
      else if (t.member.kind === 'output') for (const i of ftOf(inst.system).get(t.member.name) ?? []) from.add(`${inst.name}.${i}`);
    });
    for (const f of from) if (arrows.has(f)) (edges.get(f) ?? edges.set(f, new Set()).get(f)!).add(to);
  }
  for (const comp of stronglyConnected([...arrows.keys()], (k) => [...(edges.get(k) ?? [])])) {
    const cyclic = comp.length > 1 || edges.get(comp[0])?.has(comp[0]);
    if (!cyclic) continue;
    const members = comp.map((k) => arrows.get(k)!);
    for (const a of members) {
      const others = members.filter((b) => b !== a);
      const names = comp.join(' → ');
      sink.error(
        'LW404',
        a.span,
        `algebraic loop: ${comp.length > 1 ? `the arrows into ${names} feed each other` : `the arrow into ${comp[0]} feeds itself`} with no state in between (every output on the way passes its input straight through). Add a state (a lag, a sampled controller) or write 'solve algebraic' in the loop`,
        { related: (others.length ? others : [a]).map((b) => ({ span: b.span, message: `arrow into ${pathText(b.target)} is part of the same algebraic loop` })) },
      );
    }
  }
}
