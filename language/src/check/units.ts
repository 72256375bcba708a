// The dimension checker: every place where a declared unit meets an inferred one.
//
// Expressions are inferred by `Inference` (units-expr.ts); this file walks the members of each
// block and states what each place expects: a state equation `x' = e` wants unit(x)/s, an
// arrow wants the unit of the input it feeds, a pid gain wants out/in, and so on. A unit error
// never stops the rest: each member is checked on its own, an unknown dimension is silent, and
// an unexpected failure inside one member becomes one diagnostic on that member.
//
// Conventions (documented for users in docs/language.md):
// - A bare 0 fits every unit (`start x = 0`, `limit u within 0 .. 5 [V]`).
// - A bare nonzero number where a dimensioned value is expected is a warning (LW308) with a fix
//   that writes the unit; so is a bare number for a quantity declared in a non-SI unit (deg,
//   degC, mm...), since bare numbers are read in SI.
// - In a `linear` block, entries are numbers in SI of the declared units; a dimensionless entry
//   is accepted as such, a dimensioned one must have the dimension of its ratio.

import type { DiagnosticSink, QuickFix } from '../diagnostics';
import type {
  Entry,
  Expr,
  FileAst,
  InputDecl,
  LinearBlock,
  LoopBlock,
  OutputDecl,
  PidLaw,
  QuantityExpr,
  StateDecl,
  SystemBlock,
  Ident,
  ParamDecl,
} from '../syntax/ast';
import { pathText } from '../syntax/ast';
import type { LoopSymbol, MemberSymbol, SymbolTable, SystemSymbol } from './symbols';
import { PER_TIME, TIME, type Dim, dimDiv, dimEq, dimMul, isDimless } from '../units/dimension';
import type { ParsedUnit } from '../units/registry';
import { describe, hintUnit, mulFactors, type Factors } from '../units/format';
import { DIMLESS_WANT, Inference, TIME_WANT, type Q, type Want } from './units-expr';

export interface UnitsResult {
  /** Inferred dimension of every expression node whose dimension is known. */
  dims: Map<Expr, Dim>;
  /** Declaration (StateDecl / InputDecl / OutputDecl) -> its parsed unit. */
  declared: Map<object, ParsedUnit>;
  /**
   * Param, let and signal declarations -> the inferred unit, for inlay hints: in the user's own
   * units where they combine into one (`kg*m^2`, `kN*mm`), else SI base units. `unit` converts
   * the SI value for display.
   */
  inferred: Map<object, { dim: Dim; text: string; unit: ParsedUnit }>;
  /** SI value and unit of each quantity literal. */
  quantities: Map<QuantityExpr, { si: number; unit: ParsedUnit }>;
}

const S: Factors = [{ name: 's', power: 1 }];

export function checkUnits(ast: FileAst, symbols: SymbolTable, sink: DiagnosticSink): UnitsResult {
  const inf = new Inference(symbols, sink);
  const result: UnitsResult = { dims: inf.dims, declared: new Map(), inferred: new Map(), quantities: inf.quantities };
  const c = new Checker(inf, symbols, result);
  for (const block of ast.blocks) {
    guard(inf, block.name.span, () => {
      if (block.kind === 'loop') c.loop(block);
      else c.system(block);
    });
  }
  return result;
}

function guard(inf: Inference, span: { start: number; end: number }, f: () => void): void {
  try {
    f();
  } catch (err) {
    inf.report('LW311', span, `the unit check stopped here on an internal error (please report): ${(err as Error)?.message ?? String(err)}`);
  }
}

/** The unit of a declaration as a Want. */
function declWant(u: ParsedUnit, what: string, code: Want['code'], decl?: { span: { start: number; end: number } }): Want {
  return { dim: u.dim, factors: u.factors, code, what, unit: u, angular: u.angle !== 0, declSpan: decl?.span };
}

class Checker {
  constructor(
    private readonly inf: Inference,
    private readonly symbols: SymbolTable,
    private readonly result: UnitsResult,
  ) {}

  private unitOf(decl: StateDecl | InputDecl | OutputDecl): ParsedUnit | undefined {
    const u = this.inf.declUnit(decl);
    if (u) this.result.declared.set(decl, u);
    return u;
  }

  private hint(decl: ParamDecl | { value: Expr }, q: Q | undefined): void {
    if (!q) return;
    let v = decl.value;
    while (v.kind === 'unary' && v.op !== 'not') v = v.operand;
    const written = v.kind === 'quantity' ? this.result.quantities.get(v)?.unit : undefined;
    const unit = written ?? hintUnit(q.factors, q.dim);
    this.result.inferred.set(decl, { dim: q.dim, text: unit.text, unit });
  }

