// Dimension inference for expressions, with the diagnostics that arise inside them.
//
// Each expression gets a `Q`: its dimension, the factors of the user's own units that make it
// up (for messages and hints), and a few tags the warnings need (a Hz-counted frequency, an
// absolute temperature, a bare number, dependence on the Laplace variable). An expression whose
// dimension cannot be known — because of an earlier error, an unresolved name, a missing
// operand — is `undefined`, and nothing built on it reports again.
//
// A `Want` is what the context expects (a declared unit, time, 1/s...). It is passed down
// through sums, branches and min/max so that a mismatch is reported on the term that differs,
// not on the whole line.

import { CODES } from './codes';
import type { SymbolTable, Target } from './symbols';
import type { DiagnosticSink, QuickFix, Span } from '../diagnostics';
import type { CallExpr, Expr, ListExpr, ParamDecl, LetDecl, SignalDecl, QuantityExpr, StateDecl, InputDecl, OutputDecl } from '../syntax/ast';
import { DIMLESS, PER_TIME, TIME, type Dim, dimDiv, dimEq, dimMul, dimPow, formatDim, isDimless } from '../units/dimension';
import { parseUnit, toSI, type ParsedUnit } from '../units/registry';
import { describe, factorsText, mulFactors, powFactors, type Factors } from '../units/format';

export interface Q {
  dim: Dim;
  factors: Factors;
  /** A bare number (possibly negated or folded from bare numbers). */
  bare?: boolean;
  /** The literal whose unit, once written, would fix a bare number. */
  bareAt?: Expr;
  bool?: boolean;
  /** The value in SI when it is a constant the checker can fold (numbers, quantities, pi, params). */
  constant?: number;
  /** The Hz-counted quantity or name this frequency comes from (where a warning goes). */
  cycle?: Expr;
  /** The Hz literal at its origin: one warning per origin, however often it is read. */
  cycleKey?: Expr;
  /** An angular frequency (rad/s, rpm). */
  angleRate?: boolean;
  /** An absolute temperature: in an offset unit (degC) or declared in kelvin. */
  absTemp?: 'offset' | 'kelvin';
  /** Depends on the Laplace variable s. */
  sDep?: boolean;
  /** Mentions pi (so a Hz value multiplied by it counts as converted). */
  hasPi?: boolean;
}

export interface Want {
  dim: Dim;
  factors: Factors;
  /** Code for a mismatch: LW303 against a declaration, LW302 otherwise. */
  code: 'LW302' | 'LW303' | 'LW310';
  /** What is expected, as the message names it: "rate'", "Steady.err", "the sample period". */
  what: string;
  /** The declared unit behind the expectation, when there is one (for bare numbers read in SI). */
  unit?: ParsedUnit;
  /** An angular frequency is expected: a Hz value here gets LW306. */
  angular?: boolean;
  /** Extra fixes for a mismatch, given the inferred quantity. */
  fixes?: (q: Q) => QuickFix[];
  /** Extra fix titles: alternatives to insert for a bare number. */
  bareUnits?: string[];
  /** Where the declaration is, for related information. */
  declSpan?: Span;
}

const S: Factors = [{ name: 's', power: 1 }];
const PER_S: Factors = [{ name: 's', power: -1 }];

export const TIME_WANT = (what: string): Want => ({ dim: TIME, factors: S, code: 'LW302', what });
export const DIMLESS_WANT = (what: string): Want => ({ dim: DIMLESS, factors: [], code: 'LW302', what });

type ValueDecl = ParamDecl | LetDecl | SignalDecl;

export interface InferenceResults {
  dims: Map<Expr, Dim>;
  quantities: Map<QuantityExpr, { si: number; unit: ParsedUnit }>;
}

function plainTag(q: Q): Q {
  // A value read through a name is no longer a literal.
  const { bare: _b, bareAt: _a, ...rest } = q;
  return rest;
}

function fold(a: number | undefined, b: number | undefined, f: (x: number, y: number) => number): number | undefined {
  return a === undefined || b === undefined ? undefined : f(a, b);
}

