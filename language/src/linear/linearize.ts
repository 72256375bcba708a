// The facade the server's hovers and `loopwright linearize` share: plain JSON-able linear models of
// a system at an operating point and of a loop at its operating point, memoised per analysis.
//
// Matrices come twice: `A B C D` in the display units of the labelled states, inputs and outputs
// (A[i][j] is d(state i')/d(state j) in their declared units), and `si` in coherent SI (as a
// `linear` block writes them). Poles do not depend on the units. Infinite or absent figures are
// null.
//
// API
//   linearizeSystem(analysis, systemName, pointName?) → SystemLinearization
//   linearizeLoop(analysis, loopName?) → LoopLinearization

import type { Analysis } from '../analysis';
import { DiagnosticSink } from '../diagnostics';
import { compileSystem } from '../model/system';
import type { CompiledSystem, VarInfo } from '../model/types';
import { signalUnitText, type QuantityTable } from '../model/units';
import type { PoleInfo } from '../protocol';
import { completeHidden, methodOf, systemJacobians } from './jacobian';
import { discretize } from './discretize';
import type { StateSpace } from './lti';
import { loopLinear, type LoopLinear } from './loop-linear';
import { loopMargins, type LoopMargin } from './loop-margins';
import { systemModel, unitOf } from './model-system';
import { equilibriumAt } from './model-residual';
import { derivativeUnit } from './equilibrium';
import { discretePolesOf, polesOf, type PoleReport, type Verdict } from './poles';
import { zerosOf } from './zeros';
import type { Mat } from './dense';

export interface VarEntry {
  name: string;
  unit: string;
  /** Value at the operating point in the display unit. */
  value?: number;
}

export interface ResidualEntry {
  state: string;
  /** Derivative at the point in `unit` (display unit of the state per second). */
  value: number;
  unit: string;
  negligible: boolean;
}

export interface ZeroEntry {
  input: string;
  output: string;
  zeros: { re: number; im: number }[];
}

export interface DiscreteEntry {
  method: 'zoh' | 'tustin' | 'forward';
  period: number;
  A: Mat;
  B: Mat;
  C: Mat;
  D: Mat;
  poles: PoleInfo[];
  verdict: Verdict;
}

export interface Linearization {
  ok: boolean;
  problem?: string;
  states: VarEntry[];
  inputs: VarEntry[];
  outputs: VarEntry[];
  A: Mat;
  B: Mat;
  C: Mat;
  D: Mat;
  si: { A: Mat; B: Mat; C: Mat; D: Mat };
  poles: PoleInfo[];
  verdict: Verdict;
  /** Poles right of the axis (outside the unit circle for discrete models). */
  unstable: number;
  dominant: PoleInfo[];
  /** 2 % settling estimate 4/(ζωn) of the dominant pole, s; null unless stable. */
  settling: number | null;
  residual: ResidualEntry[];
  zeros: ZeroEntry[];
  discrete?: DiscreteEntry;
}

export interface SystemLinearization extends Linearization {
  system: string;
  kind: 'plant' | 'controller' | null;
  /** The operating point used; null when linearized at zero states and inputs. */
  point: string | null;
}

export interface InstanceSummary {
  instance: string;
  kind: 'plant' | 'controller';
  poles: PoleInfo[];
  verdict: Verdict;
  discrete?: DiscreteEntry;
}

export interface LoopLinearization extends Linearization {
  loop: string;
  margins: LoopMargin[];
  /** Open-loop poles of the plants at the operating point. */
  open: PoleInfo[];
  instances: InstanceSummary[];
  notes: string[];
}

// ---- helpers ----

const fin = (v: number | null): number | null => (v === null || !Number.isFinite(v) ? null : v);
const pole = (p: PoleInfo): PoleInfo => ({ re: p.re, im: p.im, damping: p.damping, natural: p.natural, timeConstant: p.timeConstant });

function scaled(M: Mat, rowScale: number[], colScale: number[]): Mat {
  return M.map((r, i) => r.map((v, j) => (v * colScale[j]) / rowScale[i]));
}

function display(ss: StateSpace, xs: number[], us: number[], ys: number[]): { A: Mat; B: Mat; C: Mat; D: Mat } {
  return { A: scaled(ss.A, xs, xs), B: scaled(ss.B, xs, us), C: scaled(ss.C, ys, xs), D: scaled(ss.D, ys, us) };
}

