// Hover: what a name is (kind, unit declared and in SI, value, description), what a bracketed
// unit means in SI, what a function does, and — on plants, operating points, controllers and
// loops — their linear analysis (see hover-linear.ts).

import type { Analysis } from '../../language/src/analysis';
import { FUNCTIONS } from '../../language/src/check/functions';
import type { MemberSymbol, SystemSymbol, Target } from '../../language/src/check/symbols';
import type { Span } from '../../language/src/diagnostics';
import type { Expr, UnitText } from '../../language/src/syntax/ast';
import { formatDim, isDimless } from '../../language/src/units/dimension';
import { parseUnit, type ParsedUnit } from '../../language/src/units/registry';
import type { HoverInfo } from './convert';
import { code, esc, num } from './format-md';
import { loopHover, pointHover, systemHover } from './hover-linear';
import { refAt, textOf, tokenAt, trailingComment } from './locate';
import { unitsOf } from './layers';

const KIND_WORD: Record<MemberSymbol['kind'], string> = {
  param: 'param',
  let: 'let',
  state: 'state',
  input: 'input',
  output: 'output',
  operatingPoint: 'operating point',
};

const KEYWORD_HELP: Record<string, string> = {
  plant: 'A physical system: states, inputs, outputs, equations and operating points.',
  controller: 'A control law: transfer relations, PID laws, linear blocks or equations; may be sampled.',
  loop: 'Joins systems by wiring outputs and signals to inputs, and says how to run them.',
  param: 'A constant; may use earlier params.',
  let: 'A named intermediate; may use states, inputs and params.',
  state: 'A state with its unit; its derivative is given by `NAME\' = EXPR`.',
  input: 'An input signal of the system.',
  output: 'An output; its value comes from an equation, a transfer relation, a pid law or a linear block.',
  linear: 'In a system: a state-space block `linear { A = …, B = …, C = …, D = … }`. In a loop, after `compare`: overlay the linearized run.',
  pid: '`pid OUT from IN { kp, ki, kd, rolloff, antiwindup }`: a PID law.',
  limit: '`limit NAME within LO .. HI`: saturation of an input or an output.',
  operating: '`operating point NAME { … }`: where the plant is linearized.',
  sample: '`sample every PERIOD (by tustin / hold / forward)`: the controller runs in discrete time.',
  signal: 'A reference or disturbance: a function of `t`.',
  use: '`use NAME = SYSTEM(param = …)`: another instance of a system with params overridden.',
  around: 'The plant operating point the loop is linearized about.',
  start: 'A start value of a state for the run.',
  simulate: 'The run: its duration and options (tolerance, abstol, method, points).',
  compare: '`compare linear`: also run the linearized loop and overlay it.',
  sweep: 'A family of runs over start values or a param.',
  show: 'The signals to plot.',
  expect: 'A requirement checked after each run.',
  solve: '`solve algebraic`: solve algebraic loops by Newton iteration.',
};

export function hover(a: Analysis, offset: number): HoverInfo | undefined {
  const tok = tokenAt(a, offset);
  if (tok && tok.tokenType.name === 'UnitLit') {
    const span = { start: tok.startOffset, end: tok.startOffset + tok.image.length };
    const text = tok.image.replace(/^\[/, '').replace(/\]$/, '');
    return { span, markdown: unitMarkdown(text) };
  }
  const ref = refAt(a, offset);
  if (ref) {
    const md = targetMarkdown(a, ref.target, ref.span);
    return md ? { span: ref.span, markdown: md } : undefined;
  }
  if (tok && tok.tokenType.name.startsWith('Kw_')) {
    const word = tok.image;
    const help = KEYWORD_HELP[word];
    if (help) return { span: { start: tok.startOffset, end: tok.startOffset + word.length }, markdown: `${code(word)} — ${help}` };
  }
  return undefined;
}

/** Meaning of a bracketed unit: its SI expansion, or why it cannot be read. */
export function unitMarkdown(text: string): string {
  const r = parseUnit(text);
  if (!r.ok) return `${code(`[${text}]`)}: ${esc(r.message)}`;
  return `${code(`[${text}]`)} = ${siLine(r.unit)}`;
}