export class Inference {
  readonly dims = new Map<Expr, Dim>();
  readonly quantities = new Map<QuantityExpr, { si: number; unit: ParsedUnit }>();
  private readonly declMemo = new Map<object, Q | null>();
  private readonly inProgress = new Set<object>();
  private readonly unitMemo = new Map<object, ParsedUnit | null>();
  private readonly hzReported = new Set<Expr>();

  constructor(
    private readonly symbols: SymbolTable,
    private readonly sink: DiagnosticSink,
  ) {}

  report(code: string, span: Span, message: string, extra?: Parameters<DiagnosticSink['report']>[4]): void {
    const severity = CODES.get(code)?.severity ?? 'error';
    this.sink.report(code, severity, span, message, extra);
  }

  // ---------- declared units ----------

  /** Parses the unit of a state, input or output once, reporting LW301 on the bad part. */
  declUnit(decl: StateDecl | InputDecl | OutputDecl): ParsedUnit | undefined {
    if (this.unitMemo.has(decl)) return this.unitMemo.get(decl) ?? undefined;
    let u: ParsedUnit | null = null;
    if (decl.unit) {
      const r = parseUnit(decl.unit.text);
      if (r.ok) u = r.unit;
      else this.unitError(decl.unit.span, decl.unit.outer, r);
    }
    this.unitMemo.set(decl, u);
    return u ?? undefined;
  }

  private unitError(inner: Span, outer: Span, r: { message: string; start: number; end: number }): void {
    const span = r.end > r.start ? { start: inner.start + r.start, end: inner.start + r.end } : outer;
    this.report('LW301', span, r.message);
  }

  unitQ(u: ParsedUnit): Q {
    const q: Q = { dim: u.dim, factors: u.factors };
    if (u.angle !== 0 && dimEq(u.dim, PER_TIME)) q.angleRate = true;
    if (u.flavour === 'absoluteTemperature') q.absTemp = 'offset';
    else if (u.factors.length === 1 && u.factors[0].name === 'K' && u.factors[0].power === 1) q.absTemp = 'kelvin';
    return q;
  }

  // ---------- names ----------

  /** The inferred quantity of a param, let or signal (memoised; a cycle gives undefined). */
  declQ(decl: ValueDecl): Q | undefined {
    const hit = this.declMemo.get(decl);
    if (hit !== undefined) return hit ?? undefined;
    if (this.inProgress.has(decl)) return undefined;
    this.inProgress.add(decl);
    let q: Q | undefined;
    try {
      q = this.infer(decl.value);
    } finally {
      this.inProgress.delete(decl);
    }
    this.declMemo.set(decl, q ?? null);
    return q;
  }

  private memberQ(t: Target, e: Expr): Q | undefined {
    switch (t.kind) {
      case 'member': {
        const m = t.member;
        if (m.kind === 'param' || m.kind === 'let') return this.readThrough(this.declQ(m.decl as ParamDecl | LetDecl), e);
        if (m.kind === 'state' || m.kind === 'input' || m.kind === 'output') {
          const u = this.declUnit(m.decl as StateDecl);
          return u ? this.unitQ(u) : undefined;
        }
        return undefined;
      }
      case 'pointValue': {
        const m = t.member;
        if (m.kind !== 'state' && m.kind !== 'input') return undefined;
        const u = this.declUnit(m.decl as StateDecl | InputDecl);
        return u ? this.unitQ(u) : undefined;
      }
      case 'signal':
      case 'loopParam':
        return this.readThrough(this.declQ(t.decl), e);
      case 'builtin':
        if (t.name === 'pi') return { dim: DIMLESS, factors: [], constant: Math.PI, hasPi: true };
        if (t.name === 't') return { dim: TIME, factors: S };
        return { dim: PER_TIME, factors: PER_S, sDep: true };
      default:
        return undefined;
    }
  }

