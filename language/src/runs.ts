// Runs of a loop, end to end: compile, seed the controller states at the closed-loop operating
// point, simulate (with the linear run of `compare linear`), and build the report the plot,
// the CLI and HTML reports show (signals, runs, poles, knobs). The CLI, the language server's
// worker and the tests all come through here, so they cannot disagree about a run.

import type { Analysis } from './analysis';
import type { Diagnostic } from './diagnostics';
import { compileAnalysis, type Compiled } from './model/compile';
import { linearRunner } from './linear/linear-run';
import { loopLinear } from './linear/loop-linear';
import { linearizeLoop } from './linear/linearize';
import { buildReport, simulate, type SimulateOptions } from './sim/run';
import type { LoopRunReport, ParamKnob, PoleInfo, RunResult } from './protocol';
import { parseUnit } from './units/registry';

export interface LoopRunOptions extends SimulateOptions {
  /** File name recorded in the report. */
  file?: string;
}

export interface LoopRunOutcome {
  report?: LoopRunReport;
  runs: RunResult[];
  compiled?: Compiled;
  /** Why nothing ran (the file has errors, no such loop, ...). */
  reason?: string;
  diagnostics: Diagnostic[];
}

/** Compiles a loop ready to run: controller and hidden states start where they hold the operating point. */
export function compileForRun(analysis: Analysis, loopName?: string): { compiled?: Compiled; reason?: string; diagnostics: Diagnostic[] } {
  const r = compileAnalysis(analysis, loopName);
  if (!r.loop) return { reason: r.reason ?? 'the loop could not be compiled', diagnostics: r.diagnostics };
  const key = `run-seeded:${r.loop.name}`;
  if (!analysis.cache.has(key)) {
    seedAtOperatingPoint(analysis, r.loop);
    analysis.cache.set(key, true);
  }
  return { compiled: r.loop, diagnostics: r.diagnostics };
}

/**
 * The closed-loop operating point holds the plants at their points with the controller states
 * solved for (an integrator holds the plant input). Declared plant states start where `start`
 * or the operating point put them; every other state (controller states, hidden states of
 * transfer relations and PID laws) starts at its closed-loop operating-point value, so a loop
 * started at its operating point stays there and a perturbed start is bumpless. Param sweeps
 * keep these values of the nominal params.
 */
function seedAtOperatingPoint(analysis: Analysis, c: Compiled): void {
  let lin;
  try {
    lin = loopLinear(analysis, c.name);
  } catch {
    return;
  }
  if (!lin.ok || lin.x.length !== c.n) return;
  const names = c.states.map((s) => s.qualified);
  if (lin.states.some((s, i) => s.qualified !== names[i])) return;
  const seeded: number[] = [];
  for (const inst of c.instances) {
    const sys = inst.system;
    for (let i = 0; i < sys.states.length; i++) {
      const isDeclaredPlantState = sys.kind === 'plant' && i < sys.declaredStates;
      if (!isDeclaredPlantState && Number.isFinite(lin.x[inst.xOffset + i])) seeded.push(inst.xOffset + i);
    }
  }
  if (!seeded.length) return;
  const orig = c.startFor.bind(c);
  c.startFor = (p, overrides) => {
    const x = orig(p, overrides);
    for (const i of seeded) if (!overrides?.has(names[i])) x[i] = lin.x[i];
    return x;
  };
  const x0 = c.startFor(c.params);
  c.start.set(x0);
}

/** Runs a loop as its members ask (or as `mode` says) and builds its report. Never throws. */
export function runLoop(analysis: Analysis, loopName: string | undefined, options: LoopRunOptions = {}): LoopRunOutcome {
  const { compiled, reason, diagnostics } = compileForRun(analysis, loopName);
  if (!compiled) return { runs: [], reason, diagnostics };
  let runs: RunResult[];
  try {
    runs = simulate(compiled, { linear: linearRunner(analysis), ...options });
  } catch (err) {
    return { runs: [], compiled, diagnostics, reason: `internal error while running '${compiled.name}' (please report): ${(err as Error).message}` };
  }
  const report = reportFor(analysis, compiled, runs, options.file);
  return { report, runs, compiled, diagnostics };
}

/** The report of some runs, with the closed-loop and plant poles and the knob candidates. */
export function reportFor(analysis: Analysis, compiled: Compiled, runs: RunResult[], file?: string): LoopRunReport {
  const report = buildReport(compiled, runs, file);
  for (const sig of report.signals) sig.group = panelOf(sig);
  const poles = polesOf(analysis, compiled.name);
  if (poles) report.poles = poles;
  report.params = knobsOf(compiled);
  return report;
}

/**
 * Stacked panels by what a signal is: positions (lengths and angles), rates (their time
 * derivatives), actuators (limited signals and plant inputs), else one panel per unit.
 */
function panelOf(sig: LoopRunReport['signals'][number]): string {
  if (sig.group === 'actuator' || sig.kind === 'input' || sig.kind === 'controller') return 'actuator';
  const r = parseUnit(sig.unit);
  if (!r.ok) return sig.group;
  const [m, kg, s, A, K, mol, cd] = r.unit.dim;
  const only = (x: number[]) => x.every((v) => Math.abs(v) < 1e-9);
  if (only([kg, A, K, mol, cd])) {
    const angle = r.unit.angle;
    if (Math.abs(s) < 1e-9 && ((Math.abs(m - 1) < 1e-9 && Math.abs(angle) < 1e-9) || (Math.abs(m) < 1e-9 && Math.abs(angle - 1) < 1e-9))) return 'position';
    if (Math.abs(s + 1) < 1e-9 && ((Math.abs(m - 1) < 1e-9 && Math.abs(angle) < 1e-9) || (Math.abs(m) < 1e-9 && Math.abs(angle - 1) < 1e-9))) return 'rate';
  }
  return sig.group;
}

function polesOf(analysis: Analysis, loop: string): { closed: PoleInfo[]; open: PoleInfo[] } | undefined {
  try {
    const lin = linearizeLoop(analysis, loop);
    if (!lin.ok) return undefined;
    return { closed: lin.poles, open: lin.open };
  } catch {
    return undefined;
  }
}

/** Params whose declarations are plain literals: the plot panel offers them as knobs. */
export function knobsOf(c: Compiled): ParamKnob[] {
  const out: ParamKnob[] = [];
  const seen = new Set<string>();
  for (const inst of c.instances) {
    const sys = inst.system;
    // a `use` instance shares its system's declarations; edit those once
    if (seen.has(sys.system)) continue;
    seen.add(sys.system);
    for (const p of sys.paramInfo) {
      if (!p.literal) continue;
      const idx = sys.paramIndex.get(p.name);
      if (idx === undefined) continue;
      const si = sys.params[idx];
      const scale = Number.isFinite(p.scale) && p.scale !== 0 ? p.scale : 1;
      out.push({
        name: `${sys.instance}.${p.name}`,
        system: sys.system,
        owner: sys.kind,
        value: (si - p.offset) / scale,
        unit: p.unit,
        span: p.literal.span,
        text: p.literal.text,
      });
    }
  }
  return out;
}