const scaleOf = (v: VarInfo): number => (Number.isFinite(v.scale) && v.scale !== 0 ? v.scale : 1);
const entryOf = (v: VarInfo, si?: number): VarEntry => ({ name: v.qualified ?? v.name, unit: v.unit, ...(si !== undefined ? { value: (si - v.offset) / scaleOf(v) } : {}) });

function zerosTable(ss: StateSpace, inputs: VarEntry[], outputs: VarEntry[]): ZeroEntry[] {
  const out: ZeroEntry[] = [];
  if (ss.A.length === 0) return out;
  for (let o = 0; o < outputs.length; o++) {
    for (let i = 0; i < inputs.length; i++) {
      const z = zerosOf(ss, o, i);
      if (z.ok) out.push({ input: inputs[i].name, output: outputs[o].name, zeros: z.zeros.map((c) => ({ re: c.re, im: c.im })) });
    }
  }
  return out;
}

function poleFields(r: PoleReport): Pick<Linearization, 'poles' | 'verdict' | 'unstable' | 'dominant' | 'settling'> {
  return { poles: r.poles.map(pole), verdict: r.verdict, unstable: r.unstableCount, dominant: r.dominant.map(pole), settling: fin(r.settling) };
}

function discreteEntry(sys: CompiledSystem, ss: StateSpace): DiscreteEntry | undefined {
  if (!sys.sample) return undefined;
  // A nonlinear state equation of a sampled controller runs as a forward difference (LANGUAGE.md
  // §5); a controller that has one is stepped that way as a whole.
  const method = sys.declaredStates > 0 ? 'forward' : methodOf(sys) ?? 'tustin';
  const d = discretize(ss, sys.sample.periodOf(sys.params), method);
  if (!d.ok || !d.ss) return undefined;
  const pr = discretePolesOf(d.ss.A, d.T);
  return { method, period: d.T, A: d.ss.A, B: d.ss.B, C: d.ss.C, D: d.ss.D, poles: pr.poles.map(pole), verdict: pr.verdict };
}

function emptyLin(problem: string): Linearization {
  return { ok: false, problem, states: [], inputs: [], outputs: [], A: [], B: [], C: [], D: [], si: { A: [], B: [], C: [], D: [] }, poles: [], verdict: 'unstable', unstable: 0, dominant: [], settling: null, residual: [], zeros: [] };
}

// ---- systems ----

export function linearizeSystem(analysis: Analysis, systemName: string, pointName?: string): SystemLinearization {
  const key = `linear:system:${systemName}:${pointName ?? ''}`;
  const hit = analysis.cache.get(key) as SystemLinearization | undefined;
  if (hit) return hit;
  let r: SystemLinearization;
  try {
    r = systemUncached(analysis, systemName, pointName);
  } catch (err) {
    r = { ...emptyLin(`internal error in the linear analysis (please report): ${(err as Error).message}`), system: systemName, kind: null, point: null };
  }
  analysis.cache.set(key, r);
  return r;
}