  private readThrough(q: Q | undefined, e: Expr): Q | undefined {
    if (!q) return undefined;
    const r = plainTag(q);
    if (r.cycle) r.cycle = e;
    return r;
  }

  // ---------- expressions ----------

  infer(e: Expr | undefined, want?: Want): Q | undefined {
    if (!e) return undefined;
    const q = this.inferInner(e, want);
    if (q) this.dims.set(e, q.dim);
    return q;
  }

  private inferInner(e: Expr, want?: Want): Q | undefined {
    switch (e.kind) {
      case 'number':
        return Number.isFinite(e.value) ? { dim: DIMLESS, factors: [], bare: true, bareAt: e, constant: e.value } : undefined;
      case 'quantity':
        return this.quantity(e);
      case 'name':
      case 'member': {
        const t = this.symbols.resolved.get(e);
        return t ? this.memberQ(t, e) : undefined;
      }
      case 'deriv': {
        const t = this.symbols.resolved.get(e);
        if (!t || t.kind !== 'member' || t.member.kind !== 'state') return undefined;
        const u = this.declUnit(t.member.decl as StateDecl);
        return u ? { dim: dimDiv(u.dim, TIME), factors: mulFactors(u.factors, S, -1) } : undefined;
      }
      case 'unary': {
        if (e.op === 'not') {
          const q = this.infer(e.operand);
          if (q && !q.bool) this.report('LW310', e.operand.span, `'not' needs a condition (a comparison); this is ${describe(q.factors, q.dim)}`);
          return { dim: DIMLESS, factors: [], bool: true };
        }
        const q = this.infer(e.operand, want);
        if (!q) return undefined;
        if (e.op === '+') return q;
        return { ...q, constant: q.constant === undefined ? undefined : -q.constant, absTemp: undefined };
      }
      case 'binary':
        return this.binary(e, want);
      case 'call':
        return this.call(e, want);
      case 'if': {
        const c = this.infer(e.cond);
        if (c && !c.bool) this.report('LW310', e.cond.span, `the condition of 'if' must be a comparison (or several joined by and/or/not); this is ${describe(c.factors, c.dim)}`);
        const a = this.infer(e.then, want);
        const b = this.infer(e.else, want);
        return this.unify(a, e.then, b, e.else, want, 'branch', 'the other branch');
      }
      case 'list': {
        let first: Q | undefined;
        for (const item of e.items) {
          const q = this.infer(item, want);
          if (q && !first) first = q;
        }
        return first ? plainTag(first) : undefined;
      }
      case 'matrix':
        for (const row of e.rows) for (const item of row) this.infer(item);
        return undefined;
      case 'error':
        return undefined;
    }
  }

  private quantity(e: QuantityExpr): Q | undefined {
    const r = parseUnit(e.unit.text);
    if (!r.ok) {
      this.unitError(e.unit.span, e.unit.outer, r);
      return undefined;
    }
    const u = r.unit;
    const si = toSI(e.value, u);
    this.quantities.set(e, { si, unit: u });
    const q = this.unitQ(u);
    q.constant = si;
    if (q.absTemp === 'kelvin') q.absTemp = undefined; // a kelvin literal may be a difference
    if (u.flavour === 'cycle') q.cycle = q.cycleKey = e;
    return q;
  }

  // ---------- operators ----------

