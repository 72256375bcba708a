// The linear run of `compare linear`: the closed loop linearized at its operating point
// (loop-linear.ts), simulated in incremental variables δx = x − x*, δr = r − r(0) and shifted back
// to absolute units, on the same uniform grid as the nonlinear run.
//
//   linearRun(lin, grid, options?) → RunResult             kind 'linear', label 'linear'
//     lin      loopLinear(analysis, loopName)
//     grid     { t: uniform times (s), both ends included; x0?: absolute start (SI), default the
//                loop's start vector }
//     options  { label?, spec?: the run spec whose expects are checked on this run }
//   linearRunner(analysis) → LinearRunner                   for sim/run.ts:
//     simulate(compiled, { linear: linearRunner(analysis) })
//
// Exactness. Between two instants a < b the loop signals are taken as linear in t,
// δr(τ) = δr(a⁺) + (δr(b⁻) − δr(a⁺))(τ − a)/(b − a), and the step is the exact solution of
// δx' = A δx + B δr for such an input: with h = b − a,
//   δx(b) = Φ δx(a) + Γ0 δr(a⁺) + Γ1 (δr(b⁻) − δr(a⁺))/h,
// Φ, Γ0 and h·Γ1 read off one matrix exponential exp([[A, B, 0], [0, 0, I], [0, 0, 0]]·h) (Van Loan
// 1978; expm.ts, Higham 2005). Signal breakpoints (step and pulse edges, ramp starts) split the
// interval they fall in, so steps, pulses and ramps — piecewise linear in t — are followed
// exactly (a step is constant on each piece, the zero-order-hold special case). Sines are
// interpolated linearly between grid points: a second-order approximation whose error is
// O(h²·ω²) of the amplitude; refine the grid (`points`) to follow a fast sine closely.
// Outputs, inputs and signals are then y = y* + C δx + D δr, u = u* + Cu δx + Du δr.
// The linear model has no limits: `saturated()` measures 0 and nothing is reported at a limit.
// IAE is integrated by the trapezoid rule on the grid and the breakpoints, from the unit's zero
// (∫|y − offset| dt, as the nonlinear run does).

import type { Analysis } from '../analysis';
import type { Compiled } from '../model/compile';
import type { TracedSignal } from '../model/types';
import type { Expr } from '../syntax/ast';
import type { RunResult, SignalMetrics } from '../protocol';
import type { LinearRunner, RunInput } from '../sim/run';
import { displayMetrics, evaluateExpects, recovers } from '../sim/metrics';
import type { RunSpec } from '../sim/sweep';
import { expm } from './expm';
import { loopLinear, type LoopLinear } from './loop-linear';
import type { Mat } from './dense';

export interface LinearGrid {
  t: ArrayLike<number>;
  /** Absolute start (SI); default the loop's start vector. */
  x0?: Float64Array;
}

export interface LinearRunOptions {
  label?: string;
  spec?: RunSpec;
}

interface Propagator {
  Phi: Mat;
  G0: Mat;
  G1: Mat;
}

function propagator(A: Mat, B: Mat, h: number): Propagator | undefined {
  const n = A.length, m = B[0]?.length ?? 0;
  const N = n + 2 * m;
  const M: Mat = Array.from({ length: N }, () => new Array<number>(N).fill(0));
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) M[i][j] = A[i][j] * h;
    for (let j = 0; j < m; j++) M[i][n + j] = B[i][j] * h;
  }
  for (let j = 0; j < m; j++) M[n + j][n + m + j] = h;
  const E = expm(M);
  if (!E.ok) return undefined;
  const Phi = E.E.slice(0, n).map((r) => r.slice(0, n));
  const G0 = E.E.slice(0, n).map((r) => r.slice(n, n + m));
  // x(h) = Φ x0 + E12 w0 + E13 v0 with the slope v0 = (r1 − r0)/h: G1 = E13/h multiplies r1 − r0.
  const G1 = E.E.slice(0, n).map((r) => r.slice(n + m, n + 2 * m).map((v) => v / h));
  return { Phi, G0, G1 };
}

function step(P: Propagator, dx: Float64Array, r0: Float64Array, r1: Float64Array): Float64Array {
  const n = dx.length, m = r0.length;
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let s = 0;
    for (let j = 0; j < n; j++) s += P.Phi[i][j] * dx[j];
    for (let j = 0; j < m; j++) s += P.G0[i][j] * r0[j] + P.G1[i][j] * (r1[j] - r0[j]);
    out[i] = s;
  }
  return out;
}

const emptyStats = { steps: 0, rejected: 0, evaluations: 0, jacobians: 0, ms: 0 };

