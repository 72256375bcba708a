// The run driver: from a compiled loop to RunResults. One run integrates in segments: signal
// breakpoints (step and pulse edges, ramp starts) and sample instants end a segment exactly;
// limit switches are events located on the dense output of the step that crosses them, so no step
// straddles a corner. The uniform output grid, step-end samples, IAE (Gauss–Legendre on each
// step's dense output) and time at the limits are gathered inside the step callback. Guards end a
// run with a RunError that names the time and a state: non-finite values, step-size underflow,
// too many steps, the wall-clock budget, cancellation, a non-converging algebraic loop.

import type { Compiled } from '../model/compile';
import { AlgebraicLoopFailure } from '../model/loop';
import { LimitMode, type LoopEvaluator, type TracedSignal } from '../model/types';
import type { LoopRunReport, RunError, RunResult, SampledRun, SignalInfo, SignalMetrics, SolverStats } from '../protocol';
import { plainRun, sampleBuffer } from './plain';
import { createIntegrator, type Integrator, type IntegratorMethod, type SegmentResult, type StepView } from './solver';
import { eventValue, hysteresis, locateRoot, modeFor, nextMode } from './events';
import { GL3_NODES, GL3_WEIGHTS, displayMetricsOf, recovers } from './metrics';

const GL3_N0 = GL3_NODES[0], GL3_N1 = GL3_NODES[1], GL3_N2 = GL3_NODES[2];
import { evaluateExpects } from './metrics';
import { runSpec, type RunSpec } from './sweep';

export interface Cancellation {
  cancelled: boolean;
}

export interface RunOptions {
  /** Wall-clock budget per run in ms (default 10000). */
  budgetMs?: number;
  cancel?: Cancellation;
  /** Override the file's options. */
  points?: number;
  method?: IntegratorMethod;
  tolerance?: number;
  abstol?: number;
}

export interface RunInput {
  label: string;
  kind: RunResult['kind'];
  sweep?: RunResult['sweep'];
  /** Joint params (SI). */
  p: Float64Array;
  /** Start vector (SI). */
  x0: Float64Array;
}

/**
 * Everything a run of one compiled loop needs besides its inputs, made once per loop and reused
 * by each run: the evaluator (generated functions bound to a param vector, rebound only when the
 * params change), the integrator (rebuilt only when the method or tolerances change), and every
 * buffer: grid, step-end samples, traced-value and event scratch, merged samples for the metrics.
 * Runs of one loop on one thread never overlap, so one set serves them all.
 */
class RunDriver {
  readonly n: number;
  readonly nTr: number;
  readonly nLim: number;
  ev: LoopEvaluator | undefined;
  private evP: Float64Array | undefined;
  integrator: Integrator | undefined;
  private integKey = '';
  /** Left limit at a breakpoint: evaluations at t ≥ tCap take the time tBelow (see runOnce). */
  tCap = Infinity;
  tBelow = Infinity;
  algFailure: AlgebraicLoopFailure | undefined;
  // state and traced-value scratch
  readonly x: Float64Array;
  readonly xq: Float64Array;
  readonly xEvent: Float64Array;
  readonly trBuf: Float64Array;
  readonly trPrev: Float64Array;
  readonly trNode0: Float64Array;
  readonly trNode1: Float64Array;
  readonly trNode2: Float64Array;
  readonly trOne: Float64Array;
  readonly iae: Float64Array;
  readonly off: Float64Array;
  // limit scratch
  readonly pre: Float64Array;
  readonly lo: Float64Array;
  readonly hi: Float64Array;
  readonly pre2: Float64Array;
  readonly lo2: Float64Array;
  readonly hi2: Float64Array;
  readonly isSampledLimit: Uint8Array;
  readonly sampledAt: Uint8Array;
  readonly atLimitSince: Float64Array;
  readonly evLimits: Int32Array;
  // recovery
  readonly plantStates: number[] = [];
  readonly opX: Float64Array;
  readonly maxDev: Float64Array;
  readonly maxDist: Float64Array;
  // IAE split scratch
  readonly iaeTs = new Float64Array(5);
  readonly iaeYs = new Float64Array(5);
  readonly iaeCuts = new Float64Array(6);
  /** The split signal's quartic in powers of θ. */
  readonly iaeC = new Float64Array(5);
  // grid: times for (points, tEnd)
  gridT = new Float64Array(0);
  private gridEnd = NaN;
  /**
   * The run's result samples, written as the grid points are reached: the grid times, then one
   * row of `points` per shown signal in display units (a new buffer per run: the result keeps it).
   */
  out = new Float64Array(0);
  private outPoints = 0;
  /** Traced index of each shown signal, in order. */
  readonly shownJ: Int32Array;
  /** Writes the shown signals of a traced-value buffer, in display units, one row of `stride` apart from `at`. */
  private readonly putShown: UnrolledCopy;
  /** Writes a traced-value buffer's row values (rowJ) into the merged samples at m, rows `cap` apart. */
  private readonly putRows: UnrolledCopy;
  // Samples for the metrics, merged in time order as the run goes: every grid point and every
  // accepted step's end (a step end on a grid time is not repeated). `my` holds one row of
  // `mCap` per distinct traced signal (a signal that repeats another, tracedSameAs, reads the
  // row of the one it repeats); both grow by doubling.
  /** Traced index of each row of `my`, and the row of each traced signal. */
  readonly rowJ: Int32Array;
  readonly rowOf: Int32Array;
  mt = new Float64Array(0);
  my = new Float64Array(0);
  mCap = 0;
  nMerged = 0;
  readonly rhs: (t: number, x: Float64Array, dx: Float64Array) => void;
  readonly jac: (t: number, x: Float64Array, J: Float64Array) => void;