  private binary(e: Extract<Expr, { kind: 'binary' }>, want?: Want): Q | undefined {
    const { op } = e;
    if (op === '+' || op === '-') {
      const l = this.infer(e.left, want);
      const r = this.infer(e.right, want);
      if (l && r && dimEq(l.dim, r.dim)) {
        this.hzBeside(l, r);
        if (l.cycle && r.angleRate) this.hz(l, 'is added to an angular frequency in rad/s');
        if (r.cycle && l.angleRate) this.hz(r, 'is added to an angular frequency in rad/s');
        if (op === '+' && l.absTemp && r.absTemp && (l.absTemp === 'offset' || r.absTemp === 'offset')) {
          const off = l.absTemp === 'offset' ? e.left : e.right;
          this.report('LW307', e.span, `both sides of '+' are absolute temperatures: a degC value counts from absolute zero here (0 degC is 273.15 K), so their sum is meaningless; write a temperature difference in K`, {
            related: [{ span: off.span, message: 'absolute temperature in degC' }],
          });
        }
        let absTemp: Q['absTemp'];
        if (op === '-') absTemp = l.absTemp && !r.absTemp ? l.absTemp : undefined;
        else absTemp = l.absTemp ?? r.absTemp;
        return {
          dim: l.dim,
          factors: l.bare && !r.bare ? r.factors : l.factors,
          bare: l.bare && r.bare,
          constant: fold(l.constant, r.constant, op === '+' ? (x, y) => x + y : (x, y) => x - y),
          cycle: l.cycle ?? r.cycle,
          cycleKey: l.cycle ? l.cycleKey : r.cycleKey,
          angleRate: l.angleRate || r.angleRate,
          absTemp,
          sDep: l.sDep || r.sDep,
          hasPi: l.hasPi || r.hasPi,
        };
      }
      const u = this.unify(l, e.left, r, e.right, want, 'term', `the other side of '${op}'`);
      return u ? { ...u, sDep: l?.sDep || r?.sDep, bare: false, bareAt: undefined, constant: undefined } : undefined;
    }
    if (op === '*' || op === '/') {
      const l = this.infer(e.left);
      const r = this.infer(e.right);
      if (!l || !r) return undefined;
      this.hzBeside(l, r);
      const sign = op === '*' ? 1 : -1;
      const keeps = (x: Q, other: Q) => !other.hasPi && !other.sDep && (isDimless(other.dim) || dimEq(other.dim, TIME));
      let cycle: Expr | undefined;
      let cycleKey: Expr | undefined;
      if (l.cycle && keeps(l, r)) [cycle, cycleKey] = [l.cycle, l.cycleKey];
      else if (r.cycle && op === '*' && keeps(r, l)) [cycle, cycleKey] = [r.cycle, r.cycleKey];
      return {
        dim: sign === 1 ? dimMul(l.dim, r.dim) : dimDiv(l.dim, r.dim),
        factors: mulFactors(l.factors, r.factors, sign),
        bare: l.bare && r.bare,
        constant: fold(l.constant, r.constant, sign === 1 ? (x, y) => x * y : (x, y) => x / y),
        cycle,
        cycleKey,
        angleRate: (l.angleRate && isDimless(r.dim)) || (op === '*' && r.angleRate && isDimless(l.dim)),
        sDep: l.sDep || r.sDep,
        hasPi: l.hasPi || r.hasPi,
      };
    }
    if (op === '^') {
      const l = this.infer(e.left);
      const r = this.infer(e.right);
      if (!l || !r) return undefined;
      if (!isDimless(r.dim)) {
        this.report('LW305', e.right.span, `an exponent must be dimensionless; this one is ${describe(r.factors, r.dim)}`);
        return undefined;
      }
      if (r.constant === undefined) {
        if (isDimless(l.dim)) return { dim: DIMLESS, factors: [], sDep: l.sDep || r.sDep };
        this.report('LW305', e.right.span, `the power of a dimensioned value (here ${describe(l.factors, l.dim)}) must be a constant number, so that its unit is known`);
        return undefined;
      }
      const k = r.constant;
      return {
        dim: dimPow(l.dim, k),
        factors: powFactors(l.factors, k),
        bare: l.bare,
        constant: fold(l.constant, k, (x, y) => x ** y),
        cycle: l.cycle,
        cycleKey: l.cycleKey,
        sDep: l.sDep || r.sDep,
        hasPi: l.hasPi,
      };
    }
    if (op === 'and' || op === 'or') {
      for (const side of [e.left, e.right]) {
        const q = this.infer(side);
        if (q && !q.bool) this.report('LW310', side.span, `'${op}' joins conditions (comparisons); this is ${describe(q.factors, q.dim)}`);
      }
      return { dim: DIMLESS, factors: [], bool: true };
    }
    // comparisons
    const l = this.infer(e.left);
    const r = this.infer(e.right);
    if (l && r && !dimEq(l.dim, r.dim)) {
      if (l.bare && !r.bare) this.bareWarn(e.left, l, r, `'${op}' compares it with`);
      else if (r.bare && !l.bare) this.bareWarn(e.right, r, l, `'${op}' compares it with`);
      else
        this.report('LW310', e.right.span, `cannot compare ${describe(l.factors, l.dim)} with ${describe(r.factors, r.dim)}`, {
          related: [{ span: e.left.span, message: `left side: ${describe(l.factors, l.dim)}` }],
        });
    }
    return { dim: DIMLESS, factors: [], bool: true };
  }

