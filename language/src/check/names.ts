// Name and structure checks: builds the symbol table and reports undefined, duplicate and
// misplaced names, states without equations, outputs without values, wiring mistakes, and
// targets of around/start/sweep that do not exist. Each check is a small function; every one of
// them runs under a guard so that an unexpected failure becomes a diagnostic, not a crash.

import type { DiagnosticSink, Span } from '../diagnostics';
import type * as A from '../syntax/ast';
import { memberExprs, pathText, walkExpr } from '../syntax/ast';
import { FUNCTIONS, LINEAR_ENTRIES, METHOD_WORDS, PID_ENTRIES, SAMPLE_WORDS, SIMULATE_OPTIONS } from './functions';
import type { LoopInstance, LoopSymbol, MemberKind, MemberSymbol, OutputSource, Reference, SymbolTable, SystemSymbol, Target } from './symbols';

const SYSTEM_ONLY = new Set(['let', 'state', 'input', 'output', 'derivEq', 'transfer', 'linear', 'pid', 'limit', 'operatingPoint', 'sample']);
const LOOP_ONLY = new Set(['signal', 'arrow', 'use', 'around', 'start', 'simulate', 'compare', 'sweepStart', 'sweepParam', 'show', 'expect', 'solveAlgebraic']);
const ONCE_IN_LOOP = new Set(['simulate', 'compare', 'solveAlgebraic', 'show']);

const memberWord: Record<string, string> = {
  derivEq: 'a derivative equation',
  transfer: 'a transfer relation',
  operatingPoint: 'an operating point',
  sweepStart: 'a sweep',
  sweepParam: 'a sweep',
  solveAlgebraic: "'solve algebraic'",
  arrow: 'an arrow',
};

/** Scope in which an expression is resolved. */
interface Scope {
  system?: SystemSymbol;
  loop?: LoopSymbol;
  /** Inside a transfer relation: `s` is the Laplace variable. */
  laplace?: boolean;
  /** Inside an `expect`: metric functions allowed. */
  expect?: boolean;
  /** Params: only earlier params. `order` is the index of the member being checked. */
  paramOnly?: { before: number };
  /** Lets: only earlier lets (any param, state, input). */
  letBefore?: number;
  /** Option values such as `method = stiff`. */
  optionWords?: readonly string[];
}

/** Targets with no symbol behind them, one object each, shared by every use. */
const BUILTIN_TARGETS = {
  pi: Object.freeze({ kind: 'builtin', name: 'pi' }),
  t: Object.freeze({ kind: 'builtin', name: 't' }),
  s: Object.freeze({ kind: 'builtin', name: 's' }),
} as const satisfies Record<string, Target>;
const functionTargets = new Map<string, Target>();
function functionTarget(name: string): Target {
  let t = functionTargets.get(name);
  if (!t) functionTargets.set(name, (t = Object.freeze({ kind: 'function', name })));
  return t;
}

const NO_SCOPE: Scope = {};
/**
 * A scope with some fields replaced. Every scope has all fields, in one order, so the name
 * lookups that read them stay fast (a spread would give each combination its own shape).
 */
function narrow(scope: Scope, o: Scope): Scope {
  return {
    system: o.system ?? scope.system,
    loop: o.loop ?? scope.loop,
    laplace: o.laplace ?? scope.laplace,
    expect: o.expect ?? scope.expect,
    paramOnly: o.paramOnly ?? scope.paramOnly,
    letBefore: o.letBefore ?? scope.letBefore,
    optionWords: o.optionWords ?? scope.optionWords,
  };
}

/**
 * The references in source order, equal starts in the order they were found (a stable sort).
 * Each reference's start and index are packed into one number (start · 2^20 + index, exact in
 * a double while starts stay below 2^32), so the sort is a native numeric sort of a typed array
 * rather than a comparator called n log n times.
 */
function sortByStart(refs: Reference[]): Reference[] {
  const n = refs.length;
  const SHIFT = 1048576; // 2^20
  if (n >= SHIFT) return refs.sort((a, b) => a.span.start - b.span.start);
  const keys = new Float64Array(n);
  let sorted = true;
  let prev = -1;
  for (let i = 0; i < n; i++) {
    const start = refs[i].span.start;
    if (!(start >= 0 && start < 4294967296)) return refs.sort((a, b) => a.span.start - b.span.start);
    if (start < prev) sorted = false;
    prev = start;
    keys[i] = start * SHIFT + i;
  }
  if (sorted) return refs;
  keys.sort();
  const out: Reference[] = new Array(n);
  for (let i = 0; i < n; i++) out[i] = refs[keys[i] % SHIFT];
  return out;
}

export class NameChecker {
  private readonly refs: Reference[] = [];
  private readonly resolved = new Map<A.Expr, Target>();
  private readonly systems = new Map<string, SystemSymbol>();
  private readonly loops = new Map<string, LoopSymbol>();
  private readonly memberIndex = new Map<object, number>();

  constructor(
    private readonly ast: A.FileAst,
    private readonly sink: DiagnosticSink,
  ) {}

  run(): SymbolTable {
    this.guard(() => this.declareBlocks());
    for (const sys of this.systems.values()) this.guard(() => this.checkSystem(sys));
    for (const loop of this.loops.values()) this.guard(() => this.checkLoop(loop));
    return { systems: this.systems, loops: this.loops, blocks: this.ast.blocks, refs: sortByStart(this.refs), resolved: this.resolved };
  }

  private guard(f: () => void): void {
    try {
      f();
    } catch (err) {
      this.sink.error('LW101', { start: 0, end: 0 }, `internal error in the name checks (please report): ${(err as Error).message}`);
    }
  }

  // ---------- declarations ----------

