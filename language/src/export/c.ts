// C99 source of one sampled controller: a state struct, an init function and a step function
// evaluating the controller's model graph (see controller.ts) operation by operation, as the
// simulator's generated code does. No dynamic memory, no library beyond <math.h>. Identifiers are
// mangled (mangle.ts); free text appears only in comments, neutralised.
//
// The interface speaks the declared units: inputs arrive and outputs leave in the units the
// controller declares (degC, %, rpm, ...); the step converts to SI and back, as the simulator's
// wiring does.

import type { GNode } from '../model/graph';
import type { ControllerModel, ExportVar } from './controller';
import { NameScope, cNumber, commentText } from './mangle';

export interface COptions {
  /** Prefix of the file-level names (default: the controller's name, lower case). */
  prefix?: string;
  /** Name of the source file, for the header comment. */
  source?: string;
  /** The period as the user gave it, for the header comment. */
  periodText?: string;
  /** Version of the generator, for the header comment. */
  version?: string;
}

/** The generated names, for callers that write code against the file (tests, drivers). */
export interface CInterface {
  state: string;
  inputs: string;
  outputs: string;
  init: string;
  step: string;
  period: string;
  inputFields: string[];
  outputFields: string[];
  stateFields: string[];
}

export type CResult = { ok: true; code: string; names: CInterface } | { ok: false; message: string };

const METHOD_TEXT: Record<string, string> = {
  tustin: 'Tustin (bilinear) transform',
  hold: 'zero-order hold (exact for inputs held between samples)',
  forward: 'forward difference (forward Euler)',
};

/** C spelling of a math.h function by graph op; helpers for the ones C lacks or spells differently. */
const MATH: Record<string, string> = {
  sin: 'sin', cos: 'cos', tan: 'tan', asin: 'asin', acos: 'acos', atan: 'atan', atan2: 'atan2',
  sinh: 'sinh', cosh: 'cosh', tanh: 'tanh', exp: 'exp', log: 'log', log10: 'log10', sqrt: 'sqrt',
  abs: 'fabs', pow: 'pow',
};

const unitText = (v: { unit: string }) => (v.unit ? commentText(v.unit) : '1');

/** "in degC" / "in SI" comment fragment of a variable. */
function convIn(v: ExportVar, expr: string): string {
  if (v.scale === 1 && v.offset === 0) return expr;
  const scaled = v.scale === 1 ? expr : `${expr} * ${cNumber(v.scale)}`;
  return v.offset === 0 ? scaled : `${scaled} + ${cNumber(v.offset)}`;
}

function convOut(v: ExportVar, expr: string): string {
  if (v.scale === 1 && v.offset === 0) return expr;
  const shifted = v.offset === 0 ? expr : `(${expr} - ${cNumber(v.offset)})`;
  return v.scale === 1 ? shifted : `${shifted} / ${cNumber(v.scale)}`;
}