  /**
   * Joins two quantities that must have the same dimension (sum terms, branches, min/max
   * arguments). A bare number takes the other side's unit with LW308; with an expectation, the
   * side that differs from it is blamed; else the right side.
   */
  private unify(l: Q | undefined, le: Expr, r: Q | undefined, re: Expr, want: Want | undefined, noun: string, otherSide: string): Q | undefined {
    if (!l || !r) return undefined;
    if (dimEq(l.dim, r.dim)) return { ...l, factors: l.bare && !r.bare ? r.factors : l.factors, bare: l.bare && r.bare, cycle: l.cycle ?? r.cycle, cycleKey: l.cycle ? l.cycleKey : r.cycleKey, sDep: l.sDep || r.sDep };
    if (l.bare && !r.bare) {
      this.bareWarn(le, l, r, `${otherSide} is`, noun !== 'term');
      return r;
    }
    if (r.bare && !l.bare) {
      this.bareWarn(re, r, l, `${otherSide} is`, noun !== 'term');
      return l;
    }
    if (want && dimEq(l.dim, want.dim)) {
      this.mismatch(re, r, want, noun);
      return l;
    }
    if (want && dimEq(r.dim, want.dim)) {
      this.mismatch(le, l, want, noun);
      return r;
    }
    this.report('LW302', re.span, `this ${noun} is ${describe(r.factors, r.dim)}, but ${otherSide} is ${describe(l.factors, l.dim)}`, {
      related: [{ span: le.span, message: `${describe(l.factors, l.dim)}` }],
    });
    return undefined;
  }

  /**
   * LW308 on a bare number that should carry the unit of `other`. Zero fits every unit but one
   * with an offset: compared with, or chosen instead of, a degC value it is 0 K. Added to one it
   * changes nothing, so a sum term (`level`: false) is left alone.
   */
  private bareWarn(e: Expr, q: Q, other: Q, why: string, level = true): void {
    if (q.constant === 0) {
      if (level && other.absTemp === 'offset') this.zeroInOffsetUnit(e, q, factorsText(other.factors, other.dim), `${why} an absolute temperature`);
      return;
    }
    const text = factorsText(other.factors, other.dim);
    const fixes = q.bareAt ? [insertUnit(q.bareAt, text, true)] : [];
    this.report('LW308', e.span, `a bare number is dimensionless, but ${why} ${describe(other.factors, other.dim)}: write the unit, e.g. [${text}]`, { fixes });
  }

  /**
   * LW308 on a bare 0 where a unit with an offset (degC) is meant: a bare number is read in SI,
   * so this 0 is 0 K, absolute zero, not the zero of the offset unit.
   */
  private zeroInOffsetUnit(e: Expr, q: Q, unitText: string, why: string): void {
    const fixes = q.bareAt ? [insertUnit(q.bareAt, unitText, true)] : [];
    this.report('LW308', e.span, `a bare 0 is read in SI, as 0 K (absolute zero), but ${why}: write [${unitText}] if you mean 0 ${unitText}`, { fixes });
  }