  private declareBlocks(): void {
    const seen = new Map<string, A.Block>();
    for (const b of this.ast.blocks) {
      if (b.name.missing) continue;
      const prev = seen.get(b.name.name);
      if (prev) {
        this.sink.error('LW202', b.name.span, `'${b.name.name}' is already the name of a ${prev.kind}`, {
          related: [{ span: prev.name.span, message: `first ${prev.kind} named '${b.name.name}'` }],
        });
        continue;
      }
      seen.set(b.name.name, b);
      if (b.kind === 'loop') {
        const loop: LoopSymbol = { name: b.name.name, nameSpan: b.name.span, block: b, signals: new Map(), params: new Map(), uses: new Map(), instances: new Map() };
        this.loops.set(loop.name, loop);
        this.refs.push({ span: b.name.span, name: loop.name, target: { kind: 'loop', loop }, decl: true });
      } else {
        const sys = this.declareSystem(b);
        this.systems.set(sys.name, sys);
        this.refs.push({ span: b.name.span, name: sys.name, target: sys.target, decl: true });
      }
    }
  }

  private declareSystem(b: A.SystemBlock): SystemSymbol {
    const sys: SystemSymbol = {
      kind: b.kind,
      name: b.name.name,
      nameSpan: b.name.span,
      block: b,
      members: new Map(),
      params: [],
      lets: [],
      states: [],
      inputs: [],
      outputs: [],
      points: [],
      derivs: new Map(),
      outputSources: new Map(),
      limits: new Map(),
      transfers: [],
      pids: [],
      linears: [],
      linearUsesDeclaredStates: false,
      target: undefined as unknown as Target,
    };
    sys.target = { kind: 'system', system: sys };
    b.members.forEach((m, i) => {
      this.memberIndex.set(m, i);
      if (LOOP_ONLY.has(m.kind)) {
        this.sink.error('LW214', m.span, `${memberWord[m.kind] ?? `'${m.kind}'`} belongs in a loop, not in a ${b.kind}`);
        return;
      }
      switch (m.kind) {
        case 'param':
          sys.params.push(m);
          this.declareMember(sys, 'param', m.name, m);
          break;
        case 'let':
          sys.lets.push(m);
          this.declareMember(sys, 'let', m.name, m);
          break;
        case 'state':
          sys.states.push(m);
          this.declareMember(sys, 'state', m.name, m);
          break;
        case 'input':
          sys.inputs.push(m);
          this.declareMember(sys, 'input', m.name, m);
          break;
        case 'output':
          sys.outputs.push(m);
          this.declareMember(sys, 'output', m.name, m);
          break;
        case 'operatingPoint':
          if (b.kind !== 'plant') {
            this.sink.error('LW214', m.span, 'operating points belong to plants; a controller takes the values that hold the plant there');
            return;
          }
          sys.points.push(m);
          this.declareMember(sys, 'operatingPoint', m.name, m);
          break;
        case 'sample':
          if (b.kind !== 'controller') {
            this.sink.error('LW214', m.span, "'sample every' belongs to controllers: a plant is continuous");
            return;
          }
          if (sys.sample) {
            this.sink.error('LW202', m.span, "a controller has one 'sample every'", { related: [{ span: sys.sample.span, message: 'first one here' }] });
            return;
          }
          sys.sample = m;
          break;
        case 'transfer':
          sys.transfers.push(m);
          break;
        case 'pid':
          sys.pids.push(m);
          break;
        case 'linear':
          sys.linears.push(m);
          break;
        default:
          break;
      }
    });
    return sys;
  }

  private declareMember(sys: SystemSymbol, kind: MemberKind, name: A.Ident, decl: MemberSymbol['decl']): void {
    if (name.missing) return;
    const prev = sys.members.get(name.name);
    if (prev) {
      this.sink.error('LW202', name.span, `'${name.name}' is already declared in ${sys.name} as a ${kindWord(prev.kind)}`, {
        related: [{ span: prev.nameSpan, message: `first declaration of '${name.name}'` }],
      });
      return;
    }
    if (name.name === 'pi') this.sink.warning('LW202', name.span, "'pi' is a built-in constant; this declaration hides it");
    const sym: MemberSymbol = { kind, name: name.name, nameSpan: name.span, system: sys, decl, target: undefined as unknown as Target };
    sym.target = { kind: 'member', member: sym };
    sys.members.set(name.name, sym);
    this.refs.push({ span: name.span, name: name.name, target: sym.target, decl: true });
  }

  // ---------- systems ----------

  private checkSystem(sys: SystemSymbol): void {
    const b = sys.block;
    this.checkSources(sys);
    b.members.forEach((m, i) => {
      if (LOOP_ONLY.has(m.kind)) return;
      this.guard(() => this.checkSystemMember(sys, m, i));
    });
    this.checkLetCycles(sys);
  }