  private memberOf(sys: SystemSymbol | undefined, name: Ident): MemberSymbol | undefined {
    if (!sys || name.missing) return undefined;
    return sys.members.get(name.name);
  }

  private ioUnit(sys: SystemSymbol | undefined, name: Ident, kinds: string[]): ParsedUnit | undefined {
    const m = this.memberOf(sys, name);
    if (!m || !kinds.includes(m.kind)) return undefined;
    return this.unitOf(m.decl as StateDecl | InputDecl | OutputDecl);
  }

  // ---------- systems ----------

  system(block: SystemBlock): void {
    const sys = [...this.symbols.systems.values()].find((s) => s.block === block);
    // Declared units first, so their errors come in text order and every later use finds them.
    for (const m of block.members) if (m.kind === 'state' || m.kind === 'input' || m.kind === 'output') this.unitOf(m);
    for (const m of block.members) {
      guard(this.inf, m.span, () => {
        switch (m.kind) {
          case 'param':
          case 'let':
            this.hint(m, this.inf.declQ(m));
            break;
          case 'state': {
            const u = this.unitOf(m);
            if (m.init) this.inf.check(m.init, u ? { ...declWant(u, `the start value of ${m.name.name}`, 'LW303'), fixes: replaceUnit(m, 'start value') } : undefined);
            break;
          }
          case 'input':
            break;
          case 'output': {
            const u = this.unitOf(m);
            if (m.value) this.inf.check(m.value, u ? { ...declWant(u, `output ${m.name.name}`, 'LW303'), fixes: replaceUnit(m, 'equation') } : undefined);
            break;
          }
          case 'derivEq': {
            const st = this.memberOf(sys, m.target);
            const u = st?.kind === 'state' ? this.unitOf(st.decl as StateDecl) : undefined;
            if (!u) {
              this.inf.infer(m.value);
              break;
            }
            const decl = st!.decl as StateDecl;
            this.inf.check(m.value, {
              dim: dimDiv(u.dim, TIME),
              factors: mulFactors(u.factors, S, -1),
              code: 'LW303',
              what: `${m.target.name}'`,
              angular: u.angle !== 0 && isDimless(u.dim),
              declSpan: decl.unit?.span,
              fixes: (q) => replaceUnitWith(decl, { dim: dimMul(q.dim, TIME), factors: mulFactors(q.factors, S) }, `${m.target.name}' = ...`),
            });
            break;
          }
          case 'transfer': {
            const yu = this.ioUnit(sys, m.output, ['output']);
            const uu = this.ioUnit(sys, m.input, ['input']);
            const want: Want | undefined =
              yu && uu
                ? { dim: dimDiv(yu.dim, uu.dim), factors: mulFactors(yu.factors, uu.factors, -1), code: 'LW303', what: `${m.output.name} / ${m.input.name}` }
                : undefined;
            this.inf.check(m.value, want);
            break;
          }
          case 'linear':
            this.linear(m, sys);
            break;
          case 'pid':
            this.pid(m, sys);
            break;
          case 'limit': {
            const u = this.ioUnit(sys, m.target, ['input', 'output']);
            for (const b of [m.lo, m.hi]) this.inf.check(b, u ? declWant(u, `a bound of ${m.target.name}`, 'LW303') : undefined);
            break;
          }
          case 'operatingPoint':
            for (const en of m.entries) {
              const u = this.ioUnit(sys, en.name, ['state', 'input']);
              this.inf.check(en.value, u ? declWant(u, `${en.name.name} at ${m.name.name}`, 'LW303') : undefined);
            }
            break;
          case 'sample':
            this.inf.check(m.period, TIME_WANT('the sample period'));
            break;
        }
      });
    }
  }

