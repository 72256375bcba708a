// Step-response metrics of one signal over a run, exactly as LANGUAGE.md §4.3 defines them:
// initial and final values, Δ = |final − initial|, 10–90 % rise, overshoot beyond final in the
// direction of the change relative to Δ, settling as the last time outside a band around final
// (relative to Δ for a dimensionless band, absolute otherwise), peak |y|, IAE.
// Samples are the union of the output grid and every accepted step's end (so nothing between
// grid points is missed); crossing times are interpolated linearly between neighbouring samples.

import type { Compiled } from '../model/compile';
import { signalName } from '../model/compile';
import type { TracedSignal } from '../model/types';
import { displayUnit, isPureNumberUnit, toDisplay } from '../model/units';
import type { ExpectResult } from '../protocol';
import type { Expr } from '../syntax/ast';
import { pathText } from '../syntax/ast';
import type { RunSpec } from './sweep';

/** Samples of one signal in SI, times ascending. */
export interface Samples {
  t: ArrayLike<number>;
  y: ArrayLike<number>;
}

export interface RawMetrics {
  initial: number;
  final: number;
  peak: number;
  rise: number | null;
  overshoot: number | null;
  settling: number | null;
}

/**
 * A net change smaller than this fraction of the largest excursion from the initial value counts
 * as no change (a signal that returns to where it started has no rise, overshoot or settling).
 */
const STILL = 1e-6;

export function changeOf(s: Samples): { initial: number; final: number; delta: number; still: boolean } {
  const n = s.y.length;
  const initial = s.y[0], final = s.y[n - 1];
  const delta = Math.abs(final - initial);
  let excursion = 0;
  for (let i = 0; i < n; i++) excursion = Math.max(excursion, Math.abs(s.y[i] - initial));
  return { initial, final, delta, still: !(delta > STILL * excursion) || !(delta > 0) };
}

export function peakOf(s: Samples): number {
  let p = 0;
  for (let i = 0; i < s.y.length; i++) p = Math.max(p, Math.abs(s.y[i]));
  return p;
}

/** First time y reaches `level` moving from below (dir = 1) or above (dir = -1). */
function firstCrossing(s: Samples, level: number, dir: number): number | null {
  const { t, y } = s;
  if (dir * (y[0] - level) >= 0) return t[0];
  for (let i = 1; i < y.length; i++) {
    if (dir * (y[i] - level) >= 0) {
      const a = y[i - 1] - level, b = y[i] - level;
      const f = a === b ? 1 : a / (a - b);
      return t[i - 1] + f * (t[i] - t[i - 1]);
    }
  }
  return null;
}

export function riseOf(s: Samples, c = changeOf(s)): number | null {
  if (c.still) return null;
  const dir = Math.sign(c.final - c.initial);
  const t10 = firstCrossing(s, c.initial + 0.1 * (c.final - c.initial), dir);
  const t90 = firstCrossing(s, c.initial + 0.9 * (c.final - c.initial), dir);
  return t10 === null || t90 === null ? null : t90 - t10;
}

export function overshootOf(s: Samples, c = changeOf(s)): number | null {
  if (c.still) return null;
  const dir = Math.sign(c.final - c.initial);
  let worst = 0;
  for (let i = 0; i < s.y.length; i++) worst = Math.max(worst, dir * (s.y[i] - c.final));
  return worst / c.delta;
}

/**
 * Last time y is outside final ± width; the start time when it never leaves the band after it,
 * null when the band has no width (a still signal with a relative band).
 */
export function settlingOf(s: Samples, width: number): number | null {
  const { t, y } = s;
  const n = y.length;
  if (!(width > 0)) return null;
  const final = y[n - 1];
  for (let i = n - 1; i >= 0; i--) {
    const dev = Math.abs(y[i] - final);
    if (dev > width) {
      if (i === n - 1) return t[i];
      // crossing of |y − final| = width between samples i and i+1
      const a = dev - width, b = Math.abs(y[i + 1] - final) - width;
      const f = a === b ? 0 : a / (a - b);
      return t[i] + f * (t[i + 1] - t[i]);
    }
  }
  return t[0];
}

/** Band width: relative bands scale with Δ, absolute bands are used as they are (SI). */
export function bandWidth(s: Samples, band: number, relative: boolean): number {
  return relative ? band * changeOf(s).delta : band;
}