  /** States need exactly one equation; outputs exactly one value. */
  private checkSources(sys: SystemSymbol): void {
    const linear = sys.linears[0];
    for (const extra of sys.linears.slice(1)) {
      this.sink.error('LW207', extra.keywordSpan, `${sys.name} has more than one linear block; one block describes the whole system`, {
        related: [{ span: linear.keywordSpan, message: 'first linear block' }],
      });
    }
    for (const m of sys.block.members) {
      if (m.kind !== 'derivEq' || m.target.missing) continue;
      const sym = sys.members.get(m.target.name);
      if (!sym) {
        this.sink.error('LW201', m.target.span, `'${m.target.name}' is not declared in ${sys.name}; declare it with 'state ${m.target.name} [unit]'`);
        continue;
      }
      this.refs.push({ span: m.target.span, name: m.target.name, target: sym.target });
      if (sym.kind !== 'state') {
        this.sink.error('LW203', m.target.span, `'${m.target.name}' is a ${kindWord(sym.kind)}, not a state: only states have derivatives`);
        continue;
      }
      const prev = sys.derivs.get(m.target.name);
      if (prev) {
        this.sink.error('LW205', m.target.span, `state '${m.target.name}' already has an equation`, { related: [{ span: prev.target.span, message: 'first equation' }] });
        continue;
      }
      if (linear && sys.states.length) {
        this.sink.error('LW205', m.target.span, `state '${m.target.name}' is already described by the linear block of ${sys.name}`, {
          related: [{ span: linear.keywordSpan, message: 'linear block' }],
        });
        continue;
      }
      sys.derivs.set(m.target.name, m);
    }
    if (linear) sys.linearUsesDeclaredStates = sys.states.length > 0;
    for (const st of sys.states) {
      if (st.name.missing || sys.derivs.has(st.name.name) || linear) continue;
      this.sink.error('LW204', st.name.span, `state '${st.name.name}' has no equation: add ${st.name.name}' = ...`);
    }
    // outputs
    const give = (name: A.Ident, src: OutputSource, span: Span) => {
      const prev = sys.outputSources.get(name.name);
      if (prev) {
        this.sink.error('LW207', span, `output '${name.name}' already gets its value elsewhere`, { related: [{ span: prev.decl.span, message: 'first value here' }] });
        return;
      }
      sys.outputSources.set(name.name, src);
    };
    for (const o of sys.outputs) if (o.value && !o.name.missing) give(o.name, { kind: 'equation', decl: o }, o.value.span);
    for (const tr of sys.transfers) {
      if (this.checkIoPair(sys, tr.output, tr.input, 'transfer relation')) give(tr.output, { kind: 'transfer', decl: tr }, tr.output.span);
    }
    for (const p of sys.pids) {
      if (this.checkIoPair(sys, p.output, p.input, 'pid law')) give(p.output, { kind: 'pid', decl: p }, p.output.span);
    }
    if (linear) for (const o of sys.outputs) if (!o.name.missing) give(o.name, { kind: 'linear', decl: linear }, linear.keywordSpan);
    for (const o of sys.outputs) {
      if (o.name.missing || sys.outputSources.has(o.name.name)) continue;
      this.sink.error('LW206', o.name.span, `output '${o.name.name}' has no value: give it '= expression', a transfer relation '${o.name.name} / INPUT = ...', a pid law or a linear block`);
    }
  }

  private checkIoPair(sys: SystemSymbol, out: A.Ident, inp: A.Ident, what: string): boolean {
    let ok = true;
    for (const [id, want] of [
      [out, 'output'],
      [inp, 'input'],
    ] as const) {
      if (id.missing) {
        ok = false;
        continue;
      }
      const sym = sys.members.get(id.name);
      if (!sym) {
        this.sink.error('LW201', id.span, `'${id.name}' is not declared in ${sys.name}; the ${what} needs ${want === 'output' ? 'an output' : 'an input'} here`);
        ok = false;
      } else {
        this.refs.push({ span: id.span, name: id.name, target: sym.target });
        if (sym.kind !== want) {
          this.sink.error('LW216', id.span, `'${id.name}' is a ${kindWord(sym.kind)}; the ${what} needs ${want === 'output' ? 'an output' : 'an input'} here`);
          ok = false;
        }
      }
    }
    return ok;
  }

  private checkSystemMember(sys: SystemSymbol, m: A.SystemMember, index: number): void {
    const scope: Scope = narrow(NO_SCOPE, { system: sys });
    switch (m.kind) {
      case 'param':
        this.resolveExpr(m.value, narrow(scope, { paramOnly: { before: index } }));
        return;
      case 'let':
        this.resolveExpr(m.value, narrow(scope, { letBefore: index }));
        return;
      case 'state':
        if (m.init) this.resolveExpr(m.init, narrow(scope, { paramOnly: { before: Infinity } }));
        return;
      case 'output':
      case 'derivEq':
        if (m.value) this.resolveExpr(m.value, scope);
        return;
      case 'transfer': {
        const sParam = sys.members.get('s');
        if (sParam) {
          this.sink.warning('LW209', sParam.nameSpan, `inside the transfer relation of '${m.output.name}', 's' is the Laplace variable and hides this ${kindWord(sParam.kind)}`, {
            related: [{ span: m.value.span, message: 'transfer relation' }],
          });
        }
        this.resolveExpr(m.value, narrow(scope, { laplace: true, paramOnly: { before: Infinity } }));
        return;
      }
      case 'linear':
        this.checkEntries(m.entries, LINEAR_ENTRIES, 'a linear block');
        for (const e of m.entries) this.resolveExpr(e.value, narrow(scope, { paramOnly: { before: Infinity } }));
        return;
      case 'pid':
        this.checkEntries(m.entries, PID_ENTRIES, 'a pid law');
        for (const e of m.entries) this.resolveExpr(e.value, narrow(scope, { paramOnly: { before: Infinity } }));
        return;
      case 'limit': {
        if (!m.target.missing) {
          const sym = sys.members.get(m.target.name);
          if (!sym) this.sink.error('LW201', m.target.span, `'${m.target.name}' is not declared in ${sys.name}`);
          else {
            this.refs.push({ span: m.target.span, name: m.target.name, target: sym.target });
            if (sym.kind !== 'input' && sym.kind !== 'output') {
              this.sink.error('LW219', m.target.span, `'${m.target.name}' is a ${kindWord(sym.kind)}; limits apply to inputs (as they enter) and outputs (as they leave)`);
            } else if (sys.limits.has(m.target.name)) {
              this.sink.error('LW202', m.target.span, `'${m.target.name}' already has a limit`, { related: [{ span: sys.limits.get(m.target.name)!.span, message: 'first limit' }] });
            } else sys.limits.set(m.target.name, m);
          }
        }
        this.resolveExpr(m.lo, narrow(scope, { paramOnly: { before: Infinity } }));
        this.resolveExpr(m.hi, narrow(scope, { paramOnly: { before: Infinity } }));
        return;
      }
      case 'operatingPoint':
        this.checkPoint(sys, m);
        return;
      case 'sample':
        this.resolveExpr(m.period, narrow(scope, { paramOnly: { before: Infinity } }));
        if (m.method && !m.method.missing && !(SAMPLE_WORDS as readonly string[]).includes(m.method.name)) {
          this.sink.error('LW508', m.method.span, `unknown discretization '${m.method.name}': use ${SAMPLE_WORDS.join(', ')}`);
        }
        return;
    }
  }