function systemUncached(analysis: Analysis, systemName: string, pointName?: string): SystemLinearization {
  const sym = analysis.symbols.systems.get(systemName);
  const fail = (problem: string, kind: SystemLinearization['kind'] = null): SystemLinearization => ({ ...emptyLin(problem), system: systemName, kind, point: pointName ?? null });
  if (!sym) return fail(`there is no plant or controller named '${systemName}'`);
  if (analysis.diagnostics.some((d) => d.severity === 'error')) return fail('the file has errors; fix them first', sym.kind);
  const sink = new DiagnosticSink();
  const quantities = (analysis.units as { quantities?: QuantityTable } | undefined)?.quantities;
  const built = compileSystem(sym, { symbols: analysis.symbols, quantities, sink }, sym.name);
  if (!built) return fail(sink.items.find((d) => d.severity === 'error')?.message ?? `${systemName} could not be compiled`, sym.kind);
  const sys = built.compiled;
  const point = pointName ? sys.points.find((p) => p.name === pointName) : sys.points[0];
  if (pointName && !point) return fail(`${systemName} has no operating point named '${pointName}'${sys.points.length ? ` (it has ${sys.points.map((p) => p.name).join(', ')})` : ''}`, sym.kind);
  const nx = sys.states.length, nu = sys.inputs.length;
  const u = point ? Float64Array.from(point.u) : new Float64Array(nu);
  const x0 = new Float64Array(nx);
  if (point) x0.set(point.x.subarray(0, sys.declaredStates));
  const x = completeHidden(sys, x0, u).x;
  const ss = systemJacobians(sys, x, u);
  const yv = new Float64Array(sys.outputs.length);
  sys.g(x, u, sys.params, yv);
  const states = sys.states.map((v, i) => entryOf({ ...v, qualified: v.name }, x[i]));
  const inputs = sys.inputs.map((v, i) => entryOf({ ...v, qualified: v.name }, u[i]));
  const outputs = sys.outputs.map((v, i) => entryOf({ ...v, qualified: v.name }, yv[i]));
  const d = display(ss, sys.states.map(scaleOf), sys.inputs.map(scaleOf), sys.outputs.map(scaleOf));
  const model = systemModel(analysis, sym);
  const residual: ResidualEntry[] = equilibriumAt(model, x.subarray(0, sys.declaredStates), u)
    .filter((r) => r.evaluable)
    .map((r) => ({ state: r.state, value: r.display, unit: derivativeUnit(model.stateUnits[r.index].text), negligible: r.negligible }));
  const discrete = sys.sample ? discreteEntry(sys, ss) : undefined;
  return {
    ok: true,
    system: systemName,
    kind: sym.kind,
    point: point?.name ?? null,
    states,
    inputs,
    outputs,
    ...d,
    si: ss,
    ...poleFields(polesOf(ss.A)),
    residual,
    zeros: zerosTable(ss, inputs, outputs),
    ...(discrete ? { discrete } : {}),
  };
}

// ---- loops ----

export function linearizeLoop(analysis: Analysis, loopName?: string): LoopLinearization {
  const key = `linear:loopFacade:${loopName ?? ''}`;
  const hit = analysis.cache.get(key) as LoopLinearization | undefined;
  if (hit) return hit;
  let r: LoopLinearization;
  try {
    r = loopUncached(analysis, loopName);
  } catch (err) {
    r = { ...emptyLin(`internal error in the linear analysis (please report): ${(err as Error).message}`), loop: loopName ?? '', margins: [], open: [], instances: [], notes: [] };
  }
  analysis.cache.set(key, r);
  return r;
}

function loopUncached(analysis: Analysis, loopName?: string): LoopLinearization {
  const lin: LoopLinear = loopLinear(analysis, loopName);
  const base = { loop: lin.name, margins: [], open: [], instances: [], notes: lin.notes };
  if (!lin.ok) return { ...emptyLin(lin.problem ?? 'the loop could not be linearized'), ...base };
  const ss = lin.closed;
  const states = lin.states.map((v, i) => entryOf(v, lin.x[i]));
  const sigUnits = lin.signals.map((s) => unitOf(signalUnitText(s.decl, analysis.units?.inferred)));
  const sigScale = sigUnits.map((u) => (Number.isFinite(u.scale) && u.scale !== 0 ? u.scale : 1));
  const inputs: VarEntry[] = lin.signals.map((s, i) => ({ name: s.name, unit: sigUnits[i].text, value: (s.value - sigUnits[i].offset) / sigScale[i] }));
  const outputs = lin.outputs.map((v, i) => entryOf(v, lin.y[i]));
  const d = display(ss, lin.states.map(scaleOf), sigScale, lin.outputs.map(scaleOf));
  const residual: ResidualEntry[] = lin.states.map((v, i) => {
    const r = lin.residual[i];
    const row = ss.A[i].reduce((acc, a, j) => acc + Math.abs(a * lin.x[j]), 0);
    return { state: v.qualified, value: r / scaleOf(v), unit: derivativeUnit(v.unit), negligible: Math.abs(r) <= 1e-9 * row + 1e-12 * scaleOf(v) };
  });
  const instances: InstanceSummary[] = lin.instances.map((I) => {
    const pr = polesOf(I.ss.A);
    const disc = I.layout.system.sample ? discreteEntry(I.layout.system, I.ss) : undefined;
    return { instance: I.name, kind: I.kind, poles: pr.poles.map(pole), verdict: pr.verdict, ...(disc ? { discrete: disc } : {}) };
  });
  const open = instances.filter((i) => i.kind === 'plant').flatMap((i) => i.poles);
  return {
    ok: true,
    ...base,
    states,
    inputs,
    outputs,
    ...d,
    si: ss,
    ...poleFields(polesOf(ss.A)),
    residual,
    zeros: [],
    margins: loopMargins(lin),
    open,
    instances,
  };
}