  constructor(readonly c: Compiled) {
    const n = c.n, nTr = c.traced.length, nLim = c.limits.length;
    this.n = n;
    this.nTr = nTr;
    this.nLim = nLim;
    this.x = new Float64Array(n);
    this.xq = new Float64Array(n);
    this.xEvent = new Float64Array(n);
    this.trBuf = new Float64Array(nTr);
    this.trPrev = new Float64Array(nTr);
    this.trNode0 = new Float64Array(nTr);
    this.trNode1 = new Float64Array(nTr);
    this.trNode2 = new Float64Array(nTr);
    this.trOne = new Float64Array(nTr);
    this.iae = new Float64Array(nTr);
    this.off = Float64Array.from(c.traced, (tr) => tr.offset);
    const rowJ: number[] = [];
    this.rowOf = new Int32Array(nTr);
    for (let j = 0; j < nTr; j++) {
      const same = c.tracedSameAs[j] ?? j;
      if (same === j || same < 0 || same >= j) this.rowOf[j] = rowJ.push(j) - 1;
      else this.rowOf[j] = this.rowOf[same];
    }
    this.rowJ = Int32Array.from(rowJ);
    const shown = c.traced.flatMap((tr, j) => (tr.shown ? [j] : []));
    this.shownJ = Int32Array.from(shown);
    this.putRows = unrolledCopy(rowJ);
    this.putShown = unrolledCopy(shown, Float64Array.from(shown, (j) => c.traced[j].offset), Float64Array.from(shown, (j) => c.traced[j].scale));
    this.pre = new Float64Array(nLim);
    this.lo = new Float64Array(nLim);
    this.hi = new Float64Array(nLim);
    this.pre2 = new Float64Array(nLim);
    this.lo2 = new Float64Array(nLim);
    this.hi2 = new Float64Array(nLim);
    this.isSampledLimit = new Uint8Array(nLim);
    for (const l of c.limits) if (l.sampled) this.isSampledLimit[l.index] = 1;
    this.sampledAt = new Uint8Array(nLim);
    this.atLimitSince = new Float64Array(nLim);
    this.evLimits = Int32Array.from(c.limits.filter((l) => !l.sampled).map((l) => l.index));
    this.opX = new Float64Array(n);
    for (const inst of c.instances) {
      if (inst.system.kind !== 'plant') continue;
      const pt = c.around.get(inst.system.instance);
      for (let i = 0; i < inst.system.states.length; i++) {
        this.plantStates.push(inst.xOffset + i);
        this.opX[inst.xOffset + i] = pt && i < inst.system.declaredStates ? pt.x[i] : 0;
      }
    }
    this.maxDev = new Float64Array(n);
    this.maxDist = new Float64Array(n);
    const withAlg = c.algebraicLoops.length > 0;
    this.rhs = (tt, xx, dx) => {
      const ev = this.ev!;
      const te = tt < this.tCap ? tt : this.tBelow;
      if (!withAlg) {
        ev.rhs(te, xx, dx);
        return;
      }
      try {
        ev.rhs(te, xx, dx);
      } catch (e) {
        if (e instanceof AlgebraicLoopFailure) this.algFailure = e;
        throw e;
      }
    };
    this.jac = (tt, xx, J) => this.ev!.jac(tt < this.tCap ? tt : this.tBelow, xx, J);
  }

  /** The evaluator for param vector p, reset for a new run (modes, held outputs, sampled limits). */
  evaluatorFor(p: Float64Array): LoopEvaluator {
    // a loop with algebraic loops keeps Newton's last iterate in its evaluator: a fresh one per run
    const reuse = this.ev !== undefined && this.evP !== undefined && this.c.algebraicLoops.length === 0 && sameValues(this.evP, p);
    if (!reuse) {
      this.ev = this.c.evaluator(p);
      this.evP = Float64Array.from(p);
    } else {
      const ev = this.ev!;
      ev.modes.fill(LimitMode.CLAMP);
      ev.held.fill(0);
      ev.sampledLimits.pre.fill(0);
      ev.sampledLimits.lo.fill(0);
      ev.sampledLimits.hi.fill(0);
    }
    return this.ev!;
  }

  integratorFor(method: IntegratorMethod, rtol: number, atol: number): Integrator {
    const key = `${method}|${rtol}|${atol}`;
    if (!this.integrator || key !== this.integKey) {
      this.integrator = createIntegrator(method, { n: this.n, f: this.rhs, jac: this.jac }, { rtol, atol, maxSteps: 200000 });
      this.integKey = key;
    }
    this.integrator.resetStats();
    return this.integrator;
  }

  /** Grid times and sample index buffer for `points` points on [0, tEnd]. */
  gridFor(points: number, tEnd: number): void {
    if (this.gridT.length !== points || this.gridEnd !== tEnd) {
      this.gridT = new Float64Array(points);
      for (let i = 0; i < points; i++) this.gridT[i] = i === points - 1 ? tEnd : (tEnd * i) / (points - 1);
      this.gridEnd = tEnd;
    }
    // every value is written before the run returns: the times here, the signals by writeGrid or unreached
    this.out = sampleBuffer((1 + this.shownJ.length) * points);
    this.out.set(this.gridT);
    this.outPoints = points;
  }

  /** Grid points from i on were not reached (a failed run): their values are NaN. */
  unreached(i: number): void {
    const points = this.outPoints;
    for (let r = 1; r <= this.shownJ.length; r++) this.out.fill(NaN, r * points + i, (r + 1) * points);
  }

  /** Starts a run's merged samples (room for the grid and about as many step ends). */
  startSamples(points: number): void {
    const need = 2 * points + 64;
    if (this.mCap < need) {
      this.mCap = need;
      this.mt = new Float64Array(need);
      this.my = new Float64Array(need * this.rowJ.length);
    }
    this.nMerged = 0;
  }

  private growSamples(): void {
    const rows = this.rowJ.length, cap = this.mCap, cap2 = 2 * cap;
    const t2 = new Float64Array(cap2), y2 = new Float64Array(cap2 * rows);
    t2.set(this.mt);
    for (let r = 0; r < rows; r++) y2.set(this.my.subarray(r * cap, r * cap + cap), r * cap2);
    this.mt = t2;
    this.my = y2;
    this.mCap = cap2;
  }

  private appendSample(t: number, tr: Float64Array): void {
    if (this.nMerged === this.mCap) this.growSamples();
    const m = this.nMerged++;
    this.mt[m] = t;
    this.putRows(tr, this.my, m, this.mCap);
  }

  /** A step end (or the values just after a breakpoint); skipped when a grid point has this time. */
  recordSample(t: number, tr: Float64Array): void {
    const m = this.nMerged;
    if (m > 0 && this.mt[m - 1] === t && this.lastWasGrid) return;
    this.appendSample(t, tr);
    this.lastWasGrid = false;
  }

  /** Grid point i: into the merged samples and, in display units, into the result. */
  writeGrid(i: number, tr: Float64Array): void {
    this.appendSample(this.gridT[i], tr);
    this.lastWasGrid = true;
    this.putShown(tr, this.out, this.outPoints + i, this.outPoints);
  }
  private lastWasGrid = false;
}

/** dst[at + r·stride] = (src[from[r]] − offset[r]) / scale[r] for every r. */
type UnrolledCopy = (src: Float64Array, dst: Float64Array, at: number, stride: number) => void;

/**
 * The copy of a few chosen entries of a traced-value buffer, written out one statement per entry
 * (a loop over index arrays costs more than the copy for the three or four signals of a loop, and
 * it runs at every grid point and step end). The source holds only integer literals and, for
 * signals shown in another unit than SI, reads of the offset and scale arrays: no user text.
 */