  private checkPoint(sys: SystemSymbol, m: A.OperatingPointDecl): void {
    const given = new Map<string, A.Entry>();
    for (const e of m.entries) {
      this.resolveExpr(e.value, narrow(NO_SCOPE, { system: sys, paramOnly: { before: Infinity } }));
      if (e.name.missing) continue;
      const sym = sys.members.get(e.name.name);
      if (!sym) {
        this.sink.error('LW212', e.name.span, `'${e.name.name}' is not a state or input of ${sys.name}`);
        continue;
      }
      this.refs.push({ span: e.name.span, name: e.name.name, target: sym.target });
      if (sym.kind !== 'state' && sym.kind !== 'input') {
        this.sink.error('LW212', e.name.span, `'${e.name.name}' is a ${kindWord(sym.kind)}; an operating point gives values of states and inputs`);
        continue;
      }
      if (given.has(e.name.name)) {
        this.sink.error('LW202', e.name.span, `'${e.name.name}' is given twice in this operating point`, { related: [{ span: given.get(e.name.name)!.name.span, message: 'first value' }] });
        continue;
      }
      given.set(e.name.name, e);
    }
    const missing = [...sys.states, ...sys.inputs].filter((d) => !d.name.missing && !given.has(d.name.name)).map((d) => d.name.name);
    if (missing.length && !m.name.missing) {
      this.sink.warning('LW221', m.name.span, `operating point '${m.name.name}' does not give ${missing.map((n) => `'${n}'`).join(', ')}; ${missing.length > 1 ? 'they are' : 'it is'} taken as the declared start value or 0`);
    }
  }

  private checkEntries(entries: A.Entry[], allowed: readonly string[], where: string): void {
    const seen = new Map<string, A.Entry>();
    for (const e of entries) {
      if (e.name.missing) continue;
      if (!allowed.includes(e.name.name)) {
        this.sink.error('LW217', e.name.span, `'${e.name.name}' is not an entry of ${where}: use ${allowed.join(', ')}`);
      } else if (seen.has(e.name.name)) {
        this.sink.error('LW202', e.name.span, `'${e.name.name}' is given twice`, { related: [{ span: seen.get(e.name.name)!.name.span, message: 'first value' }] });
      } else seen.set(e.name.name, e);
    }
  }

  /** Lets and output equations may not depend on themselves through other lets and outputs. */
  private checkLetCycles(sys: SystemSymbol): void {
    const deps = new Map<string, { span: Span; uses: string[] }>();
    const collect = (name: string, e: A.Expr | undefined, span: Span) => {
      if (!e) return;
      const uses: string[] = [];
      walkExpr(e, (x) => {
        const t = this.resolved.get(x);
        if (t?.kind === 'member' && t.member.system === sys && (t.member.kind === 'let' || t.member.kind === 'output')) uses.push(t.member.name);
      });
      deps.set(name, { span, uses });
    };
    for (const l of sys.lets) if (!l.name.missing) collect(l.name.name, l.value, l.name.span);
    for (const o of sys.outputs) if (!o.name.missing && o.value) collect(o.name.name, o.value, o.name.span);
    const state = new Map<string, 1 | 2>();
    const reported = new Set<string>();
    const visit = (n: string, stack: string[]): void => {
      if (state.get(n) === 2) return;
      if (state.get(n) === 1) {
        const cycle = stack.slice(stack.indexOf(n));
        for (const c of cycle) {
          if (reported.has(c)) continue;
          reported.add(c);
          this.sink.error('LW218', deps.get(c)!.span, `'${c}' depends on itself: ${[...cycle, n].join(' → ')}`);
        }
        return;
      }
      state.set(n, 1);
      for (const u of deps.get(n)?.uses ?? []) if (deps.has(u)) visit(u, [...stack, n]);
      state.set(n, 2);
    };
    for (const n of deps.keys()) visit(n, []);
  }

  // ---------- loops ----------

  private checkLoop(loop: LoopSymbol): void {
    const b = loop.block;
    const once = new Map<string, A.LoopMember>();
    // declarations first, so members may refer to signals and params declared further down
    b.members.forEach((m, i) => {
      this.memberIndex.set(m, i);
      if (SYSTEM_ONLY.has(m.kind)) {
        this.sink.error('LW214', m.span, `${memberWord[m.kind] ?? `'${m.kind}'`} belongs in a plant or controller, not in a loop${(m.kind as string) === 'let' ? " (use 'signal' for a named value in a loop)" : ''}`);
        return;
      }
      if (ONCE_IN_LOOP.has(m.kind)) {
        const prev = once.get(m.kind);
        if (prev) {
          this.sink.error('LW407', m.span, `a loop has one ${memberWord[m.kind] ?? `'${m.kind}'`} member`, { related: [{ span: prev.span, message: 'first one here' }] });
        } else once.set(m.kind, m);
      }
      if (m.kind === 'signal' || m.kind === 'param' || m.kind === 'use') this.declareLoopName(loop, m);
    });
    this.collectInstances(loop);
    const wired = new Map<string, A.Arrow>();
    b.members.forEach((m, i) => {
      if (SYSTEM_ONLY.has(m.kind)) return;
      this.guard(() => this.checkLoopMember(loop, m as A.LoopMember, i, wired));
    });
    // every input of every used system wired exactly once
    for (const inst of loop.instances.values()) {
      for (const inp of inst.system.inputs) {
        if (inp.name.missing) continue;
        const key = `${inst.name}.${inp.name.name}`;
        if (!wired.has(key)) {
          this.sink.error('LW402', b.name.span, `input ${key} is never wired: add 'EXPR -> ${key}'`, { related: [{ span: inp.name.span, message: `input '${inp.name.name}' of ${inst.system.name}` }] });
        }
      }
    }
    if (!once.has('simulate')) this.sink.warning('LW406', b.name.span, `loop '${loop.name}' has no 'simulate DURATION'; runs use 10 s`);
  }