  /** LW306 once per use of a Hz-counted value. */
  hz(q: Q, where: string): void {
    const origin = q.cycle;
    if (!origin) return;
    const key = q.cycleKey ?? origin;
    if (this.hzReported.has(key)) return;
    this.hzReported.add(key);
    const what = origin.kind === 'quantity' ? `${origin.text} [${origin.unit.text}]` : origin.kind === 'name' ? `'${origin.name}'` : 'this value';
    this.report('LW306', origin.span, `${what} counts cycles per second (Hz) but ${where}: 1 Hz = 2π rad/s. Write it in rad/s, or multiply by 2*pi`);
  }

  private hzBeside(l: Q, r: Q): void {
    if (l.sDep && !r.sDep && r.cycle) this.hz(r, "stands next to the Laplace variable s, which counts radians per second");
    if (r.sDep && !l.sDep && l.cycle) this.hz(l, "stands next to the Laplace variable s, which counts radians per second");
  }

  // ---------- checks against an expectation ----------

  /** Infers `e` and reports when it does not fit `want`. Returns the inferred quantity. */
  check(e: Expr | undefined, want: Want | undefined): Q | undefined {
    if (!e) return undefined;
    const q = this.infer(e, want);
    if (!q || !want) return q;
    this.compare(e, q, want);
    return q;
  }

  compare(e: Expr, q: Q, want: Want): boolean {
    if (dimEq(q.dim, want.dim)) {
      if (want.angular && q.cycle) this.hz(q, `${want.what} is an angular frequency (rad/s)`);
      const u = want.unit;
      if (q.bare && q.constant !== undefined && q.constant !== 0 && u && (Math.abs(u.scale - 1) > 1e-12 || u.offset !== 0)) {
        const fixes = q.bareAt ? [insertUnit(q.bareAt, u.text, true)] : [];
        this.report('LW308', e.span, `a bare number is read in SI (${formatDim(u.dim) === '1' ? 'rad or plain number' : formatDim(u.dim)}), not in the declared ${u.text} of ${want.what}: write [${u.text}] if that is what you mean`, { fixes });
      }
      return true;
    }
    this.mismatch(e, q, want, 'expression');
    return false;
  }

  private mismatch(e: Expr, q: Q, want: Want, noun: string): void {
    const wanted = describe(want.factors, want.dim);
    if (q.bare) {
      if (q.constant === 0) {
        if (want.unit && want.unit.offset !== 0) this.zeroInOffsetUnit(e, q, want.unit.text, `${want.what} is declared in ${want.unit.text}`);
        return;
      }
      const text = factorsText(want.factors, want.dim);
      const units = [text, ...(want.bareUnits ?? []).filter((x) => x !== text)];
      const fixes = q.bareAt ? units.map((t, i) => insertUnit(q.bareAt!, t, i === 0)) : [];
      this.report('LW308', e.span, `a bare number is dimensionless, but ${want.what} must be ${wanted}: write the unit, e.g. [${text}]`, { fixes });
      return;
    }
    const related = want.declSpan ? [{ span: want.declSpan, message: `declared here` }] : undefined;
    this.report(want.code, e.span, `${want.what} must be ${wanted}; this ${noun} is ${describe(q.factors, q.dim)}`, {
      related,
      // Replacing the declared unit only helps when the whole expression is what differs.
      fixes: noun === 'expression' ? want.fixes?.(q) : undefined,
    });
  }

  // ---------- calls ----------