function unrolledCopy(from: ArrayLike<number>, offset?: Float64Array, scale?: Float64Array): UnrolledCopy {
  const lines: string[] = [];
  for (let r = 0; r < from.length; r++) {
    const j = from[r] | 0;
    const v = offset && scale && (offset[r] !== 0 || scale[r] !== 1) ? `(src[${j}] - off[${r}]) / sc[${r}]` : `src[${j}]`;
    lines.push(`dst[at${r ? ` + ${r} * stride` : ''}] = ${v};`);
  }
  const make = new Function('off', 'sc', `"use strict"; return function (src, dst, at, stride) {\n${lines.join('\n')}\n};`) as (off?: Float64Array, sc?: Float64Array) => UnrolledCopy;
  return make(offset, scale);
}

function sameValues(a: Float64Array, b: Float64Array): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (!Object.is(a[i], b[i])) return false;
  return true;
}

const drivers = new WeakMap<Compiled, RunDriver>();

function driverFor(c: Compiled): RunDriver {
  let d = drivers.get(c);
  if (!d) {
    d = new RunDriver(c);
    drivers.set(c, d);
  }
  return d;
}

const downF = new Float64Array(1);
const downI = new BigInt64Array(downF.buffer);

/** The largest double below v (v finite and positive). */
function prevDown(v: number): number {
  if (v === 0) return -Number.MIN_VALUE;
  downF[0] = v;
  downI[0] += v > 0 ? -1n : 1n;
  return downF[0];
}

const now = (): number => (typeof performance !== 'undefined' ? performance.now() : Date.now());

export function fmtTime(t: number): string {
  return `${Number(t.toPrecision(6))} s`;
}

/** Nodes of a step's five samples in θ = (t − a) / h: its ends and the Gauss–Legendre nodes. */
const QUARTIC_NODES = [0, GL3_NODES[0], GL3_NODES[1], GL3_NODES[2], 1];
/** Their Lagrange weights 1 / Π_{m≠k} (θ_k − θ_m). */
const QUARTIC_WEIGHTS = QUARTIC_NODES.map((tk, k) => 1 / QUARTIC_NODES.reduce((p, tm, m) => (m === k ? p : p * (tk - tm)), 1));

/** The quartic through the five samples ys at θ, in Lagrange form (the reference of the power form below). */
export function quartic(ys: ArrayLike<number>, th: number): number {
  const d0 = th - QUARTIC_NODES[0], d1 = th - QUARTIC_NODES[1], d2 = th - QUARTIC_NODES[2], d3 = th - QUARTIC_NODES[3], d4 = th - QUARTIC_NODES[4];
  return (
    QUARTIC_WEIGHTS[0] * ys[0] * d1 * d2 * d3 * d4 +
    QUARTIC_WEIGHTS[1] * ys[1] * d0 * d2 * d3 * d4 +
    QUARTIC_WEIGHTS[2] * ys[2] * d0 * d1 * d3 * d4 +
    QUARTIC_WEIGHTS[3] * ys[3] * d0 * d1 * d2 * d4 +
    QUARTIC_WEIGHTS[4] * ys[4] * d0 * d1 * d2 * d3
  );
}

/** LAGRANGE_POWERS[5k + m]: the coefficient of θ^m in the k-th Lagrange basis polynomial. */
const LAGRANGE_POWERS = (() => {
  const out = new Float64Array(25);
  for (let k = 0; k < 5; k++) {
    let poly = [QUARTIC_WEIGHTS[k]];
    for (let m = 0; m < 5; m++) {
      if (m === k) continue;
      const next = new Array<number>(poly.length + 1).fill(0);
      for (let i = 0; i < poly.length; i++) {
        next[i + 1] += poly[i];
        next[i] -= QUARTIC_NODES[m] * poly[i];
      }
      poly = next;
    }
    for (let m = 0; m < 5; m++) out[5 * k + m] = poly[m];
  }
  return out;
})();

/** The quartic through the five samples ys in powers of θ: c[m] is the coefficient of θ^m. */
export function quarticPowers(ys: ArrayLike<number>, c: Float64Array): void {
  for (let m = 0; m < 5; m++) {
    let v = 0;
    for (let k = 0; k < 5; k++) v += ys[k] * LAGRANGE_POWERS[5 * k + m];
    c[m] = v;
  }
}

/** The quartic of power coefficients c at θ (Horner). */
function powerQuartic(c: Float64Array, th: number): number {
  return (((c[4] * th + c[3]) * th + c[2]) * th + c[1]) * th + c[0];
}

/**
 * θ of the sign change of the quartic c (power form, through the samples ys) between samples k
 * and k+1 (ys[k]·ys[k+1] < 0): Newton's method kept inside the bracket, which it shrinks at every
 * step, with bisection when a step would leave it; it stops when θ moves by less than 1e-12.
 * The dense output of the 'adaptive' method is a quartic in θ, so for a signal linear in the
 * states this is the root of the dense output itself; otherwise the quartic is off by the order
 * of the dense output's own error, and a cut off by δ changes the IAE by only about 2·|y'|·δ².
 */
function powerQuarticRoot(c: Float64Array, ys: ArrayLike<number>, k: number): number {
  let lo = QUARTIC_NODES[k], hi = QUARTIC_NODES[k + 1];
  const loPositive = ys[k] > 0;
  // start where the chord through the two samples crosses zero
  let th = lo + ((hi - lo) * ys[k]) / (ys[k] - ys[k + 1]);
  for (let it = 0; it < 60; it++) {
    const p = powerQuartic(c, th);
    if (p === 0) return th;
    if (p > 0 === loPositive) lo = th;
    else hi = th;
    const dp = ((4 * c[4] * th + 3 * c[3]) * th + 2 * c[2]) * th + c[1];
    let next = th - p / dp;
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    if (Math.abs(next - th) <= 1e-12 || hi - lo <= 1e-12) return next;
    th = next;
  }
  return th;
}

const rootPowers = new Float64Array(5);

/** θ of the sign change of the quartic through the five samples ys between samples k and k+1. */
export function quarticRoot(ys: ArrayLike<number>, k: number): number {
  quarticPowers(ys, rootPowers);
  return powerQuarticRoot(rootPowers, ys, k);
}