  private declareLoopName(loop: LoopSymbol, m: A.SignalDecl | A.ParamDecl | A.UseDecl): void {
    const name = m.name;
    if (name.missing) return;
    const clash = loop.signals.get(name.name) ?? loop.params.get(name.name) ?? loop.uses.get(name.name);
    if (clash) {
      this.sink.error('LW202', name.span, `'${name.name}' is already declared in loop ${loop.name}`, { related: [{ span: clash.name.span, message: 'first declaration' }] });
      return;
    }
    if (m.kind === 'use' && this.systems.has(name.name)) {
      this.sink.error('LW202', name.span, `'${name.name}' is already the name of a ${this.systems.get(name.name)!.kind}; give the second instance a name of its own`);
      return;
    }
    let target: Target;
    if (m.kind === 'signal') {
      loop.signals.set(name.name, m);
      target = { kind: 'signal', loop, decl: m };
    } else if (m.kind === 'param') {
      loop.params.set(name.name, m);
      target = { kind: 'loopParam', loop, decl: m };
    } else {
      loop.uses.set(name.name, m);
      target = { kind: 'use', loop, decl: m };
    }
    this.refs.push({ span: name.span, name: name.name, target, decl: true });
  }

  /** The systems a loop uses: every system or `use` instance that its members name. */
  private collectInstances(loop: LoopSymbol): void {
    const named = new Set<string>();
    const note = (id: A.Ident | undefined) => {
      if (id && !id.missing) named.add(id.name);
    };
    for (const m of loop.block.members) {
      if ('target' in m && Array.isArray(m.target)) note(m.target[0]);
      for (const e of memberExprs(m as A.LoopMember)) walkExpr(e, (x) => (x.kind === 'member' ? note(x.path[0]) : undefined));
    }
    for (const u of loop.uses.values()) {
      if (u.system.missing) continue;
      const sys = this.systems.get(u.system.name);
      if (!sys) this.sink.error('LW210', u.system.span, `there is no plant or controller named '${u.system.name}'`);
      else {
        this.refs.push({ span: u.system.span, name: u.system.name, target: sys.target });
        for (const o of u.overrides) {
          if (o.name.missing) continue;
          const p = sys.members.get(o.name.name);
          if (!p || p.kind !== 'param') this.sink.error('LW211', o.name.span, `${sys.name} has no param '${o.name.name}'`);
          else this.refs.push({ span: o.name.span, name: o.name.name, target: p.target });
          this.resolveExpr(o.value, narrow(NO_SCOPE, { loop, paramOnly: { before: Infinity } }));
        }
      }
    }
    // Instances in the order of the systems' declarations: each named system, then the uses of
    // it named in the loop. Only the systems this loop names are visited, so a file of many
    // loops and systems costs in proportion to its size, not to loops × systems.
    const usesOf = new Map<SystemSymbol, A.UseDecl[]>();
    for (const u of loop.uses.values()) {
      if (u.name.missing || !named.has(u.name.name)) continue;
      const sys = this.systems.get(u.system.name);
      if (!sys) continue;
      const us = usesOf.get(sys);
      if (us) us.push(u);
      else usesOf.set(sys, [u]);
    }
    const chosen = new Set<SystemSymbol>();
    for (const name of named) {
      const sys = this.systems.get(name);
      if (sys) chosen.add(sys);
    }
    for (const sys of usesOf.keys()) chosen.add(sys);
    const order = this.systemOrder();
    const list: LoopInstance[] = [];
    for (const sys of [...chosen].sort((a, b) => order.get(a)! - order.get(b)!)) {
      if (named.has(sys.name)) list.push({ name: sys.name, system: sys });
      for (const u of usesOf.get(sys) ?? []) list.push({ name: u.name.name, system: sys, use: u });
    }
    list.sort((a, b) => (a.system.kind === b.system.kind ? 0 : a.system.kind === 'plant' ? -1 : 1));
    for (const inst of list) loop.instances.set(inst.name, inst);
  }

  private order?: Map<SystemSymbol, number>;
  /** Position of each system among the declarations (the systems are all declared by now). */
  private systemOrder(): Map<SystemSymbol, number> {
    if (!this.order) {
      this.order = new Map();
      for (const sys of this.systems.values()) this.order.set(sys, this.order.size);
    }
    return this.order;
  }

