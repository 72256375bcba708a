// Completion by context, read from the tokens before the cursor (so it works in half-typed
// text): block keywords at the top level, member keywords at the start of a line inside a block,
// entry names inside braces, members after `System.` and `System.point.`, unit names inside a
// unit's brackets, option words after `method =` and `by`, else the names in scope.

import type { IToken } from 'chevrotain';
import type { Analysis } from '../../language/src/analysis';
import { FUNCTIONS, LINEAR_ENTRIES, METHOD_WORDS, PID_ENTRIES, SAMPLE_WORDS, SIMULATE_OPTIONS } from '../../language/src/check/functions';
import type { LoopSymbol, SystemSymbol } from '../../language/src/check/symbols';
import { parseUnit } from '../../language/src/units/registry';
import type { CompletionInfo, CompletionKind } from './convert';
import { tokenIndexAt } from './locate';

const BLOCKS: CompletionInfo[] = [
  { label: 'plant', kind: 'block', detail: 'plant NAME { … }', snippet: 'plant ${1:Name} {\n\t$0\n}' },
  { label: 'controller', kind: 'block', detail: 'controller NAME { … }', snippet: 'controller ${1:Name} {\n\t$0\n}' },
  { label: 'loop', kind: 'block', detail: 'loop NAME { … }', snippet: 'loop ${1:Name} {\n\t$0\n}' },
];

const kw = (label: string, detail: string, snippet?: string): CompletionInfo => ({ label, kind: 'keyword', detail, snippet });

const SYSTEM_MEMBERS: CompletionInfo[] = [
  kw('param', 'param NAME = EXPR', 'param ${1:name} = $0'),
  kw('let', 'let NAME = EXPR', 'let ${1:name} = $0'),
  kw('state', 'state NAME [UNIT]', 'state ${1:name} [${2:unit}]'),
  kw('input', 'input NAME [UNIT]', 'input ${1:name} [${2:unit}]'),
  kw('output', 'output NAME [UNIT] = EXPR', 'output ${1:name} [${2:unit}] = $0'),
  kw('limit', 'limit NAME within LO .. HI', 'limit ${1:name} within ${2:lo} .. ${3:hi}'),
  kw('linear', 'linear { A = …, B = …, C = …, D = … }', 'linear { A = $1, B = $2, C = $3, D = $4 }'),
  kw('pid', 'pid OUT from IN { kp = …, ki = …, kd = … }', 'pid ${1:out} from ${2:in} { kp = $3 }'),
];
const PLANT_ONLY = [kw('operating point', 'operating point NAME { x = E, … }', 'operating point ${1:name} { $0 }')];
const CONTROLLER_ONLY = [kw('sample every', 'sample every PERIOD (by tustin / hold / forward)', 'sample every ${1:period}')];

const LOOP_MEMBERS: CompletionInfo[] = [
  kw('signal', 'signal NAME = EXPR', 'signal ${1:name} = $0'),
  kw('param', 'param NAME = EXPR', 'param ${1:name} = $0'),
  kw('use', 'use NAME = SYSTEM(param = E, …)', 'use ${1:name} = ${2:System}($0)'),
  kw('around', 'around SYSTEM.POINT', 'around $0'),
  kw('start', 'start SYSTEM.STATE = E', 'start ${1:System.state} = $0'),
  kw('simulate', 'simulate DURATION', 'simulate ${1:10} [s]'),
  kw('compare linear', 'also run the linearized loop'),
  kw('sweep', 'sweep start SYSTEM.STATE over V1, V2, … / sweep SYSTEM.PARAM over LO .. HI steps N'),
  kw('show', 'show SIGNAL, …', 'show $0'),
  kw('expect', 'expect EXPR CMP EXPR', 'expect $0'),
  kw('solve algebraic', 'solve algebraic loops by Newton iteration'),
];

const EXPR_WORDS: CompletionInfo[] = [kw('if', 'if COND then E else E'), kw('then', ''), kw('else', ''), kw('and', ''), kw('or', ''), kw('not', '')];

/** Unit names offered inside brackets; each is checked against the registry once. */
const UNIT_NAMES = [
  'm', 'mm', 'cm', 'km', 'um', 'kg', 'g', 's', 'ms', 'us', 'min', 'h', 'N', 'kN', 'mN', 'J', 'kJ', 'W', 'kW', 'mW', 'V', 'mV', 'kV', 'A', 'mA',
  'ohm', 'kohm', 'H', 'mH', 'F', 'uF', 'Pa', 'kPa', 'MPa', 'bar', 'K', 'degC', 'rad', 'deg', 'rpm', 'Hz', 'kHz', 'L', 'mol', 'cd', '%', '1',
];
let unitItems: CompletionInfo[] | undefined;
function units(): CompletionInfo[] {
  if (!unitItems) {
    unitItems = [];
    for (const name of UNIT_NAMES) {
      const r = parseUnit(name);
      if (r.ok) unitItems.push({ label: name, kind: 'unit', sortText: String(unitItems.length).padStart(3, '0') });
    }
  }
  return unitItems;
}

