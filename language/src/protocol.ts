// The plain-JSON shapes that leave the language core: run reports (CLI --json, the plot webview,
// HTML reports) and the custom requests between the extension client and the server.
// Everything here is serialisable with JSON.stringify; numbers are in display units unless a
// field says SI.

import type { Span } from './diagnostics';

/**
 * Node flags the extension starts the language server with. The server analyses the whole
 * document on every edit, and most of what one analysis allocates (tokens, syntax tree, symbol
 * tables) lives until the next edit replaces it: with V8's default young generation such
 * objects are copied by two scavenges on the way to the old generation, which is a third of an
 * analysis of a large file. A larger young generation lets them die young. The benchmarks of
 * the front end and of the server measure with the same flags.
 */
export const SERVER_NODE_FLAGS: readonly string[] = ['--max-semi-space-size=32'];

/**
 * Heap limits of the worker threads that run simulations (the run pool, the server's runs). A
 * worker's young generation is smaller than the main thread's by default; a run allocates its
 * result buffers and the expect and metric records, and with the smaller size a family of
 * runs spent a third of its time in scavenges. 48 MB is the main thread's default here (three
 * semi-spaces of 16 MB).
 */
export const RUN_WORKER_LIMITS = { maxYoungGenerationSizeMb: 48 } as const;

/** One plotted signal of a loop. */
export interface SignalInfo {
  /** As written in the file: `Boom.tilt`, `target`, `Steady.drive`. */
  name: string;
  /** Display unit text as declared (`rad`, `degC`, `N*m`); '' for dimensionless. */
  unit: string;
  /** SI value = display value * scale + offset. */
  scale: number;
  offset: number;
  /** What the signal is in the loop. */
  kind: 'state' | 'input' | 'output' | 'signal' | 'controller';
  /** Panel key: signals sharing a key share a stacked panel (e.g. 'position', 'rate', 'actuator'). */
  group: string;
  /** Saturation bounds in display units, when the signal is limited. */
  limit?: { lo: number; hi: number };
  description?: string;
}

export interface SignalMetrics {
  initial: number;
  final: number;
  peak: number;
  /** 10–90 % rise time in s; null when the signal does not change. */
  rise: number | null;
  /** Dimensionless fraction of the change (0.16 = 16 %); null when the signal does not change. */
  overshoot: number | null;
  /** Last time outside the 2 % band around final, in s. */
  settling: number | null;
  iae: number;
  /** Fraction of the run spent at a limit (0..1), for limited signals. */
  timeAtLimit?: number;
}

export interface ExpectResult {
  /** The expect text as written. */
  text: string;
  span: Span;
  pass: boolean;
  /** Measured left-hand side, in the unit of the right-hand side when it has one. */
  measured: number | null;
  measuredText: string;
  /** Why it could not be evaluated, if it could not. */
  error?: string;
}

export interface RunError {
  /** What went wrong, where and when: names the time and the state. */
  message: string;
  time: number;
  state?: string;
  code: string;
}

export interface SolverStats {
  steps: number;
  rejected: number;
  evaluations: number;
  jacobians: number;
  /** Wall-clock milliseconds. */
  ms: number;
}

export interface RunResult {
  label: string;
  kind: 'nonlinear' | 'linear' | 'sweep';
  /** For sweep runs: the swept quantity and its value (display units). */
  sweep?: { target: string; value: number; unit: string; text: string };
  /** Uniform output grid, both ends included, seconds. */
  t: number[];
  /** Display-unit samples on the grid, one array per shown signal name. */
  signals: Record<string, number[]>;
  /** Intervals [t0, t1] (s) during which a limited signal sat at its limit. */
  atLimit: Record<string, Array<[number, number]>>;
  metrics: Record<string, SignalMetrics>;
  expects: ExpectResult[];
  /** Every plant state ended within the settling band of the operating point (LANGUAGE.md §4.3). */
  recovered: boolean;
  error?: RunError;
  stats: SolverStats;
}

/**
 * A run as the engine gives it (runOnce, the run pool): a RunResult whose grid and signals are
 * Float64Arrays, for the consumers that compute with them. plainRun (sim/plain.ts) gives the
 * RunResult with number arrays, element by element the same values, for JSON and the report.
 */
export type SampledRun = Omit<RunResult, 't' | 'signals'> & { t: Float64Array; signals: Record<string, Float64Array> };

export interface PoleInfo {
  re: number;
  im: number;
  damping: number;
  natural: number;
  /** Time constant 1/|re| in s; null for a pole on the imaginary axis. */
  timeConstant: number | null;
}

export interface LoopRunReport {
  file?: string;
  loop: string;
  signals: SignalInfo[];
  runs: RunResult[];
  /** Closed-loop poles at the loop's operating point and the plants' open-loop poles. */
  poles?: { closed: PoleInfo[]; open: PoleInfo[] };
  /** Knob candidates for live tuning (issue: live tuning). */
  params?: ParamKnob[];
  warnings: string[];
}

/** A param that the plot panel can offer as a knob. */
export interface ParamKnob {
  /** `Steady.kp` */
  name: string;
  system: string;
  owner: 'plant' | 'controller' | 'loop';
  /** Value in its own unit, and that unit's text. */
  value: number;
  unit: string;
  /** Span of the literal (number plus unit) in the document, for edits. */
  span: Span;
  /** The number's text as written, to keep the formatting style. */
  text: string;
}

// ---- client <-> server custom messages ----

export type RunMode = 'simulate' | 'compare' | 'sweep';

export interface RunRequestParams {
  uri: string;
  loop: string;
  mode: RunMode;
  workDoneToken?: string | number;
}

export const RunRequest = 'loopwright/run';
/** Commands the client owns (the code lenses call these). Arguments: [uri, loopName]. */
export const Commands = {
  simulate: 'loopwright.simulate',
  compareLinear: 'loopwright.compareLinear',
  sweep: 'loopwright.sweep',
  exportCsv: 'loopwright.exportCsv',
  openReport: 'loopwright.openReport',
} as const;