  private checkLoopMember(loop: LoopSymbol, m: A.LoopMember, index: number, wired: Map<string, A.Arrow>): void {
    const scope: Scope = narrow(NO_SCOPE, { loop });
    switch (m.kind) {
      case 'signal':
        this.resolveExpr(m.value, scope);
        return;
      case 'param':
        this.resolveExpr(m.value, narrow(scope, { paramOnly: { before: index } }));
        return;
      case 'use':
        return;
      case 'arrow':
        this.resolveExpr(m.source, scope);
        this.checkArrowTarget(loop, m, wired);
        return;
      case 'around': {
        const pt = this.resolvePath(loop, m.target, 'around');
        if (pt && !(pt.kind === 'member' && pt.member.kind === 'operatingPoint')) {
          this.sink.error('LW213', spanOfPath(m.target), `'${pathText(m.target)}' is not an operating point: write 'around PLANT.POINT'`);
        }
        return;
      }
      case 'start':
      case 'sweepStart': {
        const t = this.resolvePath(loop, m.target, m.kind === 'start' ? 'start' : 'sweep');
        if (t && !(t.kind === 'member' && t.member.kind === 'state')) {
          this.sink.error('LW213', spanOfPath(m.target), `'${pathText(m.target)}' is not a state: ${m.kind === 'start' ? 'start' : 'sweep start'} needs SYSTEM.STATE`);
        }
        if (m.kind === 'start') this.resolveExpr(m.value, narrow(scope, { paramOnly: { before: Infinity } }));
        else for (const v of m.values) this.resolveExpr(v, narrow(scope, { paramOnly: { before: Infinity } }));
        return;
      }
      case 'sweepParam': {
        const t = this.resolvePath(loop, m.target, 'sweep');
        if (t && !((t.kind === 'member' && t.member.kind === 'param') || t.kind === 'loopParam')) {
          this.sink.error('LW213', spanOfPath(m.target), `'${pathText(m.target)}' is not a param: 'sweep SYSTEM.PARAM over LO .. HI steps N'`);
        }
        for (const v of [m.lo, m.hi, m.steps]) this.resolveExpr(v, narrow(scope, { paramOnly: { before: Infinity } }));
        return;
      }
      case 'simulate':
        this.resolveExpr(m.duration, narrow(scope, { paramOnly: { before: Infinity } }));
        this.checkEntries(m.options, SIMULATE_OPTIONS, "'simulate' options");
        for (const o of m.options) {
          if (o.name.name === 'method') {
            if (o.value.kind === 'name' && (METHOD_WORDS as readonly string[]).includes(o.value.name)) {
              this.resolved.set(o.value, { kind: 'option', name: o.value.name });
            } else this.sink.error('LW220', o.value.span, `method must be one of ${METHOD_WORDS.join(', ')}`);
          } else this.resolveExpr(o.value, narrow(scope, { paramOnly: { before: Infinity } }));
        }
        return;
      case 'show':
        for (const sig of m.signals) {
          this.resolveExpr(sig, scope);
          this.checkPlottable(sig);
        }
        return;
      case 'expect':
        if (!(m.test.kind === 'binary' && ['<', '<=', '>', '>=', '==', '!='].includes(m.test.op))) {
          this.sink.error('LW409', m.test.span, "expect needs a comparison, e.g. 'expect overshoot(Sys.y) < 0.1'");
        }
        this.resolveExpr(m.test, narrow(scope, { expect: true }));
        return;
      case 'compare':
      case 'solveAlgebraic':
        return;
    }
  }

  private checkPlottable(e: A.Expr): void {
    const t = this.resolved.get(e);
    if (e.kind === 'error') return;
    const ok = t && (t.kind === 'signal' || (t.kind === 'member' && (t.member.kind === 'state' || t.member.kind === 'input' || t.member.kind === 'output')));
    if (!ok && (e.kind === 'name' || e.kind === 'member') && !t) return; // already reported as undefined
    if (!ok) this.sink.error('LW408', e.span, 'show takes signals of the loop and states, inputs or outputs of its systems (SYSTEM.NAME)');
  }

  private checkArrowTarget(loop: LoopSymbol, m: A.Arrow, wired: Map<string, A.Arrow>): void {
    const path = m.target;
    if (path.some((p) => p.missing)) return;
    if (path.length !== 2) {
      this.sink.error('LW403', m.targetSpan, `an arrow feeds an input: write 'EXPR -> SYSTEM.INPUT', not '${pathText(path)}'`);
      if (path.length > 2) this.resolvePath(loop, path, 'arrow');
      return;
    }
    const t = this.resolvePath(loop, path, 'arrow');
    if (!t) return;
    if (!(t.kind === 'member' && t.member.kind === 'input')) {
      const what = t.kind === 'member' ? `a ${kindWord(t.member.kind)}` : 'not an input';
      this.sink.error('LW403', m.targetSpan, `'${pathText(path)}' is ${what}; an arrow must end at an input`);
      return;
    }
    const key = pathText(path);
    const prev = wired.get(key);
    if (prev) {
      this.sink.error('LW401', m.targetSpan, `input ${key} is already wired`, { related: [{ span: prev.targetSpan, message: 'first arrow into it' }] });
      return;
    }
    wired.set(key, m);
  }

  /** Resolves SYSTEM.MEMBER or SYSTEM.POINT.MEMBER (or a loop param for sweeps) in a loop. */
  private resolvePath(loop: LoopSymbol, path: A.Ident[], what: string): Target | undefined {
    if (path.length === 0 || path.some((p) => p.missing)) return undefined;
    const head = path[0];
    if (path.length === 1) {
      const lp = loop.params.get(head.name);
      if (lp && what === 'sweep') {
        const t: Target = { kind: 'loopParam', loop, decl: lp };
        this.refs.push({ span: head.span, name: head.name, target: t });
        return t;
      }
      this.sink.error('LW213', head.span, `'${head.name}' needs its system: write SYSTEM.${head.name}`);
      return undefined;
    }
    const inst = loop.instances.get(head.name);
    const sys = inst?.system ?? this.systems.get(head.name);
    if (!sys) {
      const code = what === 'arrow' ? 'LW210' : 'LW213';
      this.sink.error(code, head.span, `there is no plant or controller named '${head.name}'${suggest(head.name, [...this.systems.keys(), ...loop.uses.keys()])}`);
      return undefined;
    }
    const useDecl = loop.uses.get(head.name);
    this.refs.push({ span: head.span, name: head.name, target: useDecl ? { kind: 'use', loop, decl: useDecl } : sys.target });
    return this.resolveMemberPath(sys, path, what === 'arrow' ? 'LW211' : 'LW213');
  }

