// Structural check of a LoopRunReport received as JSON. The page draws only what passed: a
// malformed report becomes one clear sentence naming the first offending field, never a crash
// halfway through drawing. Samples may be null (JSON has no NaN); everything else must have the
// type that language/src/protocol.ts declares.

import type { LoopRunReport } from '../../language/src/protocol';

type Result = { ok: true; value: LoopRunReport } | { ok: false; error: string };

class Invalid extends Error {}

const isObject = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null && !Array.isArray(v);

function fail(path: string, what: string, got: unknown): never {
  let desc: string;
  if (got === undefined) desc = 'nothing';
  else if (got === null) desc = 'null';
  else if (Array.isArray(got)) desc = 'an array';
  else if (typeof got === 'object') desc = 'an object';
  else desc = `${typeof got} ${String(JSON.stringify(got)).slice(0, 40)}`;
  throw new Invalid(`${path} must be ${what}, got ${desc}`);
}

function obj(v: unknown, path: string): Record<string, unknown> {
  if (!isObject(v)) fail(path, 'an object', v);
  return v;
}
function str(v: unknown, path: string): string {
  if (typeof v !== 'string') fail(path, 'a string', v);
  return v;
}
function num(v: unknown, path: string): number {
  if (typeof v !== 'number' || !Number.isFinite(v)) fail(path, 'a finite number', v);
  return v;
}
function numOrNull(v: unknown, path: string): number | null {
  return v === null ? null : num(v, path);
}
function bool(v: unknown, path: string): boolean {
  if (typeof v !== 'boolean') fail(path, 'true or false', v);
  return v;
}
function arr(v: unknown, path: string): unknown[] {
  if (!Array.isArray(v)) fail(path, 'an array', v);
  return v;
}
function oneOf<T extends string>(v: unknown, options: readonly T[], path: string): T {
  if (!options.includes(v as T)) fail(path, `one of ${options.map((o) => `'${o}'`).join(', ')}`, v);
  return v as T;
}
function optional<T>(v: unknown, check: (v: unknown, path: string) => T, path: string): T | undefined {
  return v === undefined ? undefined : check(v, path);
}
function span(v: unknown, path: string): void {
  const s = obj(v, path);
  num(s.start, `${path}.start`);
  num(s.end, `${path}.end`);
}

function checkSignalInfo(v: unknown, path: string): void {
  const s = obj(v, path);
  str(s.name, `${path}.name`);
  str(s.unit, `${path}.unit`);
  num(s.scale, `${path}.scale`);
  num(s.offset, `${path}.offset`);
  oneOf(s.kind, ['state', 'input', 'output', 'signal', 'controller'] as const, `${path}.kind`);
  str(s.group, `${path}.group`);
  if (s.limit !== undefined) {
    const l = obj(s.limit, `${path}.limit`);
    const lo = num(l.lo, `${path}.limit.lo`);
    const hi = num(l.hi, `${path}.limit.hi`);
    if (lo > hi) throw new Invalid(`${path}.limit has lo ${lo} above hi ${hi}`);
  }
  optional(s.description, str, `${path}.description`);
}

function checkMetrics(v: unknown, path: string): void {
  const m = obj(v, path);
  for (const k of ['initial', 'final', 'peak', 'iae'] as const) num(m[k], `${path}.${k}`);
  for (const k of ['rise', 'overshoot', 'settling'] as const) numOrNull(m[k], `${path}.${k}`);
  optional(m.timeAtLimit, num, `${path}.timeAtLimit`);
}

