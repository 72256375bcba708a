// `loopwright linearize FILE --system NAME [--point NAME] [--json]` and
// `loopwright linearize FILE --loop NAME [--json]`: the linear model at the operating point as
// labelled matrices, a poles table, the stability verdict and, for loops, the margins of the loop
// broken at each plant input a controller drives. Everything comes from linear/linearize.ts, the
// same facade the editor's hovers read.

import { analyze, type Analysis } from '../analysis';
import { checkOperatingPoints } from '../linear/equilibrium';
import { checkLoopStability } from '../linear/stability';
import { linearizeLoop, linearizeSystem, type Linearization, type LoopLinearization, type SystemLinearization, type VarEntry } from '../linear/linearize';
import type { Mat } from '../linear/dense';
import { diagnosticLine, locate, num, table } from './format';
import { readSource } from './source';
import { EXIT_FAIL, EXIT_OK, EXIT_USAGE, flagString, parseArgs, UsageError, type CliCommand, type CliIO } from './types';

const label = (v: VarEntry): string => (v.unit ? `${v.name} [${v.unit}]` : v.name);

function matrix(name: string, M: Mat, rows: VarEntry[], cols: VarEntry[]): string {
  if (!rows.length || !cols.length) return `${name}: (empty)`;
  const header = [name, ...cols.map(label)];
  return table(header, rows.map((r, i) => [label(r), ...M[i].map((v) => num(v, 6))]));
}

function poles(lin: Linearization): string {
  if (!lin.poles.length) return 'poles: none (no states)';
  return table(
    ['pole', 're', 'im', 'damping', 'natural [rad/s]', 'time constant [s]'],
    lin.poles.map((p, i) => [`${i + 1}`, num(p.re, 6), num(p.im, 6), num(p.damping, 4), num(p.natural, 5), num(p.timeConstant, 5)]),
  );
}

function verdictLine(lin: Linearization): string {
  const parts = [`verdict: ${lin.verdict}${lin.unstable ? ` (${lin.unstable} pole${lin.unstable > 1 ? 's' : ''} in the right half-plane)` : ''}`];
  const dom = lin.dominant[0];
  if (dom) parts.push(`dominant ${num(dom.re, 5)}${dom.im ? ` ± ${num(Math.abs(dom.im), 5)}j` : ''}`);
  if (lin.settling !== null) parts.push(`2 % settling ≈ ${num(lin.settling, 4)} s`);
  return parts.join('; ');
}

function residualLines(lin: Linearization): string[] {
  const bad = lin.residual.filter((r) => !r.negligible);
  if (!lin.residual.length) return [];
  if (!bad.length) return ['equilibrium: every state derivative is negligible at this point'];
  return ['not an equilibrium here:', ...bad.map((r) => `  ${r.state}' = ${num(r.value, 5)} [${r.unit}]`)];
}

function common(lin: Linearization, inputs: VarEntry[]): string[] {
  const out: string[] = [];
  out.push('', matrix('A', lin.A, lin.states, lin.states));
  if (inputs.length) out.push('', matrix('B', lin.B, lin.states, inputs));
  if (lin.outputs.length) out.push('', matrix('C', lin.C, lin.outputs, lin.states));
  if (lin.outputs.length && inputs.length) out.push('', matrix('D', lin.D, lin.outputs, inputs));
  out.push('', '(matrices in the units of the labels)', '', poles(lin), verdictLine(lin));
  return out;
}

function systemText(lin: SystemLinearization): string {
  const out = [`${lin.kind ?? 'system'} ${lin.system}${lin.point ? ` at operating point '${lin.point}'` : ' at zero states and inputs'}`];
  const at = [...lin.states, ...lin.inputs].filter((v) => v.value !== undefined).map((v) => `${v.name} = ${num(v.value, 6)}${v.unit ? ` [${v.unit}]` : ''}`);
  if (at.length) out.push(`  ${at.join(', ')}`);
  out.push(...common(lin, lin.inputs));
  if (lin.zeros.length) {
    out.push('', 'zeros:');
    for (const z of lin.zeros) out.push(`  ${z.input} → ${z.output}: ${z.zeros.length ? z.zeros.map((c) => (c.im ? `${num(c.re, 5)} ${c.im < 0 ? '−' : '+'} ${num(Math.abs(c.im), 5)}j` : num(c.re, 5))).join(', ') : 'none'}`);
  }
  if (lin.discrete) {
    const d = lin.discrete;
    out.push('', `sampled every ${num(d.period, 6)} s (${d.method}):`, matrix('Ad', d.A, lin.states, lin.states));
    if (lin.inputs.length) out.push(matrix('Bd', d.B, lin.states, lin.inputs));
    out.push(`discrete poles: ${d.poles.map((p) => (p.im ? `${num(p.re, 5)} ${p.im < 0 ? '−' : '+'} ${num(Math.abs(p.im), 5)}j` : num(p.re, 5))).join(', ') || 'none'}; verdict: ${d.verdict}`);
  }
  const res = residualLines(lin);
  if (res.length) out.push('', ...res);
  return out.join('\n');
}