  private resolveMemberPath(sys: SystemSymbol, path: A.Ident[], code: 'LW211' | 'LW213'): Target | undefined {
    const second = path[1];
    const mem = sys.members.get(second.name);
    if (!mem) {
      this.sink.error(code, second.span, `${sys.name} has no member '${second.name}'${suggest(second.name, [...sys.members.keys()])}`);
      return undefined;
    }
    this.refs.push({ span: second.span, name: second.name, target: mem.target });
    if (path.length === 2) return mem.target;
    if (mem.kind !== 'operatingPoint' || path.length > 3) {
      this.sink.error(code, path[2].span, `'${path.slice(0, 2).map((p) => p.name).join('.')}' has no members: only operating points do (SYSTEM.POINT.NAME)`);
      return undefined;
    }
    const third = path[2];
    const val = sys.members.get(third.name);
    if (!val || (val.kind !== 'state' && val.kind !== 'input')) {
      this.sink.error('LW212', third.span, `operating point '${mem.name}' gives states and inputs; '${third.name}' is not one of ${sys.name}`);
      return undefined;
    }
    this.refs.push({ span: third.span, name: third.name, target: val.target });
    return { kind: 'pointValue', point: mem, member: val };
  }

  // ---------- expressions ----------

  private resolveExpr(e: A.Expr, scope: Scope): void {
    walkExpr(e, (x) => {
      switch (x.kind) {
        case 'name':
          this.resolveName(x, scope);
          break;
        case 'member':
          this.resolveMember(x, scope);
          break;
        case 'deriv':
          this.resolveDeriv(x, scope);
          break;
        case 'call':
          this.checkCall(x, scope);
          break;
        default:
          break;
      }
    });
  }

  private resolveName(x: A.NameExpr, scope: Scope): void {
    if (x.missing || !x.name) return;
    const name = x.name;
    const sys = scope.system;
    if (sys) {
      if (name === 's' && scope.laplace) return this.bind(x, BUILTIN_TARGETS.s);
      const mem = sys.members.get(name);
      if (mem) {
        if (!this.allowedInScope(x, mem, scope)) return;
        return this.bind(x, mem.target);
      }
      if (name === 'pi') return this.bind(x, BUILTIN_TARGETS.pi);
      if (name === 's') {
        this.sink.error('LW208', x.span, "'s' (the Laplace variable) is only meaningful in a transfer relation 'OUT / IN = ...'");
        return;
      }
      if (name === 't') {
        this.sink.error('LW405', x.span, "systems are time-invariant: 't' is not defined here; feed time-varying values in from a loop signal");
        return;
      }
      this.sink.error('LW201', x.span, `'${name}' is not defined in ${sys.name}${suggest(name, [...sys.members.keys()])}`);
      return;
    }
    const loop = scope.loop;
    if (loop) {
      const sig = loop.signals.get(name);
      if (sig) return this.bind(x, { kind: 'signal', loop, decl: sig });
      const lp = loop.params.get(name);
      if (lp) {
        if (scope.paramOnly && (this.memberIndex.get(lp) ?? 0) >= scope.paramOnly.before) {
          this.sink.error('LW218', x.span, `param '${name}' is used before its definition`);
          return;
        }
        return this.bind(x, { kind: 'loopParam', loop, decl: lp });
      }
      if (name === 't') {
        if (scope.paramOnly) {
          this.sink.error('LW506', x.span, "a constant cannot depend on time 't'");
          return;
        }
        return this.bind(x, BUILTIN_TARGETS.t);
      }
      if (name === 'pi') return this.bind(x, BUILTIN_TARGETS.pi);
      if (name === 's') {
        this.sink.error('LW208', x.span, "'s' (the Laplace variable) is only meaningful in a transfer relation inside a system");
        return;
      }
      if (this.systems.has(name) || loop.uses.has(name)) {
        this.sink.error('LW222', x.span, `'${name}' is a system; read one of its members: ${name}.NAME`);
        return;
      }
      this.sink.error('LW201', x.span, `'${name}' is not defined in loop ${loop.name}${suggest(name, [...loop.signals.keys(), ...loop.params.keys()])}`);
    }
  }

  private allowedInScope(x: A.Expr, mem: MemberSymbol, scope: Scope): boolean {
    if (scope.paramOnly) {
      if (mem.kind !== 'param') {
        this.sink.error('LW506', x.span, `a constant cannot depend on the ${kindWord(mem.kind)} '${mem.name}'`);
        return false;
      }
      const at = this.memberIndex.get(mem.decl) ?? 0;
      if (at >= scope.paramOnly.before) {
        this.sink.error('LW218', x.span, `param '${mem.name}' is used before its definition`);
        return false;
      }
    }
    if (scope.letBefore !== undefined && mem.kind === 'let' && (this.memberIndex.get(mem.decl) ?? 0) >= scope.letBefore) {
      this.sink.error('LW218', x.span, `'${mem.name}' is used before its definition`);
      return false;
    }
    if (mem.kind === 'operatingPoint') {
      this.sink.error('LW222', x.span, `'${mem.name}' is an operating point, not a value`);
      return false;
    }
    return true;
  }