  private pid(m: PidLaw, sys: SystemSymbol | undefined): void {
    const yu = this.ioUnit(sys, m.output, ['output']);
    const uu = this.ioUnit(sys, m.input, ['input']);
    const ratio = yu && uu ? { dim: dimDiv(yu.dim, uu.dim), factors: mulFactors(yu.factors, uu.factors, -1) } : undefined;
    const rel = `${m.output.name} / ${m.input.name}`;
    for (const en of m.entries) {
      let want: Want | undefined;
      switch (en.name.name) {
        case 'kp':
          if (ratio) want = { ...ratio, code: 'LW303', what: `kp (${rel})` };
          break;
        case 'ki':
          if (ratio) want = { dim: dimDiv(ratio.dim, TIME), factors: mulFactors(ratio.factors, S, -1), code: 'LW303', what: `ki (${rel} per second)` };
          break;
        case 'kd':
          if (ratio) want = { dim: dimMul(ratio.dim, TIME), factors: mulFactors(ratio.factors, S), code: 'LW303', what: `kd (${rel} times seconds)` };
          break;
        case 'rolloff':
          want = { dim: PER_TIME, factors: [{ name: 'rad', power: 1 }, { name: 's', power: -1 }], code: 'LW302', what: 'rolloff (a corner frequency)', angular: true };
          break;
        case 'antiwindup':
          want = TIME_WANT('antiwindup (a tracking time)');
          break;
      }
      this.inf.check(en.value, want);
    }
  }

  private linear(m: LinearBlock, sys: SystemSymbol | undefined): void {
    const entries = new Map<string, Entry>();
    for (const en of m.entries) if (!entries.has(en.name.name)) entries.set(en.name.name, en);
    if (!sys) {
      for (const en of m.entries) this.inf.infer(en.value);
      return;
    }
    const unit = (d: StateDecl | InputDecl | OutputDecl) => this.unitOf(d);
    const xs = sys.states.map(unit);
    const us = sys.inputs.map(unit);
    const ys = sys.outputs.map(unit);
    const hidden = sys.states.length === 0;
    // With no declared states the block's states are hidden; A fixes how many.
    const aEntry = entries.get('A');
    const n = hidden ? (aEntry?.value.kind === 'matrix' ? aEntry.value.rows.length : 0) : xs.length;
    const sizes: Record<string, [number, number, string, string]> = {
      A: [n, n, hidden ? 'hidden states' : 'states', hidden ? 'hidden states' : 'states'],
      B: [n, us.length, hidden ? 'hidden states' : 'states', 'inputs'],
      C: [ys.length, n, 'outputs', hidden ? 'hidden states' : 'states'],
      D: [ys.length, us.length, 'outputs', 'inputs'],
    };
    const ratio = (name: string, i: number, j: number): { dim: Dim; factors: Factors } | undefined => {
      const row = name === 'A' || name === 'B' ? xs[i] : ys[i];
      const col = name === 'A' || name === 'C' ? xs[j] : us[j];
      if (hidden && name !== 'D') return name === 'A' ? { dim: PER_TIME, factors: [{ name: 's', power: -1 }] } : undefined;
      if (!row || !col) return undefined;
      const d = dimDiv(row.dim, col.dim);
      const f = mulFactors(row.factors, col.factors, -1);
      return name === 'A' || name === 'B' ? { dim: dimDiv(d, TIME), factors: mulFactors(f, S, -1) } : { dim: d, factors: f };
    };
    for (const en of m.entries) {
      const name = en.name.name;
      const size = sizes[name];
      const v = en.value;
      if (!size) {
        this.inf.infer(v);
        continue;
      }
      const [rows, cols, rowWords, colWords] = size;
      const rowWord = rows === 1 ? rowWords.slice(0, -1) : rowWords;
      const colWord = cols === 1 ? colWords.slice(0, -1) : colWords;
      if (v.kind !== 'matrix') {
        this.inf.infer(v);
        if (v.kind !== 'error') this.inf.report('LW309', v.span, `${name} must be a matrix [[...], ...] of ${rows}×${cols} (${rows} ${rowWord} by ${cols} ${colWord})`);
        continue;
      }
      const r = v.rows.length;
      const widths = v.rows.map((row) => row.length);
      const ragged = widths.findIndex((w) => w !== widths[0]);
      if (ragged >= 0) {
        this.inf.report('LW309', v.rowSpans[ragged] ?? v.span, `row ${ragged + 1} of ${name} has ${widths[ragged]} entries, row 1 has ${widths[0]}: every row of a matrix has the same length`);
      } else if (r !== rows || (widths[0] ?? 0) !== cols) {
        const got = `${r}×${widths[0] ?? 0}`;
        this.inf.report('LW309', v.span, `${name} is ${got}; it must be ${rows}×${cols} (${rows} ${rowWord} by ${cols} ${colWord}${rowWords === 'states' || colWords === 'states' ? `: ${sys.states.map((s) => s.name.name).join(', ') || 'none'}` : ''})`);
      }
      v.rows.forEach((row, i) =>
        row.forEach((item, j) => {
          const q = this.inf.infer(item);
          const want = ratio(name, i, j);
          if (!q || !want || isDimless(q.dim) || dimEq(q.dim, want.dim)) return;
          this.inf.report('LW302', item.span, `entry (${i + 1}, ${j + 1}) of ${name} must be ${describe(want.factors, want.dim)} (or a plain number in SI); this is ${describe(q.factors, q.dim)}`);
        }),
      );
    }
  }