function loopText(lin: LoopLinearization): string {
  const out = [`loop ${lin.loop}, closed loop at its operating point`];
  out.push('  ' + lin.states.map((v) => `${v.name} = ${num(v.value, 6)}${v.unit ? ` [${v.unit}]` : ''}`).join(', '));
  out.push(...common(lin, lin.inputs));
  if (lin.open.length) out.push(`open-loop plant poles: ${lin.open.map((p) => (p.im ? `${num(p.re, 5)} ${p.im < 0 ? '−' : '+'} ${num(Math.abs(p.im), 5)}j` : num(p.re, 5))).join(', ')}`);
  if (lin.margins.length) {
    out.push('', 'margins, loop broken at each controlled plant input:');
    out.push(
      table(
        ['input', 'gain margin', '[dB]', 'at [rad/s]', 'phase margin [deg]', 'at [rad/s]', 'delay margin [s]', 'peak |S|', 'lower gain'],
        lin.margins.map((m) => [
          m.input,
          m.stable ? num(m.gain ?? Infinity, 5) : '—',
          m.stable ? num(m.gainDb ?? Infinity, 4) : '—',
          num(m.gainMarginFrequency, 5),
          num(m.phase, 5),
          num(m.phaseMarginFrequency, 5),
          m.stable ? num(m.delay ?? Infinity, 4) : '—',
          num(m.sensitivityPeak, 4),
          m.lowerGain !== undefined ? num(m.lowerGain, 4) : '—',
        ]),
      ),
    );
    for (const m of lin.margins) {
      if (m.openLoopUnstablePoles) out.push(`  ${m.input}: ${m.openLoopUnstablePoles} open-loop pole${m.openLoopUnstablePoles > 1 ? 's' : ''} in the right half-plane, ${m.encirclements} counter-clockwise encirclement${m.encirclements === 1 ? '' : 's'} of −1: closed loop ${m.stable ? 'stable' : 'unstable'}`);
      if (m.others) out.push(`  ${m.input}: gain crossings at ${m.others.gainCrossings.map((c) => `${num(c.frequency, 4)} rad/s (${num(c.phase, 4)}°)`).join(', ')}`);
    }
  }
  const res = residualLines(lin);
  if (res.length) out.push('', ...res);
  for (const n of lin.notes) out.push(`note: ${n}`);
  return out.join('\n');
}

/** JSON with infinities as null (JSON has none). */
const json = (v: unknown): string => JSON.stringify(v, (_k, x) => (typeof x === 'number' && !Number.isFinite(x) ? null : x), 2);

function report(io: CliIO, file: string, a: Analysis): boolean {
  const diags = [...a.diagnostics, ...checkOperatingPoints(a), ...checkLoopStability(a)];
  for (const d of locate(file, a.text, diags)) io.err(diagnosticLine(d));
  return diags.some((d) => d.severity === 'error');
}

export const command: CliCommand = {
  name: 'linearize',
  summary: 'linear model, poles and margins of a system or a loop at its operating point',
  usage: `loopwright linearize FILE --system NAME [--point NAME] [--json]
loopwright linearize FILE --loop NAME [--json]

--system  A, B, C, D of a plant or controller at an operating point (default: its first; a system
          without one is linearized at zero states and inputs), its poles, verdict and zeros
--loop    the closed loop at its operating point (from the signals to every output), its poles,
          and the margins of the loop broken at each plant input a controller drives
--json    print the same as JSON (infinite margins are null)
Diagnostics go to standard error. Exit status: 0 done, 1 the model has errors or cannot be
linearized, 2 usage error or unreadable file.`,
  async run(args, io) {
    const p = parseArgs(args, { valued: ['system', 'point', 'loop'], booleans: ['json'] });
    if (p.positional.length !== 1) throw new UsageError(p.positional.length ? 'give one file' : 'no file given');
    const system = flagString(p, 'system'), loop = flagString(p, 'loop'), point = flagString(p, 'point');
    if (!!system === !!loop) throw new UsageError('give either --system NAME or --loop NAME');
    if (point && !system) throw new UsageError('--point goes with --system');
    const file = p.positional[0];
    const src = readSource(file, io, 'linearize');
    if (src === undefined) return EXIT_USAGE;
    const a = analyze(src);
    const known = system ? a.symbols.systems.has(system) : a.symbols.loops.has(loop!);
    if (!known) {
      const have = system ? [...a.symbols.systems.keys()] : [...a.symbols.loops.keys()];
      io.err(`loopwright linearize: ${file} has no ${system ? 'plant or controller' : 'loop'} named '${system ?? loop}'${have.length ? ` (it has ${have.join(', ')})` : ''}`);
      return EXIT_USAGE;
    }
    if (report(io, file, a)) return EXIT_FAIL;
    const lin = system ? linearizeSystem(a, system, point) : linearizeLoop(a, loop);
    if (!lin.ok) {
      io.err(`loopwright linearize: ${lin.problem ?? 'cannot linearize'}`);
      return EXIT_FAIL;
    }
    if (p.flags.has('json')) io.out(json(lin));
    else io.out(system ? systemText(lin as SystemLinearization) : loopText(lin as LoopLinearization));
    return EXIT_OK;
  },
};
