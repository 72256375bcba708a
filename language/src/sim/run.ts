// The run driver: from a compiled loop to RunResults. One run integrates in segments: signal
// breakpoints (step and pulse edges, ramp starts) and sample instants end a segment exactly;
// limit switches are events located on the dense output of the step that crosses them, so no step
// straddles a corner. The uniform output grid, step-end samples, IAE (Gauss–Legendre on each
// step's dense output) and time at the limits are gathered inside the step callback. Guards end a
// run with a RunError that names the time and a state: non-finite values, step-size underflow,
// too many steps, the wall-clock budget, cancellation, a non-converging algebraic loop.

import type { Compiled } from '../model/compile';
import { AlgebraicLoopFailure } from '../model/loop';
import { LimitMode, type TracedSignal } from '../model/types';
import type { LoopRunReport, RunError, RunResult, SignalInfo, SignalMetrics, SolverStats } from '../protocol';
import { createIntegrator, type IntegratorMethod, type SegmentResult, type StepView } from './solver';
import { eventValue, hysteresis, locateRoot, modeFor, nextMode } from './events';
import { GL3_NODES, GL3_WEIGHTS, displayMetrics, recovers } from './metrics';
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

/** Samples of every traced signal: grid values (SI) and the ends of accepted steps, for metrics. */
interface Recorder {
  grid: Float64Array; // points × nTr
  /** Step-end (and post-breakpoint) samples: times and values, row-major nTr per sample; grown by doubling. */
  stepT: Float64Array;
  stepY: Float64Array;
  nStep: number;
  iae: Float64Array;
}

/** Grid and step-end samples merged in time order, one array per traced signal. */
function mergedSamples(rec: Recorder, gridT: Float64Array, filled: number, nTr: number): { t: Float64Array; y: Float64Array[] } {
  const cap = filled + rec.nStep;
  const t = new Float64Array(cap);
  const y = Array.from({ length: nTr }, () => new Float64Array(cap));
  let i = 0, k = 0, n = 0;
  while (i < filled || k < rec.nStep) {
    const useGrid = k >= rec.nStep || (i < filled && gridT[i] <= rec.stepT[k]);
    if (useGrid) {
      if (k < rec.nStep && gridT[i] === rec.stepT[k]) k++;
      t[n] = gridT[i];
      for (let j = 0; j < nTr; j++) y[j][n] = rec.grid[i * nTr + j];
      i++;
    } else {
      t[n] = rec.stepT[k];
      for (let j = 0; j < nTr; j++) y[j][n] = rec.stepY[k * nTr + j];
      k++;
    }
    n++;
  }
  return { t: t.subarray(0, n), y: y.map((a) => a.subarray(0, n)) };
}

/** The largest double below v (v finite and positive). */
function prevDown(v: number): number {
  if (v === 0) return -Number.MIN_VALUE;
  const b = new Float64Array([v]);
  const u = new BigInt64Array(b.buffer);
  u[0] += v > 0 ? -1n : 1n;
  return b[0];
}

const now = (): number => (typeof performance !== 'undefined' ? performance.now() : Date.now());

export function fmtTime(t: number): string {
  return `${Number(t.toPrecision(6))} s`;
}