/** One run of a compiled loop. Never throws. */
export function runOnce(c: Compiled, spec: RunSpec, input: RunInput, opts: RunOptions = {}): SampledRun {
  const started = now();
  const n = c.n;
  const d = driverFor(c);
  const ev = d.evaluatorFor(input.p);
  const tEnd = spec.duration;
  const points = Math.max(2, Math.floor(opts.points ?? spec.points));
  const rtol = opts.tolerance ?? spec.rtol;
  const atol = opts.abstol ?? spec.atol;
  const method = opts.method ?? spec.method;
  const budget = opts.budgetMs ?? spec.budgetMs ?? 10000;
  const cancel = opts.cancel;
  const traced = c.traced;
  const nTr = traced.length;

  // limits that switch by events (continuous ones)
  const nLim = d.nLim;
  const evLimits = d.evLimits;
  const nEv = evLimits.length;
  const pre = d.pre, lo = d.lo, hi = d.hi;
  const pre2 = d.pre2, lo2 = d.lo2, hi2 = d.hi2;
  const modes = ev.modes;
  for (let e = 0; e < nEv; e++) modes[evLimits[e]] = LimitMode.FREE;
  // limits inside sampled controllers: at their limit from one sample instant to the next
  const isSampledLimit = d.isSampledLimit;
  const sampledAt = d.sampledAt;
  sampledAt.fill(0);
  const atLimitSince = d.atLimitSince;
  atLimitSince.fill(NaN);
  const atLimit: Array<Array<[number, number]>> = [];
  for (let k = 0; k < nLim; k++) atLimit.push([]);

  const x = d.x;
  x.set(input.x0.subarray(0, n));
  const xq = d.xq;
  const trBuf = d.trBuf;
  const trPrev = d.trPrev;
  const trNode0 = d.trNode0, trNode1 = d.trNode1, trNode2 = d.trNode2;
  const iae = d.iae;
  iae.fill(0);
  d.gridFor(points, tEnd);
  d.startSamples(points);
  const gridT = d.gridT;
  let nextGrid = 0;

  // Within a segment that ends on a breakpoint b, every evaluation at t ≥ b takes the left limit
  // of the signals (time just below b): the last stage of the step that lands on b, the dense
  // output and the event functions there all belong to the segment before the edge. The values
  // after the edge (right-continuous) are taken once the segment has ended, with the limit modes
  // settled for them.
  // (the integrator's right-hand side and Jacobian read d.tCap / d.tBelow)
  d.tCap = d.tBelow = Infinity;
  const tc = (tt: number): number => (tt < d.tCap ? tt : d.tBelow);

  d.algFailure = undefined;
  const integrator = d.integratorFor(method, rtol, atol);

  let error: RunError | undefined;
  const stateName = (i: number | undefined) => (i !== undefined && i >= 0 && i < n ? c.states[i].qualified : undefined);

  /** The state changing fastest relative to its tolerance at (t, x): what limits the steps. */
  const fastestState = (t: number, xs: Float64Array): number => {
    const dx = new Float64Array(n);
    try {
      ev.rhs(t, xs, dx);
    } catch {
      return 0;
    }
    let best = 0, bi = 0;
    for (let i = 0; i < n; i++) {
      const r = Math.abs(dx[i]) / (atol + rtol * Math.abs(xs[i]));
      if (r > best || !Number.isFinite(r)) {
        best = r;
        bi = i;
        if (!Number.isFinite(r)) break;
      }
    }
    return bi;
  };

  const settleModes = (t: number, xs: Float64Array) => {
    if (!nEv) return;
    for (let e = 0; e < nEv; e++) modes[evLimits[e]] = LimitMode.FREE;
    for (let it = 0; it <= nEv + 1; it++) {
      safeLimits(t, xs, pre, lo, hi);
      let changed = false;
      for (let e = 0; e < nEv; e++) {
        const k = evLimits[e];
        const m = modeFor(pre[k], lo[k], hi[k]);
        if (m !== modes[k]) {
          modes[k] = m;
          changed = true;
        }
      }
      if (!changed) break;
    }
  };
  const safeLimits = (t: number, xs: Float64Array, a: Float64Array, b: Float64Array, cc: Float64Array) => {
    ev.limitValues(t, xs, a, b, cc);
  };
  const noteModes = (t: number) => {
    for (let k = 0; k < nLim; k++) {
      const at = isSampledLimit[k] ? sampledAt[k] === 1 : modes[k] !== LimitMode.FREE;
      if (at && Number.isNaN(atLimitSince[k])) atLimitSince[k] = t;
      if (!at && !Number.isNaN(atLimitSince[k])) {
        if (t > atLimitSince[k]) atLimit[k].push([atLimitSince[k], t]);
        atLimitSince[k] = NaN;
      }
    }
  };

  // recovery: deviation of plant states from the operating point over the last tenth
  const plantStates = d.plantStates;
  const nPlant = plantStates.length;
  const opX = d.opX;
  const maxDev = d.maxDev; // largest distance over the last tenth
  const maxDist = d.maxDist; // largest distance over the run
  maxDev.fill(0);
  maxDist.fill(0);
  const tTail = 0.9 * tEnd;
  const noteTail = (t: number, xs: Float64Array) => {
    const tail = t >= tTail;
    for (let q = 0; q < nPlant; q++) {
      const i = plantStates[q];
      const d = Math.abs(xs[i] - opX[i]);
      if (d > maxDist[i]) maxDist[i] = d;
      if (tail && d > maxDev[i]) maxDev[i] = d;
    }
  };
  // IAE of a signal is taken from its unit's zero: ∫|y − offset| dt (degC signals in degC·s)
  const off = d.off;

  // ---- one interval [a, b] of a step, with its dense output ----
  /**
   * Grid points in (a, b] of a step; one exactly on a breakpoint or sample instant waits for the
   * values after it. (Its own function, apart from the IAE of processInterval, so that the
   * compiler inlines the dense output, the traced values and the writes into this loop.)
   */
  const gridPoints = (view: StepView, b: number, xb: Float64Array, deferB: boolean) => {
    while (nextGrid < points && gridT[nextGrid] <= b) {
      const tg = gridT[nextGrid];
      if (deferB && tg >= b) break;
      if (tg >= b) {
        ev.traced(tc(b), xb, trBuf);
      } else {
        view.dense(tg, xq);
        ev.traced(tg, xq, trBuf);
      }
      d.writeGrid(nextGrid, trBuf);
      nextGrid++;
    }
  };
  const processInterval = (view: StepView, a: number, b: number, xb: Float64Array) => {
    const deferB = b === segmentStop && b < tEnd;
    if (nextGrid < points && gridT[nextGrid] <= b) gridPoints(view, b, xb, deferB);
    // IAE by 3-point Gauss–Legendre on the dense output; split where a signal changes sign
    const h = b - a;
    ev.traced(tc(b), xb, trBuf);
    if (h > 0 && nTr > 0) {
      view.dense(a + GL3_N0 * h, xq);
      ev.traced(a + GL3_N0 * h, xq, trNode0);
      view.dense(a + GL3_N1 * h, xq);
      ev.traced(a + GL3_N1 * h, xq, trNode1);
      view.dense(a + GL3_N2 * h, xq);
      ev.traced(a + GL3_N2 * h, xq, trNode2);
      for (let j = 0; j < nTr; j++) {
        if (sameAs[j] !== j) continue; // its IAE is that of the signal it repeats
        const o = off[j];
        const y0 = trPrev[j] - o, y1 = trNode0[j] - o, y2 = trNode1[j] - o, y3 = trNode2[j] - o, y4 = trBuf[j] - o;
        if (timeDep[j]) {
          iae[j] += iaeTimeDependent(view, j, a, b);
        } else if ((y0 * y1 < 0 || y1 * y2 < 0 || y2 * y3 < 0 || y3 * y4 < 0) && !negligible(iae[j], h, y0, y1, y2, y3, y4)) {
          iae[j] += iaeSplit(view, j, a, b, y0, y1, y2, y3, y4);
        } else {
          iae[j] += h * (GL3_WEIGHTS[0] * Math.abs(y1) + GL3_WEIGHTS[1] * Math.abs(y2) + GL3_WEIGHTS[2] * Math.abs(y3));
        }
      }
    }
    if (!deferB) d.recordSample(b, trBuf);
    for (let j = 0; j < nTr; j++) trPrev[j] = trBuf[j];
    noteTail(b, xb);
  };
  /**
   * True when a step's whole contribution to an IAE is too small for a sign change in it to
   * matter: |y| on the step is within a few times its largest sampled value, so the plain
   * Gauss–Legendre rule is off by less than 4·h·max|y|, which here is below 0.01·rtol of the
   * integral so far (the integration's own error in the IAE is of order rtol or more). A signal
   * settled at zero crosses it at every wiggle of the size of the tolerances.
   */
  const negligible = (sofar: number, h: number, y0: number, y1: number, y2: number, y3: number, y4: number): boolean => {
    const m = Math.max(Math.abs(y0), Math.abs(y1), Math.abs(y2), Math.abs(y3), Math.abs(y4));
    return 4 * h * m <= 0.01 * rtol * sofar;
  };
  /** After a breakpoint or sample instant: the values there (right-continuous) for the grid and the metrics. */
  const afterStop = (ts: number, xs: Float64Array) => {
    ev.traced(ts, xs, trBuf);
    while (nextGrid < points && gridT[nextGrid] <= ts) {
      d.writeGrid(nextGrid, trBuf);
      nextGrid++;
    }
    d.recordSample(ts, trBuf);
    for (let j = 0; j < nTr; j++) trPrev[j] = trBuf[j];
  };
  const trOne = d.trOne;
  const timeDep = c.tracedTimeDependent;
  const sameAs = c.tracedSameAs;
  /** ∫|y_j| for a signal that varies with time directly (the step size does not follow it): bisect until 3-point rules agree. */
  const gl3 = (view: StepView, j: number, a: number, b: number) => {
    const h = b - a;
    let s = 0;
    for (let q = 0; q < 3; q++) s += GL3_WEIGHTS[q] * Math.abs(sig(view, j, a + GL3_NODES[q] * h));
    return s * h;
  };
  /** Cuts [a, b] where the signal changes sign on a 64-point scan, then integrates each piece adaptively. */
  const iaeTimeDependent = (view: StepView, j: number, a: number, b: number): number => {
    const K = 64;
    let total = 0, ta = a, va = sig(view, j, a), from = a;
    for (let k = 1; k <= K; k++) {
      const tb = k === K ? b : a + ((b - a) * k) / K;
      const vb = sig(view, j, tb);
      if (va * vb < 0) {
        sigView = view;
        sigJ = j;
        sigSign = Math.sign(va);
        const r = locateRoot(signedSig, ta, Math.abs(va), tb, -Math.abs(vb));
        if (r > from) total += iaeAdaptive(view, j, from, r, 0);
        from = r;
      }
      ta = tb;
      va = vb;
    }
    if (b > from) total += iaeAdaptive(view, j, from, b, 0);
    return total;
  };
  const iaeAdaptive = (view: StepView, j: number, a: number, b: number, depth: number, whole = gl3(view, j, a, b)): number => {
    const m = 0.5 * (a + b);
    const left = gl3(view, j, a, m), right = gl3(view, j, m, b);
    if (depth >= 14 || Math.abs(left + right - whole) <= 1e-12 * (b - a) + rtol * 1e-3 * Math.abs(left + right)) return left + right;
    return iaeAdaptive(view, j, a, m, depth + 1, left) + iaeAdaptive(view, j, m, b, depth + 1, right);
  };
  let sigView: StepView | undefined, sigJ = 0, sigSign = 1;
  const signedSig = (t: number) => sigSign * sig(sigView!, sigJ, t);
  const sig = (view: StepView, j: number, t: number) => {
    view.dense(t, xq);
    ev.traced(tc(t), xq, trOne);
    return trOne[j] - off[j];
  };
  /**
   * ∫|y_j| over [a, b] when y_j changes sign between the five known values (ends and Gauss nodes):
   * cut at each sign change and integrate the pieces by 3-point Gauss–Legendre. Both the cuts
   * and the values at the pieces' Gauss nodes come from the quartic through the five values (see
   * quarticRoot): for a signal linear in the states that quartic is the dense output itself, for
   * any other it is off by the order of the dense output's own error. So a split costs no further
   * evaluations of the loop. No arrays or closures per call.
   */
  const iaeTs = d.iaeTs, iaeYs = d.iaeYs, iaeCuts = d.iaeCuts, iaeC = d.iaeC;
  const iaeSplit = (view: StepView, j: number, a: number, b: number, y0: number, y1: number, y2: number, y3: number, y4: number): number => {
    const h = b - a;
    iaeTs[0] = a;
    iaeTs[1] = a + GL3_NODES[0] * h;
    iaeTs[2] = a + GL3_NODES[1] * h;
    iaeTs[3] = a + GL3_NODES[2] * h;
    iaeTs[4] = b;
    iaeYs[0] = y0;
    iaeYs[1] = y1;
    iaeYs[2] = y2;
    iaeYs[3] = y3;
    iaeYs[4] = y4;
    quarticPowers(iaeYs, iaeC);
    let nc = 0;
    iaeCuts[nc++] = a;
    for (let k = 0; k < 4; k++) {
      const ya = iaeYs[k], yb = iaeYs[k + 1];
      if (ya * yb < 0) iaeCuts[nc++] = a + h * powerQuarticRoot(iaeC, iaeYs, k);
    }
    iaeCuts[nc++] = b;
    let total = 0;
    for (let k = 0; k + 1 < nc; k++) {
      const u = iaeCuts[k], hh = iaeCuts[k + 1] - u;
      if (hh <= 0) continue;
      // the piece's Gauss nodes on the same quartic (θ of the step)
      const q0 = (u + GL3_NODES[0] * hh - a) / h, q1 = (u + GL3_NODES[1] * hh - a) / h, q2 = (u + GL3_NODES[2] * hh - a) / h;
      total += hh * (GL3_WEIGHTS[0] * Math.abs(powerQuartic(iaeC, q0)) + GL3_WEIGHTS[1] * Math.abs(powerQuartic(iaeC, q1)) + GL3_WEIGHTS[2] * Math.abs(powerQuartic(iaeC, q2)));
    }
    return total;
  };
  // ---- stops: breakpoints and sample instants ----
  const bps = ev.breakpoints().filter((t) => t > 0 && t < tEnd);
  const nSampled = c.sampled.length;
  const periods = new Float64Array(nSampled);
  for (let k = 0; k < nSampled; k++) periods[k] = c.periodOf(k, input.p);
  const nextSample = new Float64Array(nSampled).fill(1);
  let bpi = 0;
  const nextStop = (t: number): number => {
    let s = tEnd;
    while (bpi < bps.length && bps[bpi] <= t * (1 + 1e-15) + 1e-300) bpi++;
    if (bpi < bps.length) s = Math.min(s, bps[bpi]);
    for (let k = 0; k < nSampled; k++) {
      const T = periods[k];
      while (nextSample[k] * T <= t + 1e-12 * Math.max(1, t)) nextSample[k]++;
      s = Math.min(s, nextSample[k] * T);
    }
    return s;
  };
  const sampleDue = (t: number) => {
    for (let k = 0; k < nSampled; k++) {
      const T = periods[k];
      const j = Math.round(t / T);
      if (Math.abs(j * T - t) <= 1e-12 * Math.max(1, t)) ev.sample(k, t, x);
    }
    const sl = ev.sampledLimits;
    for (let k = 0; k < nLim; k++) if (isSampledLimit[k]) sampledAt[k] = sl.pre[k] > sl.hi[k] || sl.pre[k] < sl.lo[k] ? 1 : 0;
  };

  // ---- start ----
  let t = 0;
  let stopped: 'cancel' | 'budget' | null = null;
  let eventAt = NaN, eventLimit = -1;
  const xEvent = d.xEvent;
  try {
    sampleDue(0);
    settleModes(0, x);
    noteModes(0);
    ev.traced(0, x, trBuf);
  } catch (e) {
    error = e instanceof AlgebraicLoopFailure ? algError(e, c) : { code: 'LW701', message: `the loop cannot be evaluated at t = 0 s: ${(e as Error).message}`, time: 0 };
  }
  if (!error) {
    for (let j = 0; j < nTr; j++) if (!Number.isFinite(trBuf[j])) {
      error = { code: 'LW701', message: `${traced[j].name} is ${trBuf[j]} at the start (t = 0 s)`, time: 0, state: stateName(fastestState(0, x)) };
      break;
    }
  }
  if (!error) {
    d.writeGrid(0, trBuf);
    nextGrid = 1;
    for (let j = 0; j < nTr; j++) trPrev[j] = trBuf[j];
    noteTail(0, x);
  }

  /** Event function of limit gK on the dense output of step gView. */
  let gView: StepView | undefined, gK = 0;
  const g = (tq: number) => {
    gView!.dense(tq, xq);
    ev.limitValues(tc(tq), xq, pre2, lo2, hi2);
    return eventValue(modes[gK], pre2[gK], lo2[gK], hi2[gK]);
  };
  let clockSteps = 0;
  const onStep = (view: StepView): 'continue' | 'stop' => {
    if (cancel?.cancelled) {
      stopped = 'cancel';
      processInterval(view, view.tPrev, view.t, view.x);
      return 'stop';
    }
    // the clock is read on the first step and every 8th after it
    if ((++clockSteps & 7) === 1 && now() - started > budget) {
      stopped = 'budget';
      processInterval(view, view.tPrev, view.t, view.x);
      return 'stop';
    }
    if (nEv) {
      ev.limitValues(tc(view.t), view.x, pre, lo, hi);
      let tFirst = Infinity, kFirst = -1;
      for (let e = 0; e < nEv; e++) {
        const k = evLimits[e];
        const gEnd = eventValue(modes[k], pre[k], lo[k], hi[k]);
        if (gEnd < -hysteresis(lo[k], hi[k])) {
          gView = view;
          gK = k;
          const ga = Math.max(0, g(view.tPrev));
          const r = ga === 0 ? view.tPrev : locateRoot(g, view.tPrev, ga, view.t, gEnd);
          if (r < tFirst) {
            tFirst = r;
            kFirst = k;
          }
        }
      }
      if (kFirst >= 0) {
        eventAt = tFirst;
        eventLimit = kFirst;
        if (tFirst >= view.t) xEvent.set(view.x);
        else view.dense(tFirst, xEvent);
        processInterval(view, view.tPrev, tFirst, xEvent);
        return 'stop';
      }
    }
    processInterval(view, view.tPrev, view.t, view.x);
    return 'continue';
  };

  let h0: number | undefined;
  let events = 0;
  let segmentStop = NaN;
  const maxEvents = 100000;
  while (!error && t < tEnd) {
    const stop = nextStop(t);
    segmentStop = stop;
    eventAt = NaN;
    eventLimit = -1;
    let res: SegmentResult;
    d.tCap = stop < tEnd ? stop : Infinity;
    d.tBelow = stop < tEnd ? prevDown(stop) : Infinity;
    try {
      res = integrator.integrate(t, x, stop, onStep, h0);
    } catch (e) {
      d.tCap = d.tBelow = Infinity;
      error = { code: 'LW701', message: `the run failed at t = ${fmtTime(t)}: ${(e as Error).message}`, time: t };
      break;
    }
    d.tCap = d.tBelow = Infinity;
    if (res.status === 'failed') {
      error = failureError(res, c, d.algFailure, method, integrator.stats.steps, t, fastestState, ev.jac);
      break;
    }
    if (stopped) {
      const ft = res.t;
      const st = stateName(fastestState(ft, res.x));
      error = stopped === 'cancel'
        ? { code: 'LW705', message: `run cancelled at t = ${fmtTime(ft)} (while ${st ?? 'the loop'} was being integrated)`, time: ft, state: st }
        : { code: 'LW704', message: `run stopped after ${Math.round(now() - started)} ms at t = ${fmtTime(ft)} of ${fmtTime(tEnd)}: the time budget is ${budget} ms; the fastest-changing state is ${st}`, time: ft, state: st };
      x.set(res.x);
      t = ft;
      break;
    }
    // a limit event on the stop itself is handled with the stop (modes settled for the values after it)
    const eventOnStop = eventLimit >= 0 && eventAt >= stop && stop < tEnd;
    if (eventLimit >= 0 && !eventOnStop) {
      t = eventAt;
      x.set(xEvent);
      safeLimits(t, x, pre, lo, hi);
      modes[eventLimit] = nextMode(modes[eventLimit], pre[eventLimit], lo[eventLimit], hi[eventLimit]);
      noteModes(t);
      h0 = res.hNext;
      if (++events > maxEvents) {
        const st = c.limits.find((l) => l.index === eventLimit)?.qualified;
        error = { code: 'LW703', message: `the limit on ${st} switched more than ${maxEvents} times by t = ${fmtTime(t)}: the loop chatters at the limit`, time: t, state: stateName(fastestState(t, x)) };
      }
      continue;
    }
    if (eventOnStop) {
      t = stop;
      x.set(xEvent);
    } else {
      t = res.t;
      x.set(res.x);
    }
    if (t >= tEnd) break;
    // a breakpoint or a sample instant
    try {
      sampleDue(t);
      settleModes(t, x);
    } catch (e) {
      if (e instanceof AlgebraicLoopFailure) error = algError(e, c);
      else error = { code: 'LW701', message: `evaluation failed at t = ${fmtTime(t)}: ${(e as Error).message}`, time: t };
      break;
    }
    noteModes(t);
    afterStop(t, x);
    h0 = undefined;
  }
  noteModes(Math.min(t, tEnd));
  for (let k = 0; k < nLim; k++) if (!Number.isNaN(atLimitSince[k]) && t > atLimitSince[k]) atLimit[k].push([atLimitSince[k], t]);

  // grid points not reached (failed runs) stay NaN
  if (nextGrid < points) d.unreached(nextGrid);

  for (let j = 0; j < nTr; j++) if (sameAs[j] !== j) iae[j] = iae[sameAs[j]];
  const s = integrator.stats;
  const stats: SolverStats = { steps: s.steps, rejected: s.rejected, evaluations: s.evaluations, jacobians: s.jacobians, ms: now() - started };
  const nMerged = d.nMerged;
  return assemble(d, spec, input, nMerged, atLimit, stats, error, { x, maxDev, maxDist, plantStates, opX, x0: input.x0, atol, complete: !error });
}