/** The settling band of a signal's metrics: 2 % of its change (LANGUAGE.md §4.3). */
export const METRIC_BAND = 0.02;

export function rawMetrics(s: Samples, band = METRIC_BAND): RawMetrics {
  const c = changeOf(s);
  return {
    initial: c.initial,
    final: c.final,
    peak: peakOf(s),
    rise: riseOf(s, c),
    overshoot: overshootOf(s, c),
    settling: c.still ? null : settlingOf(s, band * c.delta),
  };
}

/**
 * Metrics of one traced signal in its declared unit: the samples are converted to display
 * values first (display = (SI − offset) / scale), so `peak` is the largest |y| as shown (180 for
 * an oven at 180 degC, not 453.15) and `initial` / `final` are shown values. Times and
 * overshoot do not depend on the unit. `iaeSI` is ∫|y − offset| dt in SI (the driver integrates
 * the distance from the unit's zero); the result is in display unit·s (degC·s for a degC signal).
 */
export function displayMetrics(s: Samples, tr: { scale: number; offset: number }, iaeSI: number): RawMetrics & { iae: number } {
  const n = s.y.length;
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) y[i] = (s.y[i] - tr.offset) / tr.scale;
  const m = rawMetrics({ t: s.t, y });
  return { ...m, iae: iaeSI / tr.scale };
}

/** Reused buffer for display values (metrics of one signal at a time; runs are synchronous). */
let displayBuf = new Float64Array(0);

/**
 * displayMetrics for the first n samples of (t, y) in SI. Each display value is computed once,
 * by the same expression as displayMetrics ((SI − offset) / scale), into a reused buffer (or
 * read as it is for a signal shown in SI: scale 1, offset 0), so the figures are the same. One
 * pass gives the change, the peak and the overshoot (initial and final are known up front);
 * rise and settling read only as far as their crossings.
 */
export function displayMetricsOf(t: ArrayLike<number>, y: Float64Array, n: number, tr: { scale: number; offset: number }, iaeSI: number, band = METRIC_BAND): RawMetrics & { iae: number } {
  if (n === 0) return { ...rawMetrics({ t: [], y: [] }, band), iae: iaeSI / tr.scale };
  const off = tr.offset, sc = tr.scale;
  let v = y;
  if (off !== 0 || sc !== 1) {
    if (displayBuf.length < n) displayBuf = new Float64Array(Math.max(n, 2 * displayBuf.length));
    v = displayBuf;
    for (let i = 0; i < n; i++) v[i] = (y[i] - off) / sc;
  }
  const initial = v[0], final = v[n - 1];
  const delta = Math.abs(final - initial);
  const dir = Math.sign(final - initial);
  // The largest |y − initial|, the largest |y| and the largest overshoot past final all follow
  // from the smallest and largest sample (see extremes). Math.max(0, …) turns a −0 into the 0
  // that the definition gives.
  extremes(v, n);
  const lo = EXT.lo, hi = EXT.hi;
  const excursion = Math.max(hi - initial, initial - lo);
  const peak = Math.max(hi, -lo);
  const worst = dir > 0 ? Math.max(0, hi - final) : dir < 0 ? Math.max(0, final - lo) : hi === hi && lo === lo ? 0 : NaN;
  const still = !(delta > STILL * excursion) || !(delta > 0);
  const iae = iaeSI / sc;
  if (still) return { initial, final, peak, rise: null, overshoot: null, settling: null, iae };
  const t10 = crossingOf(t, v, n, initial + 0.1 * (final - initial), dir);
  const t90 = crossingOf(t, v, n, initial + 0.9 * (final - initial), dir);
  const rise = t10 === null || t90 === null ? null : t90 - t10;
  return { initial, final, peak, rise, overshoot: worst / delta, settling: settlingOfFirst(t, v, n, band * delta), iae };
}

/** The smallest and largest of the first n samples, as left by extremes (one record, reused). */
const EXT = { lo: 0, hi: 0 };

/**
 * The smallest and largest of v[0..n) into EXT; both NaN when a sample is NaN. Rounding is
 * monotone, so max(hi − y0, y0 − lo) is exactly the largest of the |y − y0|, and max(hi, −lo)
 * the largest |y|. Plain comparisons: a new extreme is rare, so the branches are well
 * predicted; a NaN sample fails all of them and is caught last.
 */
