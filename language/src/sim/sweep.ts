// What a loop asks to run, read from its members: `simulate DURATION { options }`, `compare
// linear`, the sweeps (their values, SI and as written) and the expects.

import type { Compiled } from '../model/compile';
import { displayUnit, toDisplay, type DisplayUnit } from '../model/units';
import type { Expr, ExpectDecl, SimulateDecl, SweepParamDecl, SweepStartDecl } from '../syntax/ast';
import { pathText } from '../syntax/ast';
import type { IntegratorMethod } from './solver';

export interface SweepValue {
  si: number;
  display: number;
  text: string;
}

export interface SweepSpec {
  kind: 'start' | 'param';
  /** `Boom.tilt`, `Steady.kp`, or a loop param's name. */
  target: string;
  unit: DisplayUnit;
  values: SweepValue[];
}

export interface RunSpec {
  duration: number;
  rtol: number;
  atol: number;
  method: IntegratorMethod;
  points: number;
  budgetMs?: number;
  compare: boolean;
  sweeps: SweepSpec[];
  expects: ExpectDecl[];
  text: string;
  /** Problems with the options, as text (the checks report them as diagnostics). */
  problems: string[];
}

export const DEFAULT_DURATION = 10;

const src = (c: Compiled, e: Expr) => c.text.slice(e.span.start, e.span.end).trim();

export function runSpec(c: Compiled): RunSpec {
  const members = c.symbol.block.members;
  const sim = members.find((m): m is SimulateDecl => m.kind === 'simulate');
  const problems: string[] = [];
  const num = (e: Expr | undefined, what: string): number | undefined => {
    if (!e) return undefined;
    const v = c.constant(e);
    if (!Number.isFinite(v)) {
      problems.push(`${what} is not a finite number`);
      return undefined;
    }
    return v;
  };
  let duration = sim ? num(sim.duration, 'the duration') ?? DEFAULT_DURATION : DEFAULT_DURATION;
  if (!(duration > 0)) {
    problems.push('the duration must be positive');
    duration = DEFAULT_DURATION;
  }
  const opt = (k: string) => sim?.options.find((o) => o.name.name === k)?.value;
  let rtol = num(opt('tolerance'), 'tolerance') ?? 1e-6;
  if (!(rtol > 0 && rtol < 1)) rtol = 1e-6;
  let atol = num(opt('abstol'), 'abstol') ?? rtol * 1e-3;
  if (!(atol > 0)) atol = rtol * 1e-3;
  const me = opt('method');
  const method: IntegratorMethod = me && me.kind === 'name' && ['adaptive', 'extrapolation', 'stiff'].includes(me.name) ? (me.name as IntegratorMethod) : 'adaptive';
  let points = num(opt('points'), 'points') ?? 1000;
  points = Math.min(1_000_000, Math.max(2, Math.round(points)));
  const b = num(opt('budget'), 'budget');
  const budgetMs = b !== undefined && b > 0 ? b * 1000 : undefined;
  const compare = members.some((m) => m.kind === 'compare');

  const sweeps: SweepSpec[] = [];
  for (const m of members) {
    if (m.kind === 'sweepStart') sweeps.push(sweepStart(c, m));
    else if (m.kind === 'sweepParam') {
      const s = sweepParam(c, m, problems);
      if (s) sweeps.push(s);
    }
  }
  const expects = members.filter((m): m is ExpectDecl => m.kind === 'expect');
  return { duration, rtol, atol, method, points, budgetMs, compare, sweeps, expects, text: c.text, problems };
}

function sweepStart(c: Compiled, m: SweepStartDecl): SweepSpec {
  const target = pathText(m.target);
  const st = c.states.find((s) => s.qualified === target);
  const unit = displayUnit(st?.unit);
  const values = m.values.map((e) => {
    const si = c.constant(e);
    return { si, display: toDisplay(si, unit), text: src(c, e) };
  });
  return { kind: 'start', target, unit, values };
}

function sweepParam(c: Compiled, m: SweepParamDecl, problems: string[]): SweepSpec | undefined {
  const target = pathText(m.target);
  const lo = c.constant(m.lo), hi = c.constant(m.hi);
  const steps = Math.round(c.constant(m.steps));
  if (!Number.isFinite(lo) || !Number.isFinite(hi) || !(steps >= 1) || steps > 100000) {
    problems.push(`sweep ${target}: the range or the number of steps is invalid`);
    return undefined;
  }
  let unitText: string | undefined;
  for (const inst of c.instances) {
    const info = inst.system.paramInfo.find((p) => p.qualified === target);
    if (info) unitText = info.unit;
  }
  if (unitText === undefined && m.lo.kind === 'quantity') unitText = m.lo.unit.text;
  const unit = displayUnit(unitText);
  const values: SweepValue[] = [];
  for (let k = 0; k < steps; k++) {
    const si = steps === 1 ? lo : lo + ((hi - lo) * k) / (steps - 1);
    const d = toDisplay(si, unit);
    values.push({ si, display: d, text: `${Number(d.toPrecision(6))}${unit.text ? ` [${unit.text}]` : ''}` });
  }
  return { kind: 'param', target, unit, values };
}

/** The sweep runs as pool jobs (start values or params by qualified name, SI). */
export function sweepJobs(spec: RunSpec): Array<{ label: string; kind: 'sweep'; sweep: { target: string; value: number; unit: string; text: string }; starts?: Array<[string, number]>; params?: Array<[string, number]> }> {
  return spec.sweeps.flatMap((sw) =>
    sw.values.map((v) => ({
      label: `${sw.target} = ${v.text}`,
      kind: 'sweep' as const,
      sweep: { target: sw.target, value: v.display, unit: sw.unit.text, text: v.text },
      ...(sw.kind === 'start' ? { starts: [[sw.target, v.si] as [string, number]] } : { params: [[sw.target, v.si] as [string, number]] }),
    })),
  );
}