function algError(e: AlgebraicLoopFailure, c: Compiled): RunError {
  return {
    code: 'LW706',
    message: `the algebraic loop ${e.loopText} did not converge at t = ${fmtTime(e.time)}: residual ${e.residual.toExponential(3)} after Newton's iteration`,
    time: e.time,
    state: c.algebraicLoops[0]?.[0],
  };
}

function failureError(
  res: SegmentResult,
  c: Compiled,
  alg: AlgebraicLoopFailure | undefined,
  method: IntegratorMethod,
  steps: number,
  tStart: number,
  fastest: (t: number, x: Float64Array) => number,
  jac: (t: number, x: Float64Array, J: Float64Array) => void,
): RunError {
  const f = res.failure!;
  if (alg) return algError(alg, c);
  const comp = f.component !== undefined && f.component >= 0 && f.component < c.n ? f.component : fastest(f.t, res.x);
  const st = c.states[comp]?.qualified;
  const at = fmtTime(f.t);
  switch (f.reason) {
    case 'non-finite':
      return { code: 'LW701', message: `${st} is no longer finite at t = ${at} (${f.message}); check for division by zero, a square root or logarithm of a negative value, or a growing state`, time: f.t, state: st };
    case 'step-underflow':
      return { code: 'LW702', message: `the step size became too small at t = ${at} while integrating ${st}: the solution may blow up or be discontinuous there`, time: f.t, state: st };
    case 'too-many-steps': {
      let hint = '';
      if (method !== 'stiff' && looksStiff(c.n, jac, f.t, res.x, (f.t - tStart) / Math.max(1, steps))) hint = "; the loop looks stiff (fast and slow time constants together): try 'method = stiff' in the simulate options";
      return { code: 'LW703', message: `too many steps by t = ${at} (${steps} steps) while integrating ${st}${hint}`, time: f.t, state: st };
    }
    default:
      return { code: 'LW701', message: `the run failed at t = ${at} near ${st}: ${f.message}`, time: f.t, state: st };
  }
}

