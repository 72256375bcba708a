// The compiled forms of systems and loops: what the model compiler hands to linear analysis and
// to the run driver. Everything numeric is coherent SI; display units appear only as the text and
// the (scale, offset) pair that converts: SI = display * scale + offset.
//
// Matrices are row-major Float64Arrays: entry (i, j) of an r×c matrix is M[i * c + j].
// Every Jacobian here is exact: it is produced by symbolic differentiation of the model's
// expression graph followed by code generation (see model/codegen.ts), never by differences.

import type { Span } from '../diagnostics';
import type { SampleMethod } from '../syntax/ast';

/** A state, input or output of a system instance (or a hidden state). */
export interface VarInfo {
  /** Name inside the system: `tilt`; hidden states: `drive/err#1`, `u:pid.int`, ... */
  name: string;
  /** Qualified by the instance: `Boom.tilt`. */
  qualified: string;
  /** Declared unit text ('' when none or dimensionless). */
  unit: string;
  /** SI = display * scale + offset. */
  scale: number;
  offset: number;
  span: Span;
  /** Present for states the tool adds: realizations of transfer relations, PID laws, linear blocks. */
  hidden?: { kind: 'transfer' | 'pid' | 'linear'; span: Span; role: string };
}

export interface ParamInfo {
  name: string;
  qualified: string;
  unit: string;
  scale: number;
  offset: number;
  span: Span;
  /** The literal of the declaration when it is a plain number or quantity (knobs, edits). */
  literal?: { span: Span; text: string };
}

/** A `limit NAME within LO .. HI` of an instance input or output. */
export interface LimitInfo {
  /** Index among the system's limits (also the index into limit value / mode arrays). */
  index: number;
  on: 'input' | 'output';
  /** Index of the limited input or output. */
  target: number;
  name: string;
  qualified: string;
  span: Span;
}

/** An operating point as SI vectors; entries the declaration does not give are 0 with given = false. */
export interface OperatingPoint {
  name: string;
  span: Span;
  /** Declared states only (hidden states are 0; trim completes them). */
  x: Float64Array;
  u: Float64Array;
  givenStates: boolean[];
  givenInputs: boolean[];
  /** Entry values by name (SI), as written: `drive` -> 0. */
  values: Map<string, number>;
}

/**
 * A linear part of a system in continuous time: x_h' = A x_h + B v, w = C x_h + D v, where v
 * are `inputs` (system input indices) and w are `outputs` (system output indices); x_h are the
 * hidden states `states` (system state indices).
 */
export interface LinearPart {
  kind: 'transfer' | 'pid' | 'linear';
  span: Span;
  states: number[];
  inputs: number[];
  outputs: number[];
  /** Matrices for a given param vector (realization and gains depend on params). */
  matrices(p: Float64Array): { A: Float64Array; B: Float64Array; C: Float64Array; D: Float64Array };
}

/** The generated functions of one system instance. Limits act as clamps (slope 1 inside). */
export interface SystemFunctions {
  /** dx = f(x, u, p) */
  f(x: Float64Array, u: Float64Array, p: Float64Array, dx: Float64Array): void;
  /** y = g(x, u, p) (outputs after their limits) */
  g(x: Float64Array, u: Float64Array, p: Float64Array, y: Float64Array): void;
  /** ∂f/∂x, nx×nx */
  dfdx(x: Float64Array, u: Float64Array, p: Float64Array, J: Float64Array): void;
  /** ∂f/∂u, nx×nu */
  dfdu(x: Float64Array, u: Float64Array, p: Float64Array, J: Float64Array): void;
  /** ∂g/∂x, ny×nx */
  dgdx(x: Float64Array, u: Float64Array, p: Float64Array, J: Float64Array): void;
  /** ∂g/∂u, ny×nu */
  dgdu(x: Float64Array, u: Float64Array, p: Float64Array, J: Float64Array): void;
}

export interface CompiledSystem extends SystemFunctions {
  /** Instance name (`Boom`, or a `use` name). */
  instance: string;
  /** Name of the system block. */
  system: string;
  kind: 'plant' | 'controller';
  description?: string;
  span: Span;
  /** Declared states first, then hidden states, in declaration order of their relations. */
  states: VarInfo[];
  declaredStates: number;
  inputs: VarInfo[];
  outputs: VarInfo[];
  /** Param vector (SI) with this instance's overrides; declared params first, then derived slots. */
  params: Float64Array;
  /** Declared params by name -> index into params. */
  paramIndex: Map<string, number>;
  paramInfo: ParamInfo[];
  /**
   * Param vector for other values of some declared params (SI, by name): params that depend on
   * them are recomputed by the generated params function, realizations are redone.
   * Returns an error text when a realization fails for these values.
   */
  makeParams(overrides?: ReadonlyMap<string, number>): { ok: true; p: Float64Array } | { ok: false; message: string };
  /** Default start vector (SI): state defaults, hidden states 0. */
  x0: Float64Array;
  points: OperatingPoint[];
  limits: LimitInfo[];
  /** Bounds of each limit (SI) for a param vector. */
  limitBounds(p: Float64Array, lo: Float64Array, hi: Float64Array): void;
  /** feedthrough[i][j]: output i reads input j directly (structural). */
  feedthrough: boolean[][];
  linearParts: LinearPart[];
  sample?: SampleInfo;
}

export interface SampleInfo {
  span: Span;
  /** Period in s for the default params (the run driver re-evaluates with `periodOf`). */
  period: number;
  periodOf(p: Float64Array): number;
  method: SampleMethod;
}

