// The callable functions of the language, by where they may be used. The model compiler's
// whitelist and the unit rules key off this one table.

export type FunctionPlace = 'anywhere' | 'loop' | 'expect';

export interface FunctionInfo {
  name: string;
  /** Minimum and maximum argument counts (max Infinity for variadic). */
  min: number;
  max: number;
  place: FunctionPlace;
  summary: string;
}

const fns: FunctionInfo[] = [
  ...['sin', 'cos', 'tan', 'asin', 'acos', 'atan', 'sinh', 'cosh', 'tanh', 'exp', 'log', 'log10', 'sqrt', 'abs', 'sign'].map(
    (name): FunctionInfo => ({ name, min: 1, max: 1, place: 'anywhere', summary: `${name}(x)` }),
  ),
  { name: 'atan2', min: 2, max: 2, place: 'anywhere', summary: 'atan2(y, x): angle of the point (x, y)' },
  { name: 'min', min: 2, max: Infinity, place: 'anywhere', summary: 'min(a, b, ...): the smallest argument' },
  { name: 'max', min: 2, max: Infinity, place: 'anywhere', summary: 'max(a, b, ...): the largest argument' },
  { name: 'clamp', min: 3, max: 3, place: 'anywhere', summary: 'clamp(x, lo, hi): x limited to lo .. hi' },
  { name: 'lookup', min: 3, max: 3, place: 'anywhere', summary: 'lookup(x, [x0, x1, ...], [y0, y1, ...]): piecewise-linear table, clamped at the ends' },
  { name: 'step', min: 2, max: 2, place: 'loop', summary: 'step(at, size): 0 before `at`, `size` after' },
  { name: 'ramp', min: 2, max: 2, place: 'loop', summary: 'ramp(at, slope): 0 before `at`, then slope·(t − at)' },
  { name: 'pulse', min: 3, max: 3, place: 'loop', summary: 'pulse(at, width, size): `size` from `at` for `width`, else 0' },
  { name: 'sine', min: 2, max: 2, place: 'loop', summary: 'sine(amplitude, frequency): amplitude·sin(ω t), frequency in Hz or rad/s' },
  { name: 'settling', min: 2, max: 2, place: 'expect', summary: 'settling(sig, band): last time outside the band around the final value' },
  { name: 'overshoot', min: 1, max: 1, place: 'expect', summary: 'overshoot(sig): largest excursion beyond final, relative to the change' },
  { name: 'rise', min: 1, max: 1, place: 'expect', summary: 'rise(sig): 10–90 % rise time' },
  { name: 'peak', min: 1, max: 1, place: 'expect', summary: 'peak(sig): largest |sig|' },
  { name: 'final', min: 1, max: 1, place: 'expect', summary: 'final(sig): value at the end of the run' },
  { name: 'iae', min: 1, max: 1, place: 'expect', summary: 'iae(expr): integral of |expr| over the run' },
  { name: 'saturated', min: 1, max: 1, place: 'expect', summary: 'saturated(SYSTEM.NAME): fraction of the run at a limit' },
];

export const FUNCTIONS: ReadonlyMap<string, FunctionInfo> = new Map(fns.map((f) => [f.name, f]));

/** Option words that may stand as values (`method = stiff`, `by tustin`). */
export const METHOD_WORDS = ['adaptive', 'extrapolation', 'stiff'] as const;
export const SAMPLE_WORDS = ['tustin', 'hold', 'forward'] as const;
export const SIMULATE_OPTIONS = ['tolerance', 'abstol', 'method', 'points', 'budget'] as const;
export const PID_ENTRIES = ['kp', 'ki', 'kd', 'rolloff', 'antiwindup'] as const;
export const LINEAR_ENTRIES = ['A', 'B', 'C', 'D'] as const;