/** Stiff when the explicit method's stability bound (≈ 3.3/ρ(J)) is what holds the step down. */
function looksStiff(n: number, jac: (t: number, x: Float64Array, J: Float64Array) => void, t: number, x: Float64Array, hAvg: number): boolean {
  const J = new Float64Array(n * n);
  try {
    jac(t, x, J);
  } catch {
    return false;
  }
  let rho = 0;
  for (let i = 0; i < n; i++) {
    let s = 0;
    for (let j = 0; j < n; j++) s += Math.abs(J[i * n + j]);
    rho = Math.max(rho, s);
  }
  return rho > 0 && hAvg * rho < 20;
}

interface Tail {
  x: Float64Array;
  maxDev: Float64Array;
  maxDist: Float64Array;
  plantStates: number[];
  opX: Float64Array;
  x0: Float64Array;
  atol: number;
  complete: boolean;
}

function assemble(
  d: RunDriver,
  spec: RunSpec,
  input: RunInput,
  nMerged: number,
  atLimit: Array<Array<[number, number]>>,
  stats: SolverStats,
  error: RunError | undefined,
  tail: Tail,
): SampledRun {
  const c = d.c;
  const traced = c.traced;
  const nTr = traced.length;
  const points = d.gridT.length;
  const signals: Record<string, Float64Array> = {};
  const metrics: Record<string, SignalMetrics> = {};
  const atLim: Record<string, Array<[number, number]>> = {};
  const duration = spec.duration;
  const mt = d.mt.subarray(0, nMerged);
  const my: Float64Array[] = [];
  for (let j = 0; j < nTr; j++) {
    const o = d.rowOf[j] * d.mCap;
    my.push(d.my.subarray(o, o + nMerged));
  }
  // the grid and every shown signal were written in one buffer as the run went (writeGrid): a view each
  const buf = d.out;
  const t = buf.subarray(0, points);
  let at = points;
  // settling for the metrics' band of each row whose metrics are taken in SI, for the expects
  const settledRow = spec.expects.length ? new Map<number, { still: boolean; settling: number | null }>() : undefined;
  for (let j = 0; j < nTr; j++) {
    const tr = traced[j];
    if (!tr.shown) continue;
    signals[tr.name] = buf.subarray(at, at + points);
    at += points;
    // metrics in the signal's display unit, read straight from the merged SI samples
    const m = displayMetricsOf(mt, my[j], nMerged, tr, d.iae[j]);
    if (settledRow && tr.scale === 1 && tr.offset === 0) settledRow.set(d.rowOf[j], { still: m.overshoot === null, settling: m.settling });
    const sm: SignalMetrics = {
      initial: m.initial,
      final: m.final,
      peak: m.peak,
      rise: m.rise,
      overshoot: m.overshoot,
      settling: m.settling,
      iae: m.iae,
    };
    if (tr.limit !== undefined) {
      const iv = atLimit[tr.limit] ?? [];
      let sum = 0;
      for (let q = 0; q < iv.length; q++) sum += iv[q][1] - iv[q][0];
      sm.timeAtLimit = duration > 0 ? sum / duration : 0;
      atLim[tr.name] = iv.map(([a, b]) => [a, b]);
    }
    metrics[tr.name] = sm;
  }
  const ps = tail.plantStates;
  const nps = ps.length;
  const d0 = new Float64Array(nps), dMax = new Float64Array(nps), dTail = new Float64Array(nps);
  for (let q = 0; q < nps; q++) {
    const i = ps[q];
    d0[q] = Math.abs(tail.x0[i] - tail.opX[i]);
    dMax[q] = Math.max(tail.maxDist[i], d0[q]);
    dTail[q] = tail.maxDev[i];
  }
  const recovered = tail.complete && recovers(d0, dMax, dTail, tail.atol);
  const settled = settledRow && settledRow.size ? traced.map((_, j) => settledRow.get(d.rowOf[j])) : undefined;
  const expects = spec.expects.length ? evaluateExpects(c, spec, { traced, t: mt, y: my, iae: d.iae, atLimit, duration, complete: tail.complete, settled }) : [];
  const result: SampledRun = {
    label: input.label,
    kind: input.kind,
    t,
    signals,
    atLimit: atLim,
    metrics,
    expects,
    recovered,
    stats,
  };
  if (input.sweep) result.sweep = input.sweep;
  if (error) result.error = error;
  return result;
}