  private resolveMember(x: A.MemberExpr, scope: Scope): void {
    if (x.path.some((p) => p.missing)) return;
    if (scope.system) {
      this.sink.error('LW222', x.span, `dotted names belong in loops; inside ${scope.system.name} write the member's own name`);
      return;
    }
    const loop = scope.loop;
    if (!loop) return;
    const t = this.resolvePath(loop, x.path, 'read');
    if (!t) return;
    if (t.kind === 'member' && t.member.kind === 'operatingPoint') {
      this.sink.error('LW222', x.span, `'${pathText(x.path)}' is an operating point; read one of its values: ${pathText(x.path)}.NAME`);
      return;
    }
    if (t.kind === 'member' && t.member.kind === 'let') {
      this.sink.error('LW222', x.span, `'${pathText(x.path)}' is internal to ${t.member.system.name}; expose it as an output to read it in a loop`);
      return;
    }
    if (scope.paramOnly && !(t.kind === 'member' && t.member.kind === 'param') && t.kind !== 'pointValue') {
      this.sink.error('LW506', x.span, `a constant cannot depend on '${pathText(x.path)}'`);
      return;
    }
    this.bind(x, t);
  }

  private resolveDeriv(x: A.DerivExpr, scope: Scope): void {
    const sys = scope.system;
    if (!sys) {
      this.sink.error('LW222', x.span, 'derivatives are read inside the system that owns the state');
      return;
    }
    const mem = sys.members.get(x.name.name);
    if (!mem) {
      this.sink.error('LW201', x.name.span, `'${x.name.name}' is not defined in ${sys.name}`);
      return;
    }
    if (mem.kind !== 'state') {
      this.sink.error('LW203', x.name.span, `'${x.name.name}' is a ${kindWord(mem.kind)}, not a state: only states have derivatives`);
      return;
    }
    if (scope.paramOnly) {
      this.sink.error('LW506', x.span, 'a constant cannot depend on a derivative');
      return;
    }
    this.refs.push({ span: x.name.span, name: x.name.name, target: mem.target });
    this.resolved.set(x, mem.target);
  }

  private checkCall(x: A.CallExpr, scope: Scope): void {
    const name = x.callee.name;
    if (x.callee.missing) return;
    const fn = FUNCTIONS.get(name);
    if (!fn) {
      const local = scope.system?.members.get(name) ?? scope.loop?.signals.get(name);
      const why = local ? `'${name}' is not a function` : `unknown function '${name}'${suggest(name, [...FUNCTIONS.keys()])}`;
      this.sink.error('LW215', x.callee.span, why);
      return;
    }
    this.refs.push({ span: x.callee.span, name, target: functionTarget(name) });
    if (fn.place === 'loop' && !scope.loop) {
      this.sink.error('LW405', x.callee.span, `${name}(...) is a signal function: use it in a loop signal and feed the system an input`);
    } else if (fn.place === 'expect' && !scope.expect) {
      this.sink.error('LW215', x.callee.span, `${name}(...) measures a run: use it in an 'expect'`);
    }
    const n = x.args.length;
    if (n < fn.min || n > fn.max) {
      const want = fn.min === fn.max ? `${fn.min}` : fn.max === Infinity ? `at least ${fn.min}` : `${fn.min} to ${fn.max}`;
      this.sink.error('LW215', x.span, `${name} takes ${want} argument${fn.min === 1 && fn.max === 1 ? '' : 's'}, not ${n}: ${fn.summary}`);
    }
    if (name === 'saturated' && x.args[0]) {
      const arg = x.args[0];
      this.afterSaturated.push(arg);
    }
  }

  /** `saturated(SYS.NAME)` arguments, checked once they are resolved. */
  private readonly afterSaturated: A.Expr[] = [];

  checkSaturatedArgs(): void {
    for (const arg of this.afterSaturated) {
      const t = this.resolved.get(arg);
      if (!t) continue;
      if (!(t.kind === 'member' && t.member.system.limits.has(t.member.name))) {
        this.sink.error('LW408', arg.span, `saturated(...) needs an input or output that has a limit; '${arg.kind === 'member' ? pathText(arg.path) : '?'}' has none`);
      }
    }
  }

  private bind(x: A.NameExpr | A.MemberExpr, t: Target): void {
    this.resolved.set(x, t);
    if (x.kind === 'name') this.refs.push({ span: x.span, name: x.name, target: t });
  }
}

function kindWord(k: MemberKind): string {
  return k === 'operatingPoint' ? 'operating point' : k;
}

function spanOfPath(path: A.Ident[]): Span {
  return { start: path[0].span.start, end: path[path.length - 1].span.end };
}

/** ` (did you mean 'x'?)` for a close name, else ''. */
export function suggest(name: string, candidates: string[]): string {
  let best = '';
  let bestD = Infinity;
  for (const c of candidates) {
    const d = editDistance(name, c);
    if (d < bestD) {
      bestD = d;
      best = c;
    }
  }
  return best && bestD <= Math.max(1, Math.floor(name.length / 3)) ? ` (did you mean '${best}'?)` : '';
}

function editDistance(a: string, b: string): number {
  if (Math.abs(a.length - b.length) > 3) return Infinity;
  const dp = Array.from({ length: b.length + 1 }, (_, j) => j);
  for (let i = 1; i <= a.length; i++) {
    let prev = dp[0];
    dp[0] = i;
    for (let j = 1; j <= b.length; j++) {
      const tmp = dp[j];
      dp[j] = Math.min(dp[j] + 1, dp[j - 1] + 1, prev + (a[i - 1] === b[j - 1] ? 0 : 1));
      prev = tmp;
    }
  }
  return dp[b.length];
}

export function checkNames(ast: A.FileAst, sink: DiagnosticSink): SymbolTable {
  const checker = new NameChecker(ast, sink);
  const table = checker.run();
  checker.checkSaturatedArgs();
  return table;
}