  // ---------- loops ----------

  private instance(loop: LoopSymbol | undefined, path: Ident[]): SystemSymbol | undefined {
    if (!path.length || path[0].missing) return undefined;
    return loop?.instances.get(path[0].name)?.system ?? this.symbols.systems.get(path[0].name);
  }

  private pathUnit(loop: LoopSymbol | undefined, path: Ident[], kinds: string[]): ParsedUnit | undefined {
    if (path.length !== 2) return undefined;
    return this.ioUnit(this.instance(loop, path), path[1], kinds);
  }

  private paramQ(sys: SystemSymbol | undefined, name: Ident): Q | undefined {
    const m = this.memberOf(sys, name);
    return m?.kind === 'param' ? this.inf.declQ(m.decl as ParamDecl) : undefined;
  }

  loop(block: LoopBlock): void {
    const loop = [...this.symbols.loops.values()].find((l) => l.block === block);
    for (const m of block.members) {
      guard(this.inf, m.span, () => {
        switch (m.kind) {
          case 'signal':
          case 'param':
            this.hint(m, this.inf.declQ(m));
            break;
          case 'arrow': {
            const u = this.pathUnit(loop, m.target, ['input']);
            this.inf.check(m.source, u ? declWant(u, pathText(m.target), 'LW303') : undefined);
            break;
          }
          case 'use': {
            const sys = this.symbols.systems.get(m.system.name);
            for (const o of m.overrides) {
              const q = this.paramQ(sys, o.name);
              this.inf.check(o.value, q ? { dim: q.dim, factors: q.factors, code: 'LW302', what: `param ${m.system.name}.${o.name.name}` } : undefined);
            }
            break;
          }
          case 'start': {
            const u = this.pathUnit(loop, m.target, ['state']);
            this.inf.check(m.value, u ? declWant(u, pathText(m.target), 'LW303') : undefined);
            break;
          }
          case 'simulate':
            this.inf.check(m.duration, TIME_WANT('the duration of simulate'));
            for (const o of m.options) {
              const n = o.name.name;
              if (n === 'tolerance' || n === 'points') this.inf.check(o.value, DIMLESS_WANT(n));
              else if (n === 'budget') this.inf.check(o.value, TIME_WANT('budget (a wall-clock time)'));
              else this.inf.infer(o.value);
            }
            break;
          case 'sweepStart': {
            const u = this.pathUnit(loop, m.target, ['state']);
            for (const v of m.values) this.inf.check(v, u ? declWant(u, pathText(m.target), 'LW303') : undefined);
            break;
          }
          case 'sweepParam': {
            let q: Q | undefined;
            if (m.target.length === 1) {
              const lp = loop?.params.get(m.target[0].name);
              q = lp ? this.inf.declQ(lp) : undefined;
            } else if (m.target.length === 2) q = this.paramQ(this.instance(loop, m.target), m.target[1]);
            const want: Want | undefined = q ? { dim: q.dim, factors: q.factors, code: 'LW302', what: `param ${pathText(m.target)}` } : undefined;
            this.inf.check(m.lo, want);
            this.inf.check(m.hi, want);
            this.inf.check(m.steps, DIMLESS_WANT('the number of steps'));
            break;
          }
          case 'show':
            for (const s of m.signals) this.inf.infer(s);
            break;
          case 'expect':
            this.inf.infer(m.test);
            break;
          default:
            break;
        }
      });
    }
  }
}

/** Fix for LW303 on a state or output: replace its declared unit with the inferred one. */
function replaceUnit(decl: StateDecl | OutputDecl, what: string): (q: Q) => QuickFix[] {
  return (q) => replaceUnitWith(decl, q, what);
}

function replaceUnitWith(decl: StateDecl | OutputDecl, q: { dim: Dim; factors: Factors }, what: string): QuickFix[] {
  if (!decl.unit || isDimless(q.dim) && q.factors.length === 0) return [];
  const text = hintUnit(q.factors, q.dim).text;
  if (text === decl.unit.text) return [];
  return [{ title: `Change the unit of ${decl.name.name} to [${text}] (as its ${what} gives)`, edits: [{ span: decl.unit.span, newText: text }] }];
}