interface Context {
  depth: number;
  block?: { kind: string; name: string };
  /** Keyword that opened the innermost inner braces (operating, pid, linear, simulate). */
  braceOwner?: string;
  /** Tokens on the cursor's line before the word being typed. */
  lineTokens: IToken[];
}

function contextAt(a: Analysis, offset: number, wordStart: number): Context {
  const toks = a.tokens;
  const last = tokenIndexAt(a, Math.max(0, wordStart - 1));
  let depth = 0;
  let block: Context['block'];
  let pending: Context['block'];
  const owners: string[] = [];
  for (let i = 0; i <= last; i++) {
    const t = toks[i];
    if (t.startOffset >= wordStart) break;
    const n = t.tokenType.name;
    if (depth === 0 && (n === 'Kw_plant' || n === 'Kw_controller' || n === 'Kw_loop')) {
      const next = toks[i + 1];
      pending = { kind: n.slice(3), name: next && next.startOffset < wordStart ? next.image : '' };
    } else if (n === 'LCurly') {
      if (depth === 0) {
        block = pending;
        pending = undefined;
      } else {
        let j = i - 1;
        const curlyLineStart = a.text.lastIndexOf('\n', t.startOffset) + 1;
        while (j >= 0 && toks[j].startOffset >= curlyLineStart && !['Kw_operating', 'Kw_pid', 'Kw_linear', 'Kw_simulate'].includes(toks[j].tokenType.name)) j--;
        owners.push(j >= 0 ? toks[j].tokenType.name.slice(3) : '');
      }
      depth++;
    } else if (n === 'RCurly') {
      depth = Math.max(0, depth - 1);
      if (depth === 0) block = undefined;
      else owners.pop();
    }
  }
  const lineStart = a.text.lastIndexOf('\n', wordStart - 1) + 1;
  const lineTokens: IToken[] = [];
  for (let i = last; i >= 0 && toks[i].startOffset >= lineStart; i--) if (toks[i].startOffset < wordStart) lineTokens.unshift(toks[i]);
  return { depth, block: depth > 0 ? block : undefined, braceOwner: owners[owners.length - 1], lineTokens };
}

function memberItems(sys: SystemSymbol, opts: { points: boolean }): CompletionInfo[] {
  const out: CompletionInfo[] = [];
  for (const m of sys.members.values()) {
    if (m.kind === 'operatingPoint' && !opts.points) continue;
    const unit = 'unit' in m.decl && m.decl.unit ? ` [${m.decl.unit.text}]` : '';
    const kind: CompletionKind = m.kind === 'operatingPoint' ? 'point' : m.kind;
    out.push({ label: m.name, kind, detail: `${m.kind === 'operatingPoint' ? 'operating point' : m.kind}${unit} of ${sys.name}` });
  }
  return out;
}

function functionItems(place: 'system' | 'loop' | 'expect'): CompletionInfo[] {
  const out: CompletionInfo[] = [];
  for (const f of FUNCTIONS.values()) {
    if (f.place === 'loop' && place === 'system') continue;
    if (f.place === 'expect' && place !== 'expect') continue;
    out.push({ label: f.name, kind: 'function', detail: f.summary, snippet: `${f.name}($0)` });
  }
  return out;
}

function loopNames(loop: LoopSymbol): CompletionInfo[] {
  const out: CompletionInfo[] = [];
  for (const s of loop.signals.keys()) out.push({ label: s, kind: 'signal', detail: `signal of ${loop.name}` });
  for (const p of loop.params.keys()) out.push({ label: p, kind: 'param', detail: `param of ${loop.name}` });
  for (const [name, inst] of loop.instances) out.push({ label: name, kind: inst.use ? 'use' : 'system', detail: inst.use ? `instance of ${inst.system.name}` : inst.system.kind });
  for (const u of loop.uses.keys()) if (!loop.instances.has(u)) out.push({ label: u, kind: 'use', detail: 'instance' });
  return out;
}

/** The system an instance or system name stands for in a loop (or anywhere, by block name). */
function systemNamed(a: Analysis, name: string, loop: LoopSymbol | undefined): SystemSymbol | undefined {
  const inst = loop?.instances.get(name);
  if (inst) return inst.system;
  const use = loop?.uses.get(name);
  if (use) return a.symbols.systems.get(use.system.name);
  return a.symbols.systems.get(name);
}