function checkRun(v: unknown, path: string): void {
  const r = obj(v, path);
  str(r.label, `${path}.label`);
  oneOf(r.kind, ['nonlinear', 'linear', 'sweep'] as const, `${path}.kind`);
  if (r.sweep !== undefined) {
    const s = obj(r.sweep, `${path}.sweep`);
    str(s.target, `${path}.sweep.target`);
    num(s.value, `${path}.sweep.value`);
    str(s.unit, `${path}.sweep.unit`);
    str(s.text, `${path}.sweep.text`);
  }
  const t = arr(r.t, `${path}.t`);
  let prev = -Infinity;
  for (let i = 0; i < t.length; i++) {
    const x = t[i];
    if (typeof x !== 'number' || !Number.isFinite(x)) fail(`${path}.t[${i}]`, 'a finite number', x);
    if (x < prev) throw new Invalid(`${path}.t must not decrease (t[${i}] = ${x} after ${prev})`);
    prev = x;
  }
  const signals = obj(r.signals, `${path}.signals`);
  for (const [name, ys] of Object.entries(signals)) {
    const p = `${path}.signals[${JSON.stringify(name)}]`;
    const a = arr(ys, p);
    if (a.length !== t.length) throw new Invalid(`${p} has ${a.length} samples but t has ${t.length}`);
    for (let i = 0; i < a.length; i++) {
      const y = a[i];
      if (y !== null && (typeof y !== 'number' || !Number.isFinite(y))) fail(`${p}[${i}]`, 'a finite number or null', y);
    }
  }
  const atLimit = obj(r.atLimit, `${path}.atLimit`);
  for (const [name, iv] of Object.entries(atLimit)) {
    const p = `${path}.atLimit[${JSON.stringify(name)}]`;
    arr(iv, p).forEach((pair, i) => {
      const q = arr(pair, `${p}[${i}]`);
      if (q.length !== 2) fail(`${p}[${i}]`, 'a pair [t0, t1]', pair);
      num(q[0], `${p}[${i}][0]`);
      num(q[1], `${p}[${i}][1]`);
    });
  }
  const metrics = obj(r.metrics, `${path}.metrics`);
  for (const [name, m] of Object.entries(metrics)) checkMetrics(m, `${path}.metrics[${JSON.stringify(name)}]`);
  arr(r.expects, `${path}.expects`).forEach((e, i) => {
    const p = `${path}.expects[${i}]`;
    const x = obj(e, p);
    str(x.text, `${p}.text`);
    span(x.span, `${p}.span`);
    bool(x.pass, `${p}.pass`);
    numOrNull(x.measured, `${p}.measured`);
    str(x.measuredText, `${p}.measuredText`);
    optional(x.error, str, `${p}.error`);
  });
  bool(r.recovered, `${path}.recovered`);
  if (r.error !== undefined) {
    const e = obj(r.error, `${path}.error`);
    str(e.message, `${path}.error.message`);
    num(e.time, `${path}.error.time`);
    optional(e.state, str, `${path}.error.state`);
    str(e.code, `${path}.error.code`);
  }
  const s = obj(r.stats, `${path}.stats`);
  for (const k of ['steps', 'rejected', 'evaluations', 'jacobians', 'ms'] as const) num(s[k], `${path}.stats.${k}`);
}

function checkPole(v: unknown, path: string): void {
  const p = obj(v, path);
  for (const k of ['re', 'im', 'damping', 'natural'] as const) num(p[k], `${path}.${k}`);
  numOrNull(p.timeConstant, `${path}.timeConstant`);
}

function checkParam(v: unknown, path: string): void {
  const p = obj(v, path);
  str(p.name, `${path}.name`);
  str(p.system, `${path}.system`);
  oneOf(p.owner, ['plant', 'controller', 'loop'] as const, `${path}.owner`);
  num(p.value, `${path}.value`);
  str(p.unit, `${path}.unit`);
  span(p.span, `${path}.span`);
  const s = p.span as { start: number; end: number };
  if (!Number.isInteger(s.start) || !Number.isInteger(s.end) || s.start < 0 || s.end < s.start) throw new Invalid(`${path}.span must be whole offsets with 0 <= start <= end`);
  const text = str(p.text, `${path}.text`);
  if (s.end - s.start < text.length) throw new Invalid(`${path}.span is shorter than its text ${JSON.stringify(text)}`);
}

/** Returns the report itself (not a copy) when it has the declared shape. Never throws. */
export function validateReport(v: unknown): Result {
  try {
    const r = obj(v, 'report');
    optional(r.file, str, 'file');
    str(r.loop, 'loop');
    arr(r.signals, 'signals').forEach((s, i) => checkSignalInfo(s, `signals[${i}]`));
    const names = new Set<string>();
    for (const s of r.signals as Array<{ name: string }>) {
      if (names.has(s.name)) throw new Invalid(`signals lists ${JSON.stringify(s.name)} twice`);
      names.add(s.name);
    }
    arr(r.runs, 'runs').forEach((run, i) => checkRun(run, `runs[${i}]`));
    arr(r.warnings, 'warnings').forEach((w, i) => str(w, `warnings[${i}]`));
    if (r.poles !== undefined) {
      const p = obj(r.poles, 'poles');
      for (const set of ['closed', 'open'] as const) arr(p[set], `poles.${set}`).forEach((x, i) => checkPole(x, `poles.${set}[${i}]`));
    }
    if (r.params !== undefined) arr(r.params, 'params').forEach((x, i) => checkParam(x, `params[${i}]`));
    return { ok: true, value: v as LoopRunReport };
  } catch (e) {
    if (e instanceof Invalid) return { ok: false, error: e.message };
    return { ok: false, error: `could not be read (${e instanceof Error ? e.message : String(e)})` };
  }
}