function siLine(u: ParsedUnit): string {
  const si = formatDim(u.dim);
  const siText = isDimless(u.dim) ? (u.angle !== 0 ? '1 (dimensionless; an angle)' : '1 (dimensionless)') : code(si);
  if (u.offset !== 0) return `${siText} with an offset: value in SI = (value + ${num(u.offset, 6)}) × ${num(u.scale, 6)}`;
  if (Math.abs(u.scale - 1) < 1e-12) return `${siText} (SI)`;
  return `${num(u.scale, 6)} × ${siText}`;
}

function unitLine(unit: UnitText | undefined): string | undefined {
  if (!unit) return undefined;
  const r = parseUnit(unit.text);
  if (!r.ok) return `Unit: ${code(`[${unit.text}]`)} (${esc(r.message)})`;
  return `Unit: ${code(`[${unit.text}]`)} = ${siLine(r.unit)}`;
}

function valueLine(a: Analysis, e: Expr | undefined, label = 'Value'): string | undefined {
  if (!e) return undefined;
  const written = textOf(a, e.span).trim();
  if (!written) return undefined;
  let si = '';
  if (e.kind === 'quantity') {
    const r = parseUnit(e.unit.text);
    if (r.ok && !(Math.abs(r.unit.scale - 1) < 1e-12 && r.unit.offset === 0)) si = ` = ${num((e.value + r.unit.offset) * r.unit.scale, 6)} ${code(formatDim(r.unit.dim))} in SI`;
  }
  return `${label}: ${code(written)}${si}`;
}

function memberMarkdown(a: Analysis, m: MemberSymbol): string {
  const sys = m.system;
  const lines: string[] = [`(${KIND_WORD[m.kind]}) **${esc(m.name)}** of ${sys.kind} ${code(sys.name)}`];
  const d = m.decl;
  const add = (s: string | undefined) => s && lines.push(s);
  switch (d.kind) {
    case 'param':
    case 'let': {
      add(valueLine(a, d.value));
      const inferred = unitsOf(a)?.inferredText(d);
      if (inferred) add(`Unit (inferred): ${code(inferred)}`);
      break;
    }
    case 'state':
      add(unitLine(d.unit));
      add(d.init ? valueLine(a, d.init, 'Default start') : 'Default start: 0');
      break;
    case 'input':
      add(unitLine(d.unit));
      break;
    case 'output': {
      add(unitLine(d.unit));
      const src = sys.outputSources.get(m.name);
      if (src && src.kind !== 'equation') add(`Value from: the ${src.kind === 'transfer' ? 'transfer relation' : src.kind === 'pid' ? 'pid law' : 'linear block'} on line ${lineOf(a, src.decl.span.start)}`);
      else add(valueLine(a, d.value, 'Equation'));
      break;
    }
    case 'operatingPoint': {
      const point = pointHover(a, sys, d);
      if (point) return [lines[0], point].join('\n\n');
      add(d.entries.map((e) => `${code(e.name.name)} = ${code(textOf(a, e.value.span).trim())}`).join(', '));
      break;
    }
  }
  const limit = sys.limits.get(m.name);
  if (limit && (m.kind === 'input' || m.kind === 'output')) add(`Limited to ${code(textOf(a, limit.lo.span).trim())} .. ${code(textOf(a, limit.hi.span).trim())}`);
  const comment = trailingComment(a, d.span.end);
  if (comment) add(`_${esc(comment)}_`);
  return lines.join('\n\n');
}

function lineOf(a: Analysis, offset: number): number {
  let n = 1;
  for (let i = 0; i < offset && i < a.text.length; i++) if (a.text.charCodeAt(i) === 10) n++;
  return n;
}