function extremes(v: ArrayLike<number>, n: number): void {
  let lo = v[0], hi = v[0];
  if (lo !== lo) hi = NaN;
  else {
    for (let i = 1; i < n; i++) {
      const vi = v[i];
      if (vi < lo) lo = vi;
      else if (vi > hi) hi = vi;
      else if (vi !== vi) {
        lo = hi = NaN;
        break;
      }
    }
  }
  EXT.lo = lo;
  EXT.hi = hi;
}

/** changeOf in one pass over the extremes: the same values (test/run/metrics-onepass.test.ts). */
export function changeFast(s: Samples): { initial: number; final: number; delta: number; still: boolean } {
  const n = s.y.length;
  const initial = s.y[0], final = s.y[n - 1];
  const delta = Math.abs(final - initial);
  let excursion = 0;
  if (n > 0) {
    extremes(s.y, n);
    excursion = Math.max(0, EXT.hi - initial, initial - EXT.lo);
  }
  return { initial, final, delta, still: !(delta > STILL * excursion) || !(delta > 0) };
}

/** firstCrossing over the first n samples. */
function crossingOf(t: ArrayLike<number>, v: Float64Array, n: number, level: number, dir: number): number | null {
  if (dir * (v[0] - level) >= 0) return t[0];
  for (let i = 1; i < n; i++) {
    const vi = v[i];
    if (dir * (vi - level) >= 0) {
      const a = v[i - 1] - level, b = vi - level;
      const f = a === b ? 1 : a / (a - b);
      return t[i - 1] + f * (t[i] - t[i - 1]);
    }
  }
  return null;
}

/** settlingOf over the first n samples. */
function settlingOfFirst(t: ArrayLike<number>, v: Float64Array, n: number, width: number): number | null {
  if (!(width > 0)) return null;
  const final = v[n - 1];
  for (let i = n - 1; i >= 0; i--) {
    const dev = Math.abs(v[i] - final);
    if (dev > width) {
      if (i === n - 1) return t[i];
      const a = dev - width, b = Math.abs(v[i + 1] - final) - width;
      const f = a === b ? 0 : a / (a - b);
      return t[i] + f * (t[i + 1] - t[i]);
    }
  }
  return t[0];
}

/** Largest |y| in the signal's display unit, given back in SI (display · scale + offset) for expects. */
export function peakSI(s: Samples, tr: { scale: number; offset: number }): number {
  let p = 0;
  for (let i = 0; i < s.y.length; i++) p = Math.max(p, Math.abs(s.y[i] - tr.offset));
  return p + tr.offset;
}

/**
 * Recovery band of one plant state (LANGUAGE.md §4.3 with the decision of docs/language.md):
 * 2 % of its initial distance d0 from the operating point; for a state that starts at the point
 * (d0 = 0), 2 % of the largest distance it reaches during the run, never below abstol (so a state
 * that never leaves the point, or only by rounding, has the band abstol).
 */
export function recoveryBand(d0: number, dMax: number, abstol: number): number {
  if (d0 > 0) return 0.02 * d0;
  return Math.max(abstol, 0.02 * dMax);
}

/**
 * Does a run recover? Per plant state: d0 its initial distance from the operating point, dMax the
 * largest distance over the run, tailMax the largest over the last tenth. Both run drivers
 * (sim/run.ts, linear/linear-run.ts) decide with this one function.
 */
export function recovers(d0: ArrayLike<number>, dMax: ArrayLike<number>, tailMax: ArrayLike<number>, abstol: number): boolean {
  for (let i = 0; i < d0.length; i++) {
    if (!(tailMax[i] <= recoveryBand(d0[i], dMax[i], abstol))) return false;
  }
  return true;
}

// Gauss–Legendre 3-point rule on [0, 1] (nodes 1/2 ∓ √15/10, weights 5/18, 8/18, 5/18).
export const GL3_NODES = [0.5 - Math.sqrt(15) / 10, 0.5, 0.5 + Math.sqrt(15) / 10] as const;
export const GL3_WEIGHTS = [5 / 18, 8 / 18, 5 / 18] as const;

// ---------- expects ----------


