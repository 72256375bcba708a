// The server's view of the language's lazy layers (units, linear analysis). Each accessor
// returns undefined when the layer has nothing for this analysis, so every feature that uses
// one degrades to what the front end knows instead of failing.

import type { Analysis } from '../../language/src/analysis';
import type { LoopSymbol, SystemSymbol } from '../../language/src/check/symbols';
import type { PoleInfo } from '../../language/src/protocol';
import type { Dim } from '../../language/src/units/dimension';

/** What the unit checker hands the editor: inferred units of params, lets and signals. */
export interface UnitsView {
  /** Unit text inferred for a param, let or signal declaration. */
  inferredText(decl: object): string | undefined;
}

interface UnitsShape {
  inferred?: Map<object, { dim: Dim; text: string }>;
}

export function unitsOf(a: Analysis): UnitsView | undefined {
  const u = a.units as UnitsShape | undefined;
  const inferred = u?.inferred;
  if (!(inferred instanceof Map)) return undefined;
  return {
    inferredText(decl) {
      const hit = inferred.get(decl);
      return hit && typeof hit.text === 'string' ? hit.text : undefined;
    },
  };
}

// ---------- linear analysis ----------

export interface NamedUnit {
  name: string;
  unit: string;
}

/** Row-major matrices with the names and units of their rows and columns. */
export interface LabelledMatrices {
  states: NamedUnit[];
  inputs: NamedUnit[];
  outputs: NamedUnit[];
  A: ArrayLike<number>;
  B: ArrayLike<number>;
  C: ArrayLike<number>;
  D: ArrayLike<number>;
}

export interface PlantLinear extends LabelledMatrices {
  point: string;
  poles: PoleInfo[];
  verdict: string;
  /** State derivative residuals at the point, in display units per second. */
  residual: Array<{ state: string; value: number; unit: string }>;
  equilibrium: boolean;
}

export interface ControllerLinear extends LabelledMatrices {
  poles: PoleInfo[];
  zeros: Array<{ re: number; im: number }>;
  dcGain?: Array<{ from: string; to: string; value: number; unit: string }>;
  sampled?: { period: number; method: string; Ad: ArrayLike<number>; Bd: ArrayLike<number>; Cd: ArrayLike<number>; Dd: ArrayLike<number> };
}

export interface LoopLinear {
  around: string[];
  poles: PoleInfo[];
  verdict: string;
  dominant?: PoleInfo;
  settling: number | null;
  margins: Array<{ at: string; gainDb: number | null; phaseDeg: number | null; crossover: number | null }>;
}

/** Plant linearized at an operating point (its first when none is named). */
export function plantLinearOf(_a: Analysis, _sys: SystemSymbol, _point?: string): PlantLinear | undefined {
  return undefined;
}

export function controllerOf(_a: Analysis, _sys: SystemSymbol): ControllerLinear | undefined {
  return undefined;
}

export function loopLinearOf(_a: Analysis, _loop: LoopSymbol): LoopLinear | undefined {
  return undefined;
}