function failedRun(label: string, message: string): RunResult {
  return { label, kind: 'linear', t: [], signals: {}, atLimit: {}, metrics: {}, expects: [], recovered: false, error: { code: 'LW701', message, time: 0 }, stats: { ...emptyStats } };
}

/** Absolute values of every traced signal at one instant (SI). */
function tracedValues(lin: LoopLinear, traced: TracedSignal[], exprOf: (name: string) => Expr | undefined, t: number, dx: Float64Array, dr: Float64Array): Float64Array {
  const { closed: cl, Cu, Du } = lin;
  const n = lin.x.length;
  const x = new Float64Array(n);
  for (let i = 0; i < n; i++) x[i] = lin.x[i] + dx[i];
  const y = lin.y.map((v, i) => v + cl.C[i].reduce((s, c, j) => s + c * dx[j], 0) + (cl.D[i] ?? []).reduce((s, d, j) => s + d * dr[j], 0));
  const u = lin.u.map((v, i) => v + Cu[i].reduce((s, c, j) => s + c * dx[j], 0) + (Du[i] ?? []).reduce((s, d, j) => s + d * dr[j], 0));
  const sig = lin.signalsAt(t);
  const out = new Float64Array(traced.length);
  traced.forEach((tr, k) => {
    const name = tr.name;
    let i = lin.states.findIndex((v) => v.qualified === name);
    if (tr.kind === 'state' || tr.kind === 'controller') {
      out[k] = i >= 0 ? x[i] : NaN;
      return;
    }
    if (tr.kind === 'output' && (i = lin.outputs.findIndex((v) => v.qualified === name)) >= 0) {
      out[k] = y[i];
      return;
    }
    if (tr.kind === 'input' && (i = lin.inputs.findIndex((v) => v.qualified === name)) >= 0) {
      out[k] = u[i];
      return;
    }
    if (tr.kind === 'signal' && sig.has(name)) {
      out[k] = sig.get(name)!;
      return;
    }
    const e = exprOf(name);
    out[k] = e ? lin.evalExpr(e, { x, u, y }, t) : NaN;
  });
  return out;
}