export function completions(a: Analysis, offset: number): CompletionInfo[] {
  const text = a.text;
  const before = text.slice(Math.max(0, text.lastIndexOf('\n', offset - 1) + 1), offset);
  const word = /[\p{L}_][\p{L}\p{N}_]*$/u.exec(before)?.[0] ?? '';
  const wordStart = offset - word.length;
  const head = before.slice(0, before.length - word.length);

  // Inside a comment: nothing.
  if (/#/.test(head.replace(/"(?:[^"\\]|\\.)*"/g, ''))) return [];

  // Inside a unit's brackets (after a number, or after `state NAME` and the like).
  const open = head.lastIndexOf('[');
  if (open >= 0 && head.indexOf(']', open) < 0) {
    const pre = head.slice(0, open);
    if (/(\d|\d\.)\s*$/.test(pre) || /\b(state|input|output)\s+[\p{L}_][\p{L}\p{N}_]*\s*$/u.test(pre)) return units();
  }

  const ctx = contextAt(a, offset, wordStart);
  const loop = ctx.block?.kind === 'loop' ? a.symbols.loops.get(ctx.block.name) : undefined;
  const sys = ctx.block && ctx.block.kind !== 'loop' ? a.symbols.systems.get(ctx.block.name) : undefined;

  // After a dotted path: members.
  const dotted = /((?:[\p{L}_][\p{L}\p{N}_]*\.)+)$/u.exec(head);
  if (dotted) {
    const parts = dotted[1].split('.').filter(Boolean);
    const target = systemNamed(a, parts[0], loop);
    if (!target) return [];
    if (parts.length === 1) return memberItems(target, { points: true });
    const point = target.points.find((p) => p.name.name === parts[1]);
    if (point && parts.length === 2) {
      return [...target.states, ...target.inputs].map((d) => ({ label: d.name.name, kind: d.kind as CompletionKind, detail: `value at ${parts[1]}${d.unit ? ` [${d.unit.text}]` : ''}` }));
    }
    return [];
  }

  const lineToks = ctx.lineTokens;
  const lastTok = lineToks[lineToks.length - 1];
  const atLineStart = lineToks.length === 0;

  if (ctx.depth === 0) return atLineStart ? BLOCKS : [];

  // Option words.
  if (lastTok?.tokenType.name === 'Kw_by') return SAMPLE_WORDS.map((w) => ({ label: w, kind: 'option' as const, detail: 'discretization method' }));
  if (lastTok?.tokenType.name === 'Equals' && lineToks[lineToks.length - 2]?.image === 'method') return METHOD_WORDS.map((w) => ({ label: w, kind: 'option' as const, detail: 'integrator' }));
  if (lastTok?.tokenType.name === 'Kw_operating') return [kw('point', 'operating point NAME { … }')];
  if (lastTok?.tokenType.name === 'Kw_compare') return [kw('linear', 'compare linear')];
  if (lastTok?.tokenType.name === 'Kw_solve') return [kw('algebraic', 'solve algebraic')];
  if (lastTok?.tokenType.name === 'Kw_sample') return [kw('every', 'sample every PERIOD')];
  if (lastTok?.tokenType.name === 'Kw_sweep') return [kw('start', 'sweep start SYSTEM.STATE over …'), ...(loop ? loopNames(loop) : [])];

  // Inside inner braces: entry names at the start of an entry.
  if (ctx.depth >= 2) {
    const entryStart = !lastTok || lastTok.tokenType.name === 'LCurly' || lastTok.tokenType.name === 'Comma';
    if (entryStart) {
      if (ctx.braceOwner === 'pid') return PID_ENTRIES.map((e) => ({ label: e, kind: 'option' as const, detail: 'pid entry' }));
      if (ctx.braceOwner === 'linear') return LINEAR_ENTRIES.map((e) => ({ label: e, kind: 'option' as const, detail: 'state-space matrix' }));
      if (ctx.braceOwner === 'simulate') return SIMULATE_OPTIONS.map((e) => ({ label: e, kind: 'option' as const, detail: 'simulate option' }));
      if (ctx.braceOwner === 'operating' && sys) return [...sys.states, ...sys.inputs].map((d) => ({ label: d.name.name, kind: d.kind as CompletionKind, detail: d.unit ? `[${d.unit.text}]` : d.kind }));
    }
  }

  const expectLine = lineToks.some((t) => t.tokenType.name === 'Kw_expect');
  const names: CompletionInfo[] = [];
  if (sys) names.push(...memberItems(sys, { points: false }));
  if (loop) names.push(...loopNames(loop));
  names.push(...functionItems(loop ? (expectLine ? 'expect' : 'loop') : 'system'));
  names.push({ label: 'pi', kind: 'builtin', detail: '3.14159…' });
  if (loop) names.push({ label: 't', kind: 'builtin', detail: 'time' });
  if (sys && lineToks.some((t) => t.tokenType.name === 'Slash') && lineToks.some((t) => t.tokenType.name === 'Equals')) names.push({ label: 's', kind: 'builtin', detail: 'Laplace variable' });

  if (atLineStart && ctx.depth === 1) {
    const members = sys ? [...SYSTEM_MEMBERS, ...(sys.kind === 'plant' ? PLANT_ONLY : CONTROLLER_ONLY)] : ctx.block?.kind === 'loop' ? LOOP_MEMBERS : ctx.block?.kind === 'plant' ? [...SYSTEM_MEMBERS, ...PLANT_ONLY] : [...SYSTEM_MEMBERS, ...CONTROLLER_ONLY];
    // Equations and arrows also start with a name.
    return [...members, ...names.filter((n) => n.kind !== 'function' && n.kind !== 'builtin')];
  }
  return [...names, ...EXPR_WORDS];
}