export interface ExpectData {
  traced: TracedSignal[];
  t: ArrayLike<number>;
  y: ArrayLike<number>[];
  iae: Float64Array;
  /** Intervals at each loop limit, by limit index. */
  atLimit: Array<Array<[number, number]>>;
  duration: number;
  complete: boolean;
  /**
   * Per traced signal, when its metrics were computed on these very samples (shown in SI):
   * whether it changes, and its settling time for METRIC_BAND. An expect of settling for that
   * band reads it instead of scanning the samples again.
   */
  settled?: Array<{ still: boolean; settling: number | null } | undefined>;
}

class ExpectError extends Error {}

/** Per expect: its text as shown (the expect objects belong to one document). */
const expectTexts = new WeakMap<object, string>();
/** Per expression: does it measure the run (contains a metric call)? */
const measures = new WeakMap<Expr, boolean>();
/** Per compiled loop: values of constant expressions at its default params. */
const constants = new WeakMap<Compiled, Map<Expr, number>>();

function constantOf(c: Compiled, e: Expr): number {
  let m = constants.get(c);
  if (!m) {
    m = new Map();
    constants.set(c, m);
  }
  let v = m.get(e);
  if (v === undefined) {
    v = c.constant(e);
    m.set(e, v);
  }
  return v;
}

const TIME_METRICS = new Set(['settling', 'rise']);

/** Checks every `expect` of the loop against one run's data. */
export function evaluateExpects(c: Compiled, spec: RunSpec, d: ExpectData): ExpectResult[] {
  return spec.expects.map((ex) => {
    let text = expectTexts.get(ex);
    if (text === undefined) {
      text = c.text.slice(ex.span.start, ex.span.end).replace(/\s+/g, ' ').trim();
      expectTexts.set(ex, text);
    }
    const test = ex.test;
    const span = ex.span;
    if (test.kind !== 'binary' || !['<', '<=', '>', '>=', '==', '!='].includes(test.op)) {
      return { text, span, pass: false, measured: null, measuredText: '', error: 'not a comparison' };
    }
    if (!d.complete) return { text, span, pass: false, measured: null, measuredText: '', error: 'the run did not finish' };
    try {
      const left = value(c, d, test.left);
      const right = value(c, d, test.right);
      const pass = compare(test.op, left, right);
      // measured value in the unit of the right-hand side when it has one
      let unit = test.right.kind === 'quantity' ? displayUnit(test.right.unit.text) : undefined;
      if (!unit && isTimeMetric(test.left)) unit = displayUnit('s');
      const measured = unit ? toDisplay(left, unit) : left;
      const shown = Number(measured.toPrecision(4));
      const measuredText = unit && unit.text ? `${shown} ${unit.text}` : `${shown}`;
      return { text, span, pass, measured, measuredText };
    } catch (e) {
      return { text, span, pass: false, measured: null, measuredText: '', error: (e as Error).message };
    }
  });
}

function isTimeMetric(e: Expr): boolean {
  return e.kind === 'call' && TIME_METRICS.has(e.callee.name);
}

function compare(op: string, a: number, b: number): boolean {
  switch (op) {
    case '<': return a < b;
    case '<=': return a <= b;
    case '>': return a > b;
    case '>=': return a >= b;
    case '==': return Math.abs(a - b) <= 1e-9 * Math.max(1, Math.abs(a), Math.abs(b));
    default: return !(Math.abs(a - b) <= 1e-9 * Math.max(1, Math.abs(a), Math.abs(b)));
  }
}

/** Per measured argument: the signal name it refers to (the expression belongs to one document). */
const argNames = new WeakMap<Expr, string>();

function samplesOf(c: Compiled, d: ExpectData, e: Expr): { s: Samples; j: number } {
  let name = argNames.get(e);
  if (name === undefined) {
    name = signalName(e, c.text);
    argNames.set(e, name);
  }
  let j = -1;
  for (let q = 0; q < d.traced.length; q++) if (d.traced[q].name === name) {
    j = q;
    break;
  }
  if (j < 0) throw new ExpectError(`${name} is not recorded in this run`);
  return { s: { t: d.t, y: d.y[j] }, j };
}

function hasMetric(e: Expr): boolean {
  let r = measures.get(e);
  if (r === undefined) {
    r = findMetric(e);
    measures.set(e, r);
  }
  return r;
}