/** Where a system instance sits in the closed loop. */
export interface InstanceLayout {
  system: CompiledSystem;
  /** Offset of its states in the joint state vector. */
  xOffset: number;
  /** Offset of its params in the joint param vector. */
  pOffset: number;
}

/** A loop-level limit (an instance input or output limit), with where to find its values. */
export interface LoopLimit {
  /** Index into the loop's limit arrays (pre, lo, hi, mode). */
  index: number;
  instance: string;
  info: LimitInfo;
  /** `Boom.drive` */
  qualified: string;
  /** Limits inside sampled controllers act only at sample instants and are plain clamps. */
  sampled: boolean;
}

/**
 * Limit modes used by the loop evaluator, one per loop limit: FREE passes the pre-limit value
 * through (so a segment stays smooth up to the located event), LOW / HIGH hold the bound,
 * CLAMP clamps on the fly (linear analysis, sampled limits).
 */
export const LimitMode = { FREE: 0, LOW: -1, HIGH: 1, CLAMP: 2 } as const;

/** A sampled controller inside the loop. */
export interface SampledController {
  instance: string;
  span: Span;
  period: number;
  method: SampleMethod;
  /** Its states in the joint vector (held constant by the integrator between instants). */
  xOffset: number;
  nStates: number;
  /** Its held outputs in the evaluator's `held` array. */
  heldOffset: number;
  nOutputs: number;
}

/** A signal the run records: shown signals, and what expects measure. */
export interface TracedSignal {
  /** As written: `Boom.tilt`, `target`, or the expression text for iae(EXPR). */
  name: string;
  kind: 'state' | 'input' | 'output' | 'signal' | 'controller' | 'expr';
  instance?: string;
  unit: string;
  scale: number;
  offset: number;
  /** Index into the loop's limits when the signal is a limited input or output. */
  limit?: number;
  description?: string;
  /** Shown in plots (false for signals only expects measure). */
  shown: boolean;
}

/** Live evaluation of a compiled loop for one param vector. */
export interface LoopEvaluator {
  readonly p: Float64Array;
  /** Limit modes (see LimitMode); the run driver switches them at events. */
  readonly modes: Float64Array;
  /** Held outputs of sampled controllers. */
  readonly held: Float64Array;
  /** dx = closed-loop right-hand side at (t, x) with the current modes and held values. */
  rhs(t: number, x: Float64Array, dx: Float64Array): void;
  /** Exact closed-loop Jacobian ∂rhs/∂x (n×n, row-major), same modes and held values. */
  jac(t: number, x: Float64Array, J: Float64Array): void;
  /** Pre-limit values and bounds of every loop limit at (t, x). */
  limitValues(t: number, x: Float64Array, pre: Float64Array, lo: Float64Array, hi: Float64Array): void;
  /** Traced signals (SI) at (t, x). */
  traced(t: number, x: Float64Array, out: Float64Array): void;
  /** Every instance input and output (SI) at (t, x): inputs and outputs concatenated per instance in layout order. */
  signals(t: number, x: Float64Array, inputs: Float64Array, outputs: Float64Array): void;
  /** At a sample instant of controller k: sample its inputs, update its held outputs and states in x. */
  sample(k: number, t: number, x: Float64Array): void;
  /**
   * Limits inside sampled controllers, as of each one's latest sample instant (by loop limit
   * index; other entries stay 0): pre-limit value and bounds. The held value is clamped when pre
   * lies outside [lo, hi], and stays so until the next instant.
   */
  readonly sampledLimits: { readonly pre: Float64Array; readonly lo: Float64Array; readonly hi: Float64Array };
  /** Breakpoints of signal functions (step edges, pulse edges, ramp starts) in s, sorted. */
  breakpoints(): number[];
}

export interface CompiledLoop {
  name: string;
  span: Span;
  description?: string;
  /** Instances in closed-loop state order: plants, then controllers (LANGUAGE.md §5). */
  instances: InstanceLayout[];
  /** Size of the joint state vector. */
  n: number;
  /** Joint state names (`Boom.tilt`, hidden ones included) with units. */
  states: VarInfo[];
  /** Joint param vector (SI): each instance's params at its pOffset, then loop params. */
  params: Float64Array;
  /** `Boom.arm`, `Steady.kp`, loop params by their own name -> index into params. */
  paramIndex: Map<string, number>;
  /** Joint params for other values of some params (by qualified name, SI). */
  makeParams(overrides?: ReadonlyMap<string, number>): { ok: true; p: Float64Array } | { ok: false; message: string };
  /** Start vector (SI): `start` values, else the operating point, else state defaults. */
  start: Float64Array;
  /** Plant operating points the loop is linearized about, by instance (`around`, else the first). */
  around: Map<string, OperatingPoint>;
  limits: LoopLimit[];
  sampled: SampledController[];
  traced: TracedSignal[];
  /** Instance names in the order their outputs and wired inputs are evaluated. */
  evaluationOrder: string[];
  /** Algebraic loops solved by Newton iteration (`solve algebraic`); each lists its arrows' targets. */
  algebraicLoops: string[][];
  /** Build an evaluator (generated rhs / jac bound to a param vector). */
  evaluator(p?: Float64Array): LoopEvaluator;
  /** rhs and exact jac at the default params with limits as clamps (for linear analysis). */
  rhs(t: number, x: Float64Array, dx: Float64Array): void;
  jac(t: number, x: Float64Array, J: Float64Array): void;
}