  private call(e: CallExpr, want?: Want): Q | undefined {
    const name = e.callee.missing ? '' : e.callee.name;
    const a = e.args;
    const dimless = (i: number, why: string): Q | undefined => {
      const q = this.infer(a[i]);
      if (q && !isDimless(q.dim)) this.report('LW304', a[i].span, `${name} needs a dimensionless argument${why}; this is ${describe(q.factors, q.dim)}`);
      return q;
    };
    switch (name) {
      case 'sin':
      case 'cos':
      case 'tan': {
        const q = dimless(0, ' (an angle)');
        if (q?.cycle) this.hz(q, `${name} takes radians, and a frequency in Hz times a time counts cycles`);
        return a.length === 1 ? { dim: DIMLESS, factors: [] } : undefined;
      }
      case 'asin':
      case 'acos':
      case 'atan':
      case 'exp':
      case 'log':
      case 'log10':
      case 'sinh':
      case 'cosh':
      case 'tanh':
        dimless(0, '');
        for (const x of a.slice(1)) this.infer(x);
        return a.length === 1 ? { dim: DIMLESS, factors: [] } : undefined;
      case 'atan2': {
        const y = this.infer(a[0]);
        const x = this.infer(a[1]);
        if (a[0] && a[1]) this.unify(y, a[0], x, a[1], undefined, 'argument', 'the first argument of atan2');
        return { dim: DIMLESS, factors: [] };
      }
      case 'sqrt': {
        const q = this.infer(a[0]);
        if (!q || a.length !== 1) return undefined;
        return { dim: dimPow(q.dim, 0.5), factors: powFactors(q.factors, 0.5), constant: q.constant === undefined ? undefined : Math.sqrt(q.constant), sDep: q.sDep };
      }
      case 'abs': {
        const q = this.infer(a[0], want);
        return q && a.length === 1 ? { ...q, constant: q.constant === undefined ? undefined : Math.abs(q.constant), absTemp: undefined } : undefined;
      }
      case 'sign': {
        const q = this.infer(a[0]);
        return q && a.length === 1 ? { dim: DIMLESS, factors: [] } : undefined;
      }
      case 'min':
      case 'max':
      case 'clamp': {
        let acc: Q | undefined;
        let accExpr: Expr | undefined;
        let ok = true;
        for (const x of a) {
          const q = this.infer(x, want);
          if (!q) {
            ok = false;
            continue;
          }
          if (!acc || !accExpr) {
            acc = q;
            accExpr = x;
            continue;
          }
          const u = this.unify(acc, accExpr, q, x, want, 'argument', `the first argument of ${name}`);
          if (!u) ok = false;
          else if (acc.bare && !q.bare) acc = q;
        }
        return ok && acc ? { ...acc, bare: false, bareAt: undefined, constant: undefined } : undefined;
      }
      case 'lookup':
        return this.lookup(e, want);
      case 'step':
      case 'pulse': {
        this.check(a[0], TIME_WANT(`the start time of ${name}`));
        if (name === 'pulse') this.check(a[1], TIME_WANT('the width of pulse'));
        const sizeArg = a[name === 'step' ? 1 : 2];
        const q = want ? this.check(sizeArg, { ...want, what: `the size of ${name} (fed to ${want.what})` }) : this.infer(sizeArg);
        if (want && q && !dimEq(q.dim, want.dim) && !q.bare) return undefined;
        return q && want && q.bare ? { dim: want.dim, factors: want.factors } : q ? { ...q, bare: false, bareAt: undefined } : undefined;
      }
      case 'ramp': {
        this.check(a[0], TIME_WANT('the start time of ramp'));
        const slopeWant = want ? { ...want, dim: dimDiv(want.dim, TIME), factors: mulFactors(want.factors, S, -1), what: `the slope of ramp (fed to ${want.what})`, unit: undefined } : undefined;
        const q = slopeWant ? this.check(a[1], slopeWant) : this.infer(a[1]);
        if (!q) return undefined;
        if (want && slopeWant && !dimEq(q.dim, slopeWant.dim)) return q.bare ? { dim: want.dim, factors: want.factors } : undefined;
        return { dim: dimMul(q.dim, TIME), factors: mulFactors(q.factors, S) };
      }
      case 'sine': {
        const f = this.infer(a[1]);
        if (f && a[1] && !dimEq(f.dim, PER_TIME)) this.mismatch(a[1], f, { dim: PER_TIME, factors: [{ name: 'rad', power: 1 }, ...PER_S], code: 'LW302', what: 'the frequency of sine (in Hz or rad/s)', bareUnits: ['Hz'] }, 'expression');
        const q = want ? this.check(a[0], { ...want, what: `the amplitude of sine (fed to ${want.what})` }) : this.infer(a[0]);
        if (want && q && !dimEq(q.dim, want.dim) && !q.bare) return undefined;
        return q && want && q.bare ? { dim: want.dim, factors: want.factors } : q ? { ...q, bare: false, bareAt: undefined } : undefined;
      }
      case 'settling': {
        const sig = this.infer(a[0]);
        const band = this.infer(a[1]);
        if (sig && band && a[1] && !isDimless(band.dim) && !dimEq(band.dim, sig.dim))
          this.report('LW302', a[1].span, `the band of settling is either relative (dimensionless, like 2 [%]) or absolute in the signal's unit ${describe(sig.factors, sig.dim)}; this is ${describe(band.factors, band.dim)}`);
        return { dim: TIME, factors: S };
      }
      case 'rise':
        this.infer(a[0]);
        return { dim: TIME, factors: S };
      case 'overshoot':
      case 'saturated':
        for (const x of a) this.infer(x);
        return { dim: DIMLESS, factors: [] };
      case 'peak':
      case 'final': {
        const q = this.infer(a[0]);
        return q ? plainTag({ dim: q.dim, factors: q.factors }) : undefined;
      }
      case 'iae': {
        const q = this.infer(a[0]);
        return q ? { dim: dimMul(q.dim, TIME), factors: mulFactors(q.factors, S) } : undefined;
      }
      default:
        for (const x of a) this.infer(x);
        return undefined;
    }
  }