function findMetric(e: Expr): boolean {
  let found = false;
  const visit = (x: Expr): void => {
    if (x.kind === 'call' && ['settling', 'overshoot', 'rise', 'peak', 'final', 'iae', 'saturated'].includes(x.callee.name)) found = true;
    if (x.kind === 'binary') (visit(x.left), visit(x.right));
    if (x.kind === 'unary') visit(x.operand);
    if (x.kind === 'call') x.args.forEach(visit);
  };
  visit(e);
  return found;
}

/** SI value of one side of an expect. */
function value(c: Compiled, d: ExpectData, e: Expr): number {
  if (!hasMetric(e)) {
    const v = constantOf(c, e);
    if (!Number.isFinite(v)) throw new ExpectError(`'${c.text.slice(e.span.start, e.span.end)}' is not a finite number`);
    return v;
  }
  switch (e.kind) {
    case 'unary':
      return e.op === '-' ? -value(c, d, e.operand) : value(c, d, e.operand);
    case 'binary': {
      const a = value(c, d, e.left), b = value(c, d, e.right);
      switch (e.op) {
        case '+': return a + b;
        case '-': return a - b;
        case '*': return a * b;
        case '/': return a / b;
        case '^': return Math.pow(a, b);
        default: throw new ExpectError(`'${e.op}' inside a measured value`);
      }
    }
    case 'call':
      return metricValue(c, d, e.callee.name, e.args);
    default:
      throw new ExpectError('cannot measure this');
  }
}

/** Per band expression of a `settling` call: relative (a pure number) or absolute, and its value. */
const bands = new WeakMap<Compiled, Map<Expr, { relative: boolean; bv: number }>>();

function bandOf(c: Compiled, band: Expr): { relative: boolean; bv: number } {
  let m = bands.get(c);
  if (!m) {
    m = new Map();
    bands.set(c, m);
  }
  let b = m.get(band);
  if (!b) {
    const relative = band.kind === 'number' || (band.kind === 'quantity' && isPureNumberUnit(band.unit.text));
    // an absolute band is a width: the offset of its unit does not apply (2 [degC] is 2 K wide)
    const bv = constantOf(c, band) - (!relative && band.kind === 'quantity' ? displayUnit(band.unit.text).offset : 0);
    b = { relative, bv };
    m.set(band, b);
  }
  return b;
}

function metricValue(c: Compiled, d: ExpectData, name: string, args: Expr[]): number {
  if (name === 'saturated') {
    const a = args[0];
    const q = a && a.kind === 'member' ? pathText(a.path) : '';
    const lim = c.limits.find((l) => l.qualified === q);
    if (!lim) throw new ExpectError(`${q} has no limit`);
    const iv = d.atLimit[lim.index] ?? [];
    return d.duration > 0 ? iv.reduce((s, [x, y]) => s + (y - x), 0) / d.duration : 0;
  }
  const { s, j } = samplesOf(c, d, args[0]);
  const nameOf = () => signalName(args[0], c.text);
  const need = (v: number | null, what: string): number => {
    if (v === null) throw new ExpectError(`${nameOf()} does not change, so it has no ${what}`);
    return v;
  };
  switch (name) {
    case 'final':
      return s.y[s.y.length - 1];
    case 'peak':
      return peakSI(s, d.traced[j]);
    case 'rise':
      return need(riseOf(s, changeFast(s)), 'rise time');
    case 'overshoot':
      return need(overshootOf(s, changeFast(s)), 'overshoot');
    case 'iae':
      // ∫|y − offset| dt: for an offset unit (degC) the integral of the shown value, in K·s
      return d.iae[j];
    case 'settling': {
      const band = args[1];
      if (!band) throw new ExpectError('settling needs a band');
      const { relative, bv } = bandOf(c, band);
      const known = relative && bv === METRIC_BAND ? d.settled?.[j] : undefined;
      if (known) {
        if (known.still) throw new ExpectError(`${nameOf()} does not change, so a relative band has no width`);
        return need(known.settling, 'settling time');
      }
      const change = relative ? changeFast(s) : undefined;
      const w = change ? bv * change.delta : bv; // bandWidth, with the change read once
      if (change && change.still) throw new ExpectError(`${nameOf()} does not change, so a relative band has no width`);
      return need(settlingOf(s, w), 'settling time');
    }
    default:
      throw new ExpectError(`unknown measure '${name}'`);
  }
}