export function display(si: number, tr: Pick<TracedSignal, 'scale' | 'offset'>): number {
  return (si - tr.offset) / tr.scale;
}

// ---------- the runs a loop asks for ----------

/**
 * The linear run of `compare linear`: provided by linear analysis (linearized closed loop at the
 * operating point, exact discretization); `simulate` calls it when one is registered.
 */
export type LinearRunner = (c: Compiled, spec: RunSpec, input: RunInput, opts: RunOptions) => RunResult | undefined;

let linearRunner: LinearRunner | undefined;

export function registerLinearRunner(f: LinearRunner | undefined): void {
  linearRunner = f;
}

export interface SimulateOptions extends RunOptions {
  /** Which runs: everything the loop asks for (default), only the nonlinear one, or with the linear one. */
  mode?: 'all' | 'simulate' | 'compare' | 'sweep';
  linear?: LinearRunner;
}

export interface PlannedRun extends RunInput {
  /** Index of the sweep and of its value, for sweep runs. */
  sweepIndex?: number;
  valueIndex?: number;
}

/** Every run the loop asks for, in order: nonlinear, then sweeps (the linear run is separate). */
export function plannedRuns(c: Compiled, spec: RunSpec, mode: SimulateOptions['mode'] = 'all'): { nonlinear: PlannedRun; sweeps: PlannedRun[] } {
  const nonlinear: PlannedRun = { label: 'nonlinear', kind: 'nonlinear', p: c.params, x0: c.start };
  const sweeps: PlannedRun[] = [];
  if (mode === 'all' || mode === 'sweep') {
    spec.sweeps.forEach((sw, si) => {
      sw.values.forEach((v, vi) => {
        const label = `${sw.target} = ${v.text}`;
        const sweep = { target: sw.target, value: v.display, unit: sw.unit.text, text: v.text };
        if (sw.kind === 'start') {
          sweeps.push({ label, kind: 'sweep', sweep, p: c.params, x0: c.startFor(c.params, new Map([[sw.target, v.si]])), sweepIndex: si, valueIndex: vi });
        } else {
          const r = c.makeParams(new Map([[sw.target, v.si]]));
          const p = r.ok ? r.p : c.params;
          sweeps.push({ label, kind: 'sweep', sweep, p, x0: c.startFor(p), sweepIndex: si, valueIndex: vi, ...(r.ok ? {} : { failed: r.message }) });
        }
      });
    });
  }
  return { nonlinear, sweeps };
}

