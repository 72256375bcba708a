// The server's view of the language's lazy layers (units, linear analysis). Each accessor
// returns undefined when the layer has nothing for this analysis, so every feature that uses
// one degrades to what the front end knows instead of failing.

import type { Analysis } from '../../language/src/analysis';
import type { LoopSymbol, SystemSymbol } from '../../language/src/check/symbols';
import type { Diagnostic } from '../../language/src/diagnostics';
import { compileAnalysis } from '../../language/src/model/compile';
import { checkOperatingPoints } from '../../language/src/linear/equilibrium';
import { stabilityDiagnostics } from '../../language/src/linear/stability';
import { linearizeLoop, linearizeSystem, type LoopLinearization, type SystemLinearization } from '../../language/src/linear/linearize';
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

/**
 * The linear models of the facade (linear/linearize.ts), or undefined when the analysis has
 * errors or the model cannot be linearized (the hover then says why, through `problem`).
 */
export function plantLinearOf(a: Analysis, sys: SystemSymbol, point?: string): SystemLinearization {
  return linearizeSystem(a, sys.name, point);
}

export function loopLinearOf(a: Analysis, loop: LoopSymbol): LoopLinearization {
  return linearizeLoop(a, loop.name);
}

/** LW601/LW602 on operating points and LW604 on loops unstable about theirs, once per analysis. */
export function operatingPointDiagnostics(a: Analysis): Diagnostic[] {
  const key = 'server:operatingPointDiagnostics';
  const hit = a.cache.get(key) as Diagnostic[] | undefined;
  if (hit) return hit;
  // Only a file without errors has values to judge; the check itself never throws.
  const out = a.diagnostics.some((d) => d.severity === 'error') ? [] : [...checkOperatingPoints(a), ...stabilityDiagnostics(a)];
  a.cache.set(key, out);
  return out;
}

/** Model diagnostics of every loop (algebraic loops LW404, realization LW5xx), once per analysis. */
export function modelDiagnostics(a: Analysis): Diagnostic[] {
  const key = 'server:modelDiagnostics';
  const hit = a.cache.get(key) as Diagnostic[] | undefined;
  if (hit) return hit;
  const out: Diagnostic[] = [];
  if (!a.diagnostics.some((d) => d.severity === 'error')) {
    for (const name of a.symbols.loops.keys()) out.push(...compileAnalysis(a, name).diagnostics);
  }
  a.cache.set(key, out);
  return out;
}