export function linearRun(lin: LoopLinear, grid: LinearGrid, options: LinearRunOptions = {}): RunResult {
  const label = options.label ?? 'linear';
  const started = Date.now();
  const c = lin.compiled;
  if (!lin.ok || !c) return failedRun(label, `no linear model: ${lin.problem ?? 'the loop could not be linearized'}`);
  const T = Array.from(grid.t);
  if (T.length < 2 || !T.every(Number.isFinite)) return failedRun(label, 'the output grid needs at least two finite times');
  const n = lin.x.length;
  const x0 = grid.x0 ?? c.start;
  const names = lin.signals.map((s) => s.name);
  const dr = (t: number): Float64Array => {
    const m = lin.signalsAt(t);
    return Float64Array.from(names, (nm, j) => (m.get(nm) ?? NaN) - lin.signals[j].value);
  };
  const A = lin.closed.A, B = lin.closed.B.length ? lin.closed.B : A.map(() => []);
  const h = (T[T.length - 1] - T[0]) / (T.length - 1);
  const uniform = propagator(A, B, h);
  if (!uniform) return failedRun(label, 'the matrix exponential of the linear model overflowed');
  const breaks = c.evaluator().breakpoints().filter((b) => b > T[0] && b < T[T.length - 1]);

  // Expressions that expects measure (iae(EXPR) and friends), by their traced name.
  const exprs = new Map<string, Expr>();
  for (const m of c.symbol.block.members) {
    if (m.kind !== 'expect') continue;
    const visit = (e: Expr): void => {
      if (e.kind === 'call') {
        const a = e.args[0];
        if (a) exprs.set(c.text.slice(a.span.start, a.span.end).replace(/\s+/g, ' ').trim(), a);
        e.args.forEach(visit);
      } else if (e.kind === 'binary') {
        visit(e.left);
        visit(e.right);
      } else if (e.kind === 'unary') visit(e.operand);
    };
    visit(m.test);
  }
  const traced = c.traced;
  const nTr = traced.length;
  const values = (t: number, dx: Float64Array, d: Float64Array) => tracedValues(lin, traced, (nm) => exprs.get(nm), t, dx, d);

  let dx: Float64Array = new Float64Array(n);
  for (let i = 0; i < n; i++) dx[i] = x0[i] - lin.x[i];
  const gridY: Float64Array[] = [values(T[0], dx, dr(T[0]))];
  const sampT: number[] = [T[0]];
  const sampY: number[][] = traced.map((_, k) => [gridY[0][k]]);
  const iae = new Float64Array(nTr);
  const stateAt: Float64Array[] = [dx];
  let steps = 0;
  const push = (t: number, v: Float64Array): void => {
    const last = sampT.length - 1;
    const dt = t - sampT[last];
    for (let k = 0; k < nTr; k++) {
      const o = traced[k].offset;
      iae[k] += (dt * (Math.abs(sampY[k][last] - o) + Math.abs(v[k] - o))) / 2;
      sampY[k].push(v[k]);
    }
    sampT.push(t);
  };
  for (let g = 1; g < T.length; g++) {
    const a = T[g - 1], b = T[g];
    const cuts = [a, ...breaks.filter((x) => x > a && x < b), b];
    for (let s = 1; s < cuts.length; s++) {
      const ta = cuts[s - 1], tb = cuts[s];
      const P = cuts.length === 2 && Math.abs(tb - ta - h) <= 1e-12 * Math.max(1, h) ? uniform : propagator(A, B, tb - ta);
      if (!P) return failedRun(label, `the matrix exponential of the linear model overflowed at t = ${ta} s`);
      const ra = dr(ta);
      // Left limit at a breakpoint: the signals are linear on [ta, tb), so extrapolate from the middle.
      const atBreak = s < cuts.length - 1 || breaks.some((x) => Math.abs(x - tb) <= 1e-12 * Math.max(1, Math.abs(tb)));
      const rb = atBreak ? (() => { const rm = dr((ta + tb) / 2); return rm.map((v, j) => 2 * v - ra[j]); })() : dr(tb);
      dx = step(P, dx, ra, rb);
      steps++;
      if (!dx.every(Number.isFinite)) return { ...failedRun(label, `the linear model's solution is not finite at t = ${tb} s (it grows without bound)`), t: T.slice(0, g) };
      if (atBreak) push(tb, values(tb, dx, dr(tb)));
    }
    const v = values(b, dx, dr(b));
    gridY.push(v);
    stateAt.push(dx);
    push(b, v);
  }

  // ---- assemble like the nonlinear run ----
  const signals: Record<string, number[]> = {};
  const metrics: Record<string, SignalMetrics> = {};
  traced.forEach((tr, k) => {
    if (!tr.shown) return;
    signals[tr.name] = gridY.map((v) => (v[k] - tr.offset) / tr.scale);
    const m = displayMetrics({ t: sampT, y: sampY[k] }, tr, iae[k]);
    metrics[tr.name] = {
      initial: m.initial,
      final: m.final,
      peak: m.peak,
      rise: m.rise,
      overshoot: m.overshoot,
      settling: m.settling,
      iae: m.iae,
      ...(tr.limit !== undefined ? { timeAtLimit: 0 } : {}),
    };
  });
  // Recovery (LANGUAGE.md §4.3, sim/metrics.ts recovers): every plant state within its band over
  // the last tenth of the run (2 % of its initial distance from the operating point; for a state
  // starting there, 2 % of the largest distance it reaches, at least abstol).
  const plantStates: number[] = [];
  for (const I of lin.instances) if (I.kind === 'plant') for (let i = 0; i < I.x.length; i++) plantStates.push(I.layout.xOffset + i);
  const tail = T[0] + 0.9 * (T[T.length - 1] - T[0]);
  const atol = options.spec?.atol ?? 1e-9;
  const d0 = Float64Array.from(plantStates, (i) => Math.abs(stateAt[0][i]));
  const dMax = Float64Array.from(plantStates, (i) => stateAt.reduce((mx, d) => Math.max(mx, Math.abs(d[i])), 0));
  const tailMax = Float64Array.from(plantStates, (i) => stateAt.reduce((mx, d, g) => (T[g] < tail ? mx : Math.max(mx, Math.abs(d[i]))), 0));
  const recovered = recovers(d0, dMax, tailMax, atol);
  const expects = options.spec
    ? evaluateExpects(c, options.spec, { traced, t: sampT, y: sampY, iae, atLimit: c.limits.map(() => []), duration: T[T.length - 1] - T[0], complete: true })
    : [];
  return {
    label,
    kind: 'linear',
    t: T,
    signals,
    atLimit: {},
    metrics,
    expects,
    recovered,
    stats: { steps, rejected: 0, evaluations: 0, jacobians: 1, ms: Date.now() - started },
  };
}

/** A linear runner for the run driver, bound to the document's analysis. */
export function linearRunner(analysis: Analysis): LinearRunner {
  return (c: Compiled, spec: RunSpec, input: RunInput, opts) => {
    const lin = loopLinear(analysis, c.name);
    const points = Math.max(2, Math.floor(opts.points ?? spec.points));
    const tEnd = spec.duration;
    const t = Array.from({ length: points }, (_, i) => (i === points - 1 ? tEnd : (tEnd * i) / (points - 1)));
    return linearRun(lin, { t, x0: input.x0 }, { label: input.label, spec });
  };
}