/** runs[0] nonlinear from the start values; the linear run (compare linear); one run per sweep value. */
export function simulate(c: Compiled, opts: SimulateOptions = {}): RunResult[] {
  const spec = runSpec(c);
  const mode = opts.mode ?? 'all';
  const plan = plannedRuns(c, spec, mode);
  const runs: RunResult[] = [];
  runs.push(plainRun(runOnce(c, spec, plan.nonlinear, opts)));
  if ((mode === 'all' && spec.compare) || mode === 'compare') {
    const f = opts.linear ?? linearRunner;
    const lin = f?.(c, spec, { ...plan.nonlinear, label: 'linear', kind: 'linear' }, opts);
    if (lin) runs.push(lin);
  }
  for (const s of plan.sweeps) {
    if (opts.cancel?.cancelled) break;
    const failed = (s as PlannedRun & { failed?: string }).failed;
    runs.push(plainRun(failed ? failedRun(s, spec, { code: 'LW509', message: `${s.label}: ${failed}`, time: 0 }) : runOnce(c, spec, s, opts)));
  }
  return runs;
}

export function failedRun(input: RunInput, spec: RunSpec, error: RunError): SampledRun {
  const r: SampledRun = { label: input.label, kind: input.kind, t: new Float64Array(0), signals: {}, atLimit: {}, metrics: {}, expects: [], recovered: false, error, stats: { steps: 0, rejected: 0, evaluations: 0, jacobians: 0, ms: 0 } };
  if (input.sweep) r.sweep = input.sweep;
  void spec;
  return r;
}

/** The plain-JSON report of a loop's runs (CLI --json, the plot panel, HTML reports). */
export function buildReport(c: Compiled, runs: RunResult[], file?: string): LoopRunReport {
  const signals: SignalInfo[] = c.traced
    .filter((t) => t.shown)
    .map((t) => {
      const info: SignalInfo = { name: t.name, unit: t.unit, scale: t.scale, offset: t.offset, kind: t.kind === 'expr' ? 'signal' : t.kind, group: groupOf(t) };
      if (t.limit !== undefined) {
        const lim = c.limits.find((l) => l.index === t.limit);
        if (lim) {
          const inst = c.instances.find((i) => i.system.instance === lim.instance);
          if (inst) {
            const lo = new Float64Array(inst.system.limits.length), hi = new Float64Array(inst.system.limits.length);
            inst.system.limitBounds(c.params.subarray(inst.pOffset), lo, hi);
            info.limit = { lo: display(lo[lim.info.index], t), hi: display(hi[lim.info.index], t) };
          }
        }
      }
      if (t.description) info.description = t.description;
      return info;
    });
  const spec = runSpec(c);
  const report: LoopRunReport = { loop: c.name, signals, runs, warnings: spec.problems.slice() };
  if (file) report.file = file;
  return report;
}

/** Panel key: signals of the same unit share a panel; limited signals go with the actuators. */
function groupOf(t: TracedSignal): string {
  if (t.limit !== undefined) return 'actuator';
  return t.unit || 'value';
}