export function generateC(m: ControllerModel, opts: COptions = {}): CResult {
  const g = m.graph;
  const files = new NameScope();
  // the prefix only ever appears with a suffix (`_state`, `_step`), so a keyword is harmless
  const prefix = files.take(opts.prefix ?? m.system.toLowerCase()).replace(/_+$/, '');
  const T = {
    state: `${prefix}_state`,
    inputs: `${prefix}_inputs`,
    outputs: `${prefix}_outputs`,
    init: `${prefix}_init`,
    step: `${prefix}_step`,
    period: `${prefix.toUpperCase()}_PERIOD_S`,
  };
  const helpers = new Set<string>();
  const stateFields = new NameScope(), inFields = new NameScope(), outFields = new NameScope();
  const xs = m.states.map((s) => stateFields.take(s.name));
  const us = m.inputs.map((s) => inFields.take(s.name));
  const ys = m.outputs.map((s) => outFields.take(s.name));

  // ---- the step body: one temporary per graph node ----
  const roots = [...m.outputNodes, ...m.nextNodes];
  const order = g.reachable(roots);
  const names = new Map<number, string>();
  const body: string[] = [];
  const usedInputs = new Set<number>();
  let problem: string | undefined;
  const ref = (id: number): string => {
    const n = g.nodes[id];
    if (n.op === 'c') return cNumber(n.v);
    if (m.isConstant(id)) return cNumber(m.constantValue(id));
    const name = names.get(id);
    if (!name) {
      problem ??= `node ${id} used before it was computed`;
      return 'NAN';
    }
    return name;
  };
  const expr = (n: GNode): string => {
    const a = n.args.map(ref);
    switch (n.op) {
      case 'neg': return `-${a[0]}`;
      case 'add': return `${a[0]} + ${a[1]}`;
      case 'sub': return `${a[0]} - ${a[1]}`;
      case 'mul': return `${a[0]} * ${a[1]}`;
      case 'div': return `${a[0]} / ${a[1]}`;
      case 'pow': {
        const e = g.nodes[n.args[1]];
        if (e.op === 'c' && e.v === 2) return `${a[0]} * ${a[0]}`;
        return `pow(${a[0]}, ${a[1]})`;
      }
      case 'lt': return `(${a[0]} < ${a[1]} ? 1.0 : 0.0)`;
      case 'le': return `(${a[0]} <= ${a[1]} ? 1.0 : 0.0)`;
      case 'gt': return `(${a[0]} > ${a[1]} ? 1.0 : 0.0)`;
      case 'ge': return `(${a[0]} >= ${a[1]} ? 1.0 : 0.0)`;
      case 'eq': return `(${a[0]} == ${a[1]} ? 1.0 : 0.0)`;
      case 'ne': return `(${a[0]} != ${a[1]} ? 1.0 : 0.0)`;
      case 'and': return `(${a[0]} != 0.0 && ${a[1]} != 0.0 ? 1.0 : 0.0)`;
      case 'or': return `(${a[0]} != 0.0 || ${a[1]} != 0.0 ? 1.0 : 0.0)`;
      case 'not': return `(${a[0]} == 0.0 ? 1.0 : 0.0)`;
      case 'if': return `(${a[0]} != 0.0 ? ${a[1]} : ${a[2]})`;
      case 'lim': return `lw_clamp(${a[0]}, ${a[1]}, ${a[2]})`;
      case 'sign': return `lw_sign(${a[0]})`;
      case 'min': return `lw_min(${a[0]}, ${a[1]})`;
      case 'max': return `lw_max(${a[0]}, ${a[1]})`;
      case 'lookup': {
        const k = n.v | 0;
        return `lw_lookup(${a[0]}, (const double[${k}]){${a.slice(1, 1 + k).join(', ')}}, (const double[${k}]){${a.slice(1 + k).join(', ')}}, ${k})`;
      }
      default: {
        const f = MATH[n.op];
        if (!f) {
          problem ??= `the operation '${n.op}' cannot be exported`;
          return 'NAN';
        }
        return `${f}(${a.join(', ')})`;
      }
    }
  };
  for (const id of order) {
    const n = g.nodes[id];
    if (n.op === 'c' || m.isConstant(id)) continue;
    if (n.op === 'p' || n.op === 't' || n.op === 'h' || n.op === 'w') {
      problem ??= `the controller reads '${n.op}', which an exported controller does not have`;
      continue;
    }
    if (n.op === 'x') {
      names.set(id, `s->${xs[n.v]}`);
      continue;
    }
    if (n.op === 'u') {
      usedInputs.add(n.v);
      names.set(id, `u${n.v}`);
      continue;
    }
    if (n.op === 'lim' || n.op === 'sign' || n.op === 'min' || n.op === 'max' || n.op === 'lookup') helpers.add(n.op);
    const name = `v${id}`;
    body.push(`  const double ${name} = ${expr(n)};`);
    names.set(id, name);
  }
  if (problem) return { ok: false, message: `controller '${m.system}': ${problem}` };

  // ---- text ----
  const L: string[] = [];
  const c = (s: string) => `/* ${commentText(s)} */`;
  L.push('/*');
  L.push(` * ${commentText(`Controller ${m.system}${m.description ? `: ${m.description}` : ''}`)}`);
  L.push(` * ${commentText(`Generated by loopwright${opts.version ? ` ${opts.version}` : ''} export${opts.source ? ` from ${opts.source}` : ''}.`)}`);
  L.push(' *');
  L.push(` * Sample period: ${cNumber(Number(m.period.toPrecision(12)))} s${opts.periodText ? ` (${commentText(opts.periodText)})` : ''}, ${m.periodSource === 'file' ? "from the controller's sample clause" : 'given when exporting'}.`);
  L.push(` * Discretization: ${METHOD_TEXT[m.method] ?? m.method}; nonlinear state equations by`);
  L.push(' * forward difference, x[k+1] = x[k] + T*f(x[k], u[k]). Limits clamp; a PID law with an');
  L.push(' * anti-windup time feeds back the difference between its limited and unlimited output.');
  L.push(' *');
  L.push(` * Use: call ${T.init}() once, then ${T.step}() exactly once every sample period with`);
  L.push(' * the inputs sampled at that instant, and hold the outputs until the next call.');
  L.push(' * Inputs and outputs are in the units noted on each field; the step converts to SI.');
  L.push(' *');
  L.push(' * CAUTION. This code reproduces the difference equations of the model; it is not a');
  L.push(' * validation of the machine it will control. Test it on the target, against the real');
  L.push(' * plant, with safe limits. Limits, interlocks and emergency stops belong in hardware as');
  L.push(' * well, independent of this code. Follow the local codes and standards and licensed');
  L.push(' * engineering practice that apply to the installation.');
  L.push(' */');
  L.push('');
  L.push('#include <math.h>');
  L.push('');
  L.push(`#define ${T.period} ${cNumber(m.period)} /* sample period in s */`);
  L.push('');
  if (m.params.length) {
    L.push('/* Parameters, folded into the constants below (values in SI):');
    for (const p of m.params) L.push(` *   ${commentText(`${p.name} = ${p.written}`)}  ->  ${cNumber(p.si)}`);
    L.push(' */');
    L.push('');
  }
  if (m.limits.length) {
    L.push('/* Limits (in the declared units):');
    for (const l of m.limits) L.push(` *   ${l.on} ${commentText(l.name)} within ${cNumber(l.lo)} .. ${cNumber(l.hi)} [${unitText(l)}]`);
    L.push(' */');
    L.push('');
  }
  L.push(`/* State of ${commentText(m.system)} (SI). */`);
  L.push('typedef struct {');
  if (!m.states.length) L.push('  double unused_; /* the controller has no states */');
  m.states.forEach((v, i) => L.push(`  double ${xs[i]}; ${c(`${v.name}: ${v.role}${v.unit ? `; in SI (declared as ${v.unit})` : ''}`)}`));
  L.push(`} ${T.state};`);
  L.push('');
  L.push(`/* Inputs, sampled at each instant. */`);
  L.push('typedef struct {');
  if (!m.inputs.length) L.push('  double unused_; /* the controller has no inputs */');
  m.inputs.forEach((v, i) => L.push(`  double ${us[i]}; ${c(`${v.name} in [${unitText(v)}]`)}`));
  L.push(`} ${T.inputs};`);
  L.push('');
  L.push(`/* Outputs, to hold until the next instant. */`);
  L.push('typedef struct {');
  if (!m.outputs.length) L.push('  double unused_; /* the controller has no outputs */');
  m.outputs.forEach((v, i) => L.push(`  double ${ys[i]}; ${c(`${v.name} in [${unitText(v)}]`)}`));
  L.push(`} ${T.outputs};`);
  L.push('');
  if (helpers.has('lim')) L.push('static double lw_clamp(double a, double lo, double hi) { return a < lo ? lo : a > hi ? hi : a; }');
  if (helpers.has('sign')) L.push('static double lw_sign(double a) { return a > 0.0 ? 1.0 : a < 0.0 ? -1.0 : a; }');
  if (helpers.has('min')) L.push('static double lw_min(double a, double b) { return a != a ? a : b != b ? b : a < b ? a : b; }');
  if (helpers.has('max')) L.push('static double lw_max(double a, double b) { return a != a ? a : b != b ? b : a > b ? a : b; }');
  if (helpers.has('lookup')) {
    L.push('/* Piecewise-linear table, clamped at the ends. */');
    L.push('static double lw_lookup(double x, const double *xs, const double *ys, int n) {');
    L.push('  int lo = 0, hi = n - 1;');
    L.push('  double dx;');
    L.push('  if (n == 0) return NAN;');
    L.push('  if (!(x > xs[0])) return ys[0];');
    L.push('  if (x >= xs[n - 1]) return ys[n - 1];');
    L.push('  while (hi - lo > 1) { int mid = (lo + hi) / 2; if (xs[mid] <= x) lo = mid; else hi = mid; }');
    L.push('  dx = xs[hi] - xs[lo];');
    L.push('  return dx > 0.0 ? ys[lo] + ((ys[hi] - ys[lo]) * (x - xs[lo])) / dx : ys[hi];');
    L.push('}');
  }
  if (helpers.size) L.push('');
  L.push(`/* Sets the states to their start values. */`);
  L.push(`void ${T.init}(${T.state} *s) {`);
  if (!m.states.length) L.push('  s->unused_ = 0.0;');
  m.states.forEach((_, i) => L.push(`  s->${xs[i]} = ${cNumber(m.x0[i])};`));
  L.push('}');
  L.push('');
  L.push(`/* One sample instant: outputs from the current states and inputs, then the next states. */`);
  L.push(`void ${T.step}(${T.state} *s, const ${T.inputs} *in, ${T.outputs} *out) {`);
  m.inputs.forEach((v, i) => {
    if (usedInputs.has(i)) L.push(`  const double u${i} = ${convIn(v, `in->${us[i]}`)}; ${c(`${v.name} in SI`)}`);
    else L.push(`  (void)in->${us[i]}; ${c(`${v.name} does not affect the outputs`)}`);
  });
  if (!m.inputs.length) L.push('  (void)in;');
  if (!m.states.length) L.push('  (void)s;');
  L.push(...body);
  m.outputs.forEach((v, j) => L.push(`  out->${ys[j]} = ${convOut(v, ref(m.outputNodes[j]))};`));
  if (!m.outputs.length) L.push('  out->unused_ = 0.0;');
  // next states from temporaries first: every update reads the states of this instant
  const next = m.nextNodes.map((id) => ref(id));
  const needTemp = next.map((v, i) => v.startsWith('s->') && v !== `s->${xs[i]}`);
  m.nextNodes.forEach((_, i) => {
    if (needTemp[i]) L.push(`  const double n${i} = ${next[i]};`);
  });
  m.nextNodes.forEach((_, i) => {
    const v = needTemp[i] ? `n${i}` : next[i];
    if (v !== `s->${xs[i]}`) L.push(`  s->${xs[i]} = ${v};`);
  });
  L.push('}');
  if (problem) return { ok: false, message: `controller '${m.system}': ${problem}` };
  return { ok: true, code: L.join('\n') + '\n', names: { ...T, inputFields: us, outputFields: ys, stateFields: xs } };
}