  private lookup(e: CallExpr, want?: Want): Q | undefined {
    const [x, xs, ys] = e.args;
    const xq = this.infer(x);
    if (xs) {
      if (xs.kind === 'list' && xq) this.table(xs, { dim: xq.dim, factors: xq.factors, code: 'LW302', what: 'the breakpoints of lookup (in the unit of its first argument)' });
      else this.infer(xs);
    }
    if (!ys) return undefined;
    if (ys.kind !== 'list') return this.infer(ys, want);
    let first: Q | undefined;
    for (const item of ys.items) {
      const q = this.infer(item);
      if (q && !q.bare) {
        first = q;
        break;
      }
    }
    const target: Want | undefined = first
      ? { dim: first.dim, factors: first.factors, code: 'LW302', what: 'the values of lookup (all in one unit)' }
      : want && !isDimless(want.dim)
        ? { ...want, what: `the values of lookup (fed to ${want.what})` }
        : undefined;
    if (!target) {
      for (const item of ys.items) this.infer(item);
      return ys.items.length ? { dim: DIMLESS, factors: [], bare: true } : undefined;
    }
    this.table(ys, target);
    return { dim: target.dim, factors: target.factors };
  }

  /** Every entry of a table in one unit; bare numbers get one LW308 with a fix for all of them. */
  private table(list: ListExpr, want: Want): void {
    const bare: Expr[] = [];
    for (const item of list.items) {
      const q = this.infer(item);
      if (!q || dimEq(q.dim, want.dim)) continue;
      if (q.bare) {
        if (q.constant !== 0 && q.bareAt) bare.push(q.bareAt);
      } else this.mismatch(item, q, want, 'entry');
    }
    if (bare.length) {
      const text = factorsText(want.factors, want.dim);
      this.report('LW308', list.span, `bare numbers are dimensionless, but ${want.what} must be ${describe(want.factors, want.dim)}: write the unit, e.g. [${text}]`, {
        fixes: [{ title: `Add [${text}] to ${bare.length === 1 ? 'the entry' : `the ${bare.length} entries`}`, edits: bare.map((b) => ({ span: { start: b.span.end, end: b.span.end }, newText: ` [${text}]` })), preferred: true }],
      });
    }
  }
}

export function insertUnit(at: Expr, text: string, preferred: boolean): QuickFix {
  return { title: `Add unit [${text}]`, edits: [{ span: { start: at.span.end, end: at.span.end }, newText: ` [${text}]` }], preferred };
}