function listing(a: Analysis, sys: SystemSymbol): string {
  const unit = (u: UnitText | undefined) => (u ? ` ${code(`[${u.text}]`)}` : '');
  const parts: string[] = [];
  if (sys.states.length) parts.push(`States: ${sys.states.map((s) => `${code(s.name.name)}${unit(s.unit)}`).join(', ')}`);
  if (sys.inputs.length) parts.push(`Inputs: ${sys.inputs.map((s) => `${code(s.name.name)}${unit(s.unit)}`).join(', ')}`);
  if (sys.outputs.length) parts.push(`Outputs: ${sys.outputs.map((s) => `${code(s.name.name)}${unit(s.unit)}`).join(', ')}`);
  if (sys.points.length) parts.push(`Operating points: ${sys.points.map((p) => code(p.name.name)).join(', ')}`);
  if (sys.sample) parts.push(`Sampled every ${code(textOf(a, sys.sample.period.span).trim())}${sys.sample.method ? ` by ${sys.sample.method.name}` : ''}`);
  return parts.join('\n\n');
}

function targetMarkdown(a: Analysis, t: Target, span: Span): string | undefined {
  switch (t.kind) {
    case 'member':
      return memberMarkdown(a, t.member);
    case 'pointValue': {
      const entry = (t.point.decl.kind === 'operatingPoint' ? t.point.decl.entries : []).find((e) => e.name.name === t.member.name);
      const head = `(operating-point value) **${esc(t.point.name)}.${esc(t.member.name)}** of ${t.member.system.kind} ${code(t.member.system.name)}`;
      return [head, entry ? valueLine(a, entry.value) : 'Not given by the operating point (0)'].filter(Boolean).join('\n\n');
    }
    case 'system': {
      const sys = t.system;
      const head = `(${sys.kind}) **${esc(sys.name)}**${sys.block.description ? ` — ${esc(sys.block.description.text)}` : ''}`;
      const linear = systemHover(a, sys);
      return [head, listing(a, sys), linear].filter(Boolean).join('\n\n');
    }
    case 'loop': {
      const loop = t.loop;
      const head = `(loop) **${esc(loop.name)}**${loop.block.description ? ` — ${esc(loop.block.description.text)}` : ''}`;
      const used = [...loop.instances.values()].map((i) => (i.use ? `${code(i.name)} (${code(i.system.name)})` : code(i.name)));
      return [head, used.length ? `Uses ${used.join(', ')}` : undefined, loopHover(a, loop)].filter(Boolean).join('\n\n');
    }
    case 'signal': {
      const desc = trailingComment(a, t.decl.span.end);
      return [`(signal) **${esc(t.decl.name.name)}** of loop ${code(t.loop.name)}`, valueLine(a, t.decl.value), desc && `_${esc(desc)}_`].filter(Boolean).join('\n\n');
    }
    case 'loopParam': {
      const desc = trailingComment(a, t.decl.span.end);
      return [`(param) **${esc(t.decl.name.name)}** of loop ${code(t.loop.name)}`, valueLine(a, t.decl.value), desc && `_${esc(desc)}_`].filter(Boolean).join('\n\n');
    }
    case 'use': {
      const over = t.decl.overrides.map((o) => `${code(o.name.name)} = ${code(textOf(a, o.value.span).trim())}`).join(', ');
      return [`(instance) **${esc(t.decl.name.name)}** of ${code(t.decl.system.name)} in loop ${code(t.loop.name)}`, over ? `Overrides: ${over}` : 'No overrides'].join('\n\n');
    }
    case 'builtin':
      if (t.name === 'pi') return '(constant) **pi** = 3.14159…';
      if (t.name === 't') return '(time) **t**: the time of the run, in s';
      return '(Laplace variable) **s**: dimension 1/time';
    case 'function': {
      const f = FUNCTIONS.get(t.name);
      return f ? `(function) ${code(f.summary.split(':')[0])}${f.summary.includes(':') ? ` — ${esc(f.summary.slice(f.summary.indexOf(':') + 1).trim())}` : ''}` : undefined;
    }
    case 'option':
      return `(option value) ${code(t.name)}`;
  }
  void span;
  return undefined;
}