/** One run of a compiled loop. Never throws. */
export function runOnce(c: Compiled, spec: RunSpec, input: RunInput, opts: RunOptions = {}): RunResult {
  const started = now();
  const n = c.n;
  const ev = c.evaluator(input.p);
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
  const nLim = c.limits.length;
  const evLimits = c.limits.filter((l) => !l.sampled).map((l) => l.index);
  const pre = new Float64Array(nLim), lo = new Float64Array(nLim), hi = new Float64Array(nLim);
  const pre2 = new Float64Array(nLim), lo2 = new Float64Array(nLim), hi2 = new Float64Array(nLim);
  const modes = ev.modes;
  for (const k of evLimits) modes[k] = LimitMode.FREE;
  // limits inside sampled controllers: at their limit from one sample instant to the next
  const isSampledLimit = new Uint8Array(nLim);
  for (const l of c.limits) if (l.sampled) isSampledLimit[l.index] = 1;
  const sampledAt = new Uint8Array(nLim);
  const atLimitSince = new Float64Array(nLim).fill(NaN);
  const atLimit: Array<Array<[number, number]>> = Array.from({ length: nLim }, () => []);

  const x = Float64Array.from(input.x0);
  const xq = new Float64Array(n);
  const trBuf = new Float64Array(nTr);
  const trPrev = new Float64Array(nTr);
  const trNode = [new Float64Array(nTr), new Float64Array(nTr), new Float64Array(nTr)];
  const rec: Recorder = { grid: new Float64Array(points * nTr), stepT: new Float64Array(256), stepY: new Float64Array(256 * nTr), nStep: 0, iae: new Float64Array(nTr) };
  const gridT = new Float64Array(points);
  for (let i = 0; i < points; i++) gridT[i] = i === points - 1 ? tEnd : (tEnd * i) / (points - 1);
  let nextGrid = 0;

  // Within a segment that ends on a breakpoint b, every evaluation at t ≥ b takes the left limit
  // of the signals (time just below b): the last stage of the step that lands on b, the dense
  // output and the event functions there all belong to the segment before the edge. The values
  // after the edge (right-continuous) are taken once the segment has ended, with the limit modes
  // settled for them.
  let tCap = Infinity, tBelow = Infinity;
  const tc = (tt: number): number => (tt < tCap ? tt : tBelow);

  let algFailure: AlgebraicLoopFailure | undefined;
  const rhs0 = c.algebraicLoops.length
    ? (t: number, xx: Float64Array, dx: Float64Array) => {
        try {
          ev.rhs(t, xx, dx);
        } catch (e) {
          if (e instanceof AlgebraicLoopFailure) algFailure = e;
          throw e;
        }
      }
    : ev.rhs;
  const rhs = (tt: number, xx: Float64Array, dx: Float64Array) => rhs0(tt < tCap ? tt : tBelow, xx, dx);
  const jac = (tt: number, xx: Float64Array, J: Float64Array) => ev.jac(tt < tCap ? tt : tBelow, xx, J);
  const integrator = createIntegrator(method, { n, f: rhs, jac }, { rtol, atol, maxSteps: 200000 });

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
    if (!evLimits.length) return;
    for (const k of evLimits) modes[k] = LimitMode.FREE;
    for (let it = 0; it <= evLimits.length + 1; it++) {
      safeLimits(t, xs, pre, lo, hi);
      let changed = false;
      for (const k of evLimits) {
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

  const recordSample = (t: number, tr: Float64Array) => {
    if (rec.nStep === rec.stepT.length) {
      const T2 = new Float64Array(rec.stepT.length * 2), Y2 = new Float64Array(rec.stepY.length * 2);
      T2.set(rec.stepT);
      Y2.set(rec.stepY);
      rec.stepT = T2;
      rec.stepY = Y2;
    }
    const k = rec.nStep++;
    rec.stepT[k] = t;
    const Y = rec.stepY;
    for (let j = 0, o = k * nTr; j < nTr; j++) Y[o + j] = tr[j];
  };
  const writeGrid = (i: number, tr: Float64Array) => {
    const G = rec.grid;
    for (let j = 0, o = i * nTr; j < nTr; j++) G[o + j] = tr[j];
  };

  // recovery: deviation of plant states from the operating point over the last tenth
  const plantStates: number[] = [];
  const opX = new Float64Array(n);
  for (const inst of c.instances) {
    if (inst.system.kind !== 'plant') continue;
    const pt = c.around.get(inst.system.instance);
    for (let i = 0; i < inst.system.states.length; i++) {
      plantStates.push(inst.xOffset + i);
      opX[inst.xOffset + i] = pt && i < inst.system.declaredStates ? pt.x[i] : 0;
    }
  }
  const maxDev = new Float64Array(n); // largest distance over the last tenth
  const maxDist = new Float64Array(n); // largest distance over the run
  const tTail = 0.9 * tEnd;
  const noteTail = (t: number, xs: Float64Array) => {
    const tail = t >= tTail;
    for (const i of plantStates) {
      const d = Math.abs(xs[i] - opX[i]);
      if (d > maxDist[i]) maxDist[i] = d;
      if (tail && d > maxDev[i]) maxDev[i] = d;
    }
  };
  // IAE of a signal is taken from its unit's zero: ∫|y − offset| dt (degC signals in degC·s)
  const off = Float64Array.from(traced, (tr) => tr.offset);

  // ---- one interval [a, b] of a step, with its dense output ----
  const processInterval = (view: StepView, a: number, b: number, xb: Float64Array) => {
    // grid points in (a, b]; one exactly on a breakpoint or sample instant waits for the values after it
    const deferB = b === segmentStop && b < tEnd;
    while (nextGrid < points && gridT[nextGrid] <= b) {
      const tg = gridT[nextGrid];
      if (deferB && tg >= b) break;
      if (tg >= b) {
        ev.traced(tc(b), xb, trBuf);
      } else {
        view.dense(tg, xq);
        ev.traced(tg, xq, trBuf);
      }
      writeGrid(nextGrid, trBuf);
      nextGrid++;
    }
    // IAE by 3-point Gauss–Legendre on the dense output; split where a signal changes sign
    const h = b - a;
    ev.traced(tc(b), xb, trBuf);
    if (h > 0 && nTr > 0) {
      for (let q = 0; q < 3; q++) {
        view.dense(a + GL3_NODES[q] * h, xq);
        ev.traced(a + GL3_NODES[q] * h, xq, trNode[q]);
      }
      for (let j = 0; j < nTr; j++) {
        const o = off[j];
        const y0 = trPrev[j] - o, y1 = trNode[0][j] - o, y2 = trNode[1][j] - o, y3 = trNode[2][j] - o, y4 = trBuf[j] - o;
        if (timeDep[j]) {
          rec.iae[j] += iaeTimeDependent(view, j, a, b);
        } else if (y0 * y1 < 0 || y1 * y2 < 0 || y2 * y3 < 0 || y3 * y4 < 0) {
          rec.iae[j] += iaeSplit(view, j, a, b, y0, y1, y2, y3, y4);
        } else {
          rec.iae[j] += h * (GL3_WEIGHTS[0] * Math.abs(y1) + GL3_WEIGHTS[1] * Math.abs(y2) + GL3_WEIGHTS[2] * Math.abs(y3));
        }
      }
    }
    if (!deferB) recordSample(b, trBuf);
    trPrev.set(trBuf);
    noteTail(b, xb);
  };
  /** After a breakpoint or sample instant: the values there (right-continuous) for the grid and the metrics. */
  const afterStop = (ts: number, xs: Float64Array) => {
    ev.traced(ts, xs, trBuf);
    while (nextGrid < points && gridT[nextGrid] <= ts) {
      writeGrid(nextGrid, trBuf);
      nextGrid++;
    }
    recordSample(ts, trBuf);
    trPrev.set(trBuf);
  };
  const trOne = new Float64Array(nTr);
  const timeDep = c.tracedTimeDependent;
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
        const s0 = Math.sign(va);
        const r = locateRoot((t) => s0 * sig(view, j, t), ta, Math.abs(va), tb, -Math.abs(vb));
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
  const sig = (view: StepView, j: number, t: number) => {
    view.dense(t, xq);
    ev.traced(tc(t), xq, trOne);
    return trOne[j] - off[j];
  };
  /**
   * ∫|y_j| over [a, b] when y_j changes sign between the five known values (ends and Gauss nodes):
   * cut at each sign change (located on the dense output) and integrate the pieces by 3-point
   * Gauss–Legendre. No arrays or closures per call.
   */
  const iaeTs = new Float64Array(5), iaeYs = new Float64Array(5), iaeCuts = new Float64Array(6);
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
    let nc = 0;
    iaeCuts[nc++] = a;
    for (let k = 0; k < 4; k++) {
      const ya = iaeYs[k], yb = iaeYs[k + 1];
      if (ya * yb < 0) iaeCuts[nc++] = signRoot(view, j, iaeTs[k], ya, iaeTs[k + 1], yb);
    }
    iaeCuts[nc++] = b;
    let total = 0;
    for (let k = 0; k + 1 < nc; k++) {
      const u = iaeCuts[k], hh = iaeCuts[k + 1] - u;
      if (hh <= 0) continue;
      total += hh * (GL3_WEIGHTS[0] * Math.abs(sig(view, j, u + GL3_NODES[0] * hh)) + GL3_WEIGHTS[1] * Math.abs(sig(view, j, u + GL3_NODES[1] * hh)) + GL3_WEIGHTS[2] * Math.abs(sig(view, j, u + GL3_NODES[2] * hh)));
    }
    return total;
  };
  /** Sign change of y_j in [ta, tb] (ya·yb < 0) on the dense output: Illinois regula falsi. */
  const signRoot = (view: StepView, j: number, ta: number, ya: number, tb: number, yb: number): number => {
    const tolT = 1e-13 * Math.max(1, Math.abs(ta), Math.abs(tb));
    let side = 0;
    for (let it = 0; it < 60 && tb - ta > tolT; it++) {
      let tm = (ta * yb - tb * ya) / (yb - ya);
      if (!(tm > ta && tm < tb)) tm = 0.5 * (ta + tb);
      const ym = sig(view, j, tm);
      if (ym === 0) return tm;
      if (ym * ya < 0) {
        tb = tm;
        yb = ym;
        if (side === -1) ya /= 2;
        side = -1;
      } else {
        ta = tm;
        ya = ym;
        if (side === 1) yb /= 2;
        side = 1;
      }
      if (Math.abs(ym) <= 1e-14 * (Math.abs(ya) + Math.abs(yb))) return tm;
    }
    return 0.5 * (ta + tb);
  };

  // ---- stops: breakpoints and sample instants ----
  const bps = ev.breakpoints().filter((t) => t > 0 && t < tEnd);
  const periods = c.sampled.map((_, k) => c.periodOf(k, input.p));
  const nextSample = periods.map(() => 1);
  let bpi = 0;
  const nextStop = (t: number): number => {
    let s = tEnd;
    while (bpi < bps.length && bps[bpi] <= t * (1 + 1e-15) + 1e-300) bpi++;
    if (bpi < bps.length) s = Math.min(s, bps[bpi]);
    periods.forEach((T, k) => {
      while (nextSample[k] * T <= t + 1e-12 * Math.max(1, t)) nextSample[k]++;
      s = Math.min(s, nextSample[k] * T);
    });
    return s;
  };
  const sampleDue = (t: number) => {
    periods.forEach((T, k) => {
      const j = Math.round(t / T);
      if (Math.abs(j * T - t) <= 1e-12 * Math.max(1, t)) ev.sample(k, t, x);
    });
    const sl = ev.sampledLimits;
    for (let k = 0; k < nLim; k++) if (isSampledLimit[k]) sampledAt[k] = sl.pre[k] > sl.hi[k] || sl.pre[k] < sl.lo[k] ? 1 : 0;
  };

  // ---- start ----
  let t = 0;
  let stopped: 'cancel' | 'budget' | null = null;
  let eventAt = NaN, eventLimit = -1;
  const xEvent = new Float64Array(n);
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
    writeGrid(0, trBuf);
    nextGrid = 1;
    trPrev.set(trBuf);
    noteTail(0, x);
  }

  const onStep = (view: StepView): 'continue' | 'stop' => {
    if (cancel?.cancelled) {
      stopped = 'cancel';
      processInterval(view, view.tPrev, view.t, view.x);
      return 'stop';
    }
    if (now() - started > budget) {
      stopped = 'budget';
      processInterval(view, view.tPrev, view.t, view.x);
      return 'stop';
    }
    if (evLimits.length) {
      ev.limitValues(tc(view.t), view.x, pre, lo, hi);
      let tFirst = Infinity, kFirst = -1;
      for (const k of evLimits) {
        const gEnd = eventValue(modes[k], pre[k], lo[k], hi[k]);
        if (gEnd < -hysteresis(lo[k], hi[k])) {
          const g = (tq: number) => {
            view.dense(tq, xq);
            ev.limitValues(tc(tq), xq, pre2, lo2, hi2);
            return eventValue(modes[k], pre2[k], lo2[k], hi2[k]);
          };
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
    tCap = stop < tEnd ? stop : Infinity;
    tBelow = stop < tEnd ? prevDown(stop) : Infinity;
    try {
      res = integrator.integrate(t, x, stop, onStep, h0);
    } catch (e) {
      tCap = tBelow = Infinity;
      error = { code: 'LW701', message: `the run failed at t = ${fmtTime(t)}: ${(e as Error).message}`, time: t };
      break;
    }
    tCap = tBelow = Infinity;
    if (res.status === 'failed') {
      error = failureError(res, c, algFailure, method, integrator.stats.steps, t, fastestState, ev.jac);
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
  for (let i = nextGrid; i < points; i++) for (let j = 0; j < nTr; j++) rec.grid[i * nTr + j] = NaN;

  const s = integrator.stats;
  const stats: SolverStats = { steps: s.steps, rejected: s.rejected, evaluations: s.evaluations, jacobians: s.jacobians, ms: now() - started };
  const merged = mergedSamples(rec, gridT, nextGrid, nTr);
  return assemble(c, spec, input, gridT, rec, merged, atLimit, stats, error, { x, maxDev, maxDist, plantStates, opX, x0: input.x0, atol, complete: !error });
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
  c: Compiled,
  spec: RunSpec,
  input: RunInput,
  gridT: Float64Array,
  rec: Recorder,
  merged: { t: Float64Array; y: Float64Array[] },
  atLimit: Array<Array<[number, number]>>,
  stats: SolverStats,
  error: RunError | undefined,
  tail: Tail,
): RunResult {
  const traced = c.traced;
  const nTr = traced.length;
  const points = gridT.length;
  const signals: Record<string, number[]> = {};
  const metrics: Record<string, SignalMetrics> = {};
  const atLim: Record<string, Array<[number, number]>> = {};
  const duration = spec.duration;
  traced.forEach((tr, j) => {
    if (!tr.shown) return;
    const col = new Array<number>(points);
    for (let i = 0; i < points; i++) col[i] = display(rec.grid[i * nTr + j], tr);
    signals[tr.name] = col;
    const m = displayMetrics({ t: merged.t, y: merged.y[j] }, tr, rec.iae[j]);
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
      sm.timeAtLimit = duration > 0 ? iv.reduce((s, [a, b]) => s + (b - a), 0) / duration : 0;
      atLim[tr.name] = iv.map(([a, b]) => [a, b]);
    }
    metrics[tr.name] = sm;
  });
  const ps = tail.plantStates;
  const d0 = Float64Array.from(ps, (i) => Math.abs(tail.x0[i] - tail.opX[i]));
  const recovered = tail.complete && recovers(d0, Float64Array.from(ps, (i) => Math.max(tail.maxDist[i], d0[i])), Float64Array.from(ps, (i) => tail.maxDev[i]), tail.atol);
  const expects = evaluateExpects(c, spec, { traced, t: merged.t, y: merged.y, iae: rec.iae, atLimit, duration, complete: tail.complete });
  const result: RunResult = {
    label: input.label,
    kind: input.kind,
    t: Array.from(gridT),
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
  runs.push(runOnce(c, spec, plan.nonlinear, opts));
  if ((mode === 'all' && spec.compare) || mode === 'compare') {
    const f = opts.linear ?? linearRunner;
    const lin = f?.(c, spec, { ...plan.nonlinear, label: 'linear', kind: 'linear' }, opts);
    if (lin) runs.push(lin);
  }
  for (const s of plan.sweeps) {
    if (opts.cancel?.cancelled) break;
    const failed = (s as PlannedRun & { failed?: string }).failed;
    if (failed) runs.push(failedRun(s, spec, { code: 'LW509', message: `${s.label}: ${failed}`, time: 0 }));
    else runs.push(runOnce(c, spec, s, opts));
  }
  return runs;
}

export function failedRun(input: RunInput, spec: RunSpec, error: RunError): RunResult {
  const r: RunResult = { label: input.label, kind: input.kind, t: [], signals: {}, atLimit: {}, metrics: {}, expects: [], recovered: false, error, stats: { steps: 0, rejected: 0, evaluations: 0, jacobians: 0, ms: 0 } };
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
