// The linear-analysis part of hovers: matrices as tables labelled with names and units, pole
// tables, verdicts, margins. Everything comes from the linear facade through layers.ts (memoised
// per analysis, so hovers, hints and the CLI agree). When a model cannot be linearized the hover
// says why in one line and keeps its other parts.

import type { Analysis } from '../../language/src/analysis';
import type { LoopSymbol, SystemSymbol } from '../../language/src/check/symbols';
import type { Linearization, SystemLinearization, VarEntry } from '../../language/src/linear/linearize';
import type { PoleInfo } from '../../language/src/protocol';
import type { OperatingPointDecl } from '../../language/src/syntax/ast';
import { code, complex, esc, num, table } from './format-md';
import { loopLinearOf, plantLinearOf } from './layers';

type Mat = number[][];

const label = (v: VarEntry) => (v.unit ? `${v.name} [${v.unit}]` : v.name);

/** One matrix as a table: rows and columns labelled with their names and units. */
export function matrixTable(name: string, M: Mat, rows: VarEntry[], cols: VarEntry[]): string {
  if (rows.length === 0 || cols.length === 0) return `**${name}** is empty (${rows.length}×${cols.length})`;
  const body = rows.map((r, i) => [`**${esc(label(r))}**`, ...cols.map((_, j) => num(M[i]?.[j] ?? NaN, 5))]);
  return `**${name}**\n\n${table([' ', ...cols.map((c) => esc(label(c)))], body)}`;
}

function matrices(l: Pick<Linearization, 'states' | 'inputs' | 'outputs'>, m: { A: Mat; B: Mat; C: Mat; D: Mat }, suffix = ''): string {
  return [
    matrixTable(`A${suffix}`, m.A, l.states, l.states),
    matrixTable(`B${suffix}`, m.B, l.states, l.inputs),
    matrixTable(`C${suffix}`, m.C, l.outputs, l.states),
    matrixTable(`D${suffix}`, m.D, l.outputs, l.inputs),
  ].join('\n\n');
}

export function polesTable(poles: PoleInfo[], discrete = false): string {
  if (!poles.length) return 'No poles (no states)';
  const rows = poles.map((p) => [complex(p.re, p.im), num(p.damping, 3), Number.isFinite(p.natural) ? num(p.natural, 4) : '∞', p.timeConstant === null ? '—' : num(p.timeConstant, 4)]);
  return table([discrete ? 'pole (z)' : 'pole', 'damping ζ', 'natural ωn [rad/s]', 'time constant [s]'], rows);
}

function dominantLine(l: Linearization): string | undefined {
  const d = l.dominant[0];
  if (!d) return undefined;
  const pair = l.dominant.length > 1 || d.im !== 0 ? 'pair' : 'pole';
  return `**Dominant ${pair}**: ${complex(d.re, Math.abs(d.im))}${d.im !== 0 ? ' (±)' : ''} · ζ ${num(d.damping, 3)} · ωn ${num(d.natural, 4)} rad/s`;
}

function residualLine(l: Linearization): string | undefined {
  if (!l.residual.length) return undefined;
  const all = l.residual.every((r) => r.negligible);
  const parts = l.residual.map((r) => `${code(`${r.state}'`)} = ${num(r.value, 4)}${r.unit ? ` ${r.unit}` : ''}`);
  return `**Equilibrium residual**: ${parts.join(', ')} — ${all ? 'an equilibrium' : '**not an equilibrium**'}`;
}

/** DC gain D − C A⁻¹ B in display units; null entries where A is singular (integrators). */
export function dcGain(l: { A: Mat; B: Mat; C: Mat; D: Mat }): Array<Array<number | null>> {
  const n = l.A.length;
  const m = l.B[0]?.length ?? l.D[0]?.length ?? 0;
  const p = l.C.length || l.D.length;
  if (n === 0) return l.D.map((r) => r.slice());
  // Solve A X = B by Gaussian elimination with partial pivoting.
  const M = l.A.map((r, i) => [...r, ...(l.B[i] ?? [])]);
  const scale = Math.max(1, ...l.A.flat().map(Math.abs));
  for (let c = 0; c < n; c++) {
    let piv = c;
    for (let r = c + 1; r < n; r++) if (Math.abs(M[r][c]) > Math.abs(M[piv][c])) piv = r;
    if (Math.abs(M[piv][c]) <= 1e-12 * scale) return Array.from({ length: p }, () => Array.from({ length: m }, () => null));
    [M[c], M[piv]] = [M[piv], M[c]];
    for (let r = 0; r < n; r++) {
      if (r === c) continue;
      const f = M[r][c] / M[c][c];
      if (f !== 0) for (let k = c; k < n + m; k++) M[r][k] -= f * M[c][k];
    }
  }
  const X = M.map((r, i) => r.slice(n).map((v) => v / M[i][i]));
  return Array.from({ length: p }, (_, i) => Array.from({ length: m }, (_, j) => (l.D[i]?.[j] ?? 0) - l.C[i].reduce((acc, cij, k) => acc + cij * X[k][j], 0)));
}

function gainUnit(out: string, inp: string): string {
  if (!inp) return out;
  if (!out) return `1/${/[*/]/.test(inp) ? `(${inp})` : inp}`;
  return `${out}/${/[*/]/.test(inp) ? `(${inp})` : inp}`;
}

function plantMarkdown(p: SystemLinearization): string {
  if (!p.ok) return `_Linear analysis: ${esc(p.problem ?? 'not available')}_`;
  const parts = [p.point ? `Linearized at ${code(p.point)}` : 'Linearized at zero states and inputs (no operating point)', matrices(p, p), `**Open-loop poles** — ${p.verdict}\n\n${polesTable(p.poles)}`];
  const res = residualLine(p);
  if (res) parts.push(res);
  return parts.join('\n\n');
}

function controllerMarkdown(c: SystemLinearization): string {
  if (!c.ok) return `_Linear analysis: ${esc(c.problem ?? 'not available')}_`;
  const parts = [`**Realization** (state space, display units)`, matrices(c, c), `**Poles** — ${c.verdict}\n\n${polesTable(c.poles)}`];
  const zeros = c.zeros.filter((z) => z.zeros.length);
  parts.push(zeros.length ? `**Zeros**: ${zeros.map((z) => `${esc(z.output)}/${esc(z.input)}: ${z.zeros.map((x) => complex(x.re, x.im)).join(', ')}`).join('; ')}` : '**Zeros**: none');
  const g = dcGain(c);
  const gains: string[] = [];
  c.outputs.forEach((o, i) => c.inputs.forEach((u, j) => gains.push(`${esc(o.name)}/${esc(u.name)} = ${g[i]?.[j] === null ? '∞ (integrating)' : `${num(g[i][j] as number, 5)} ${code(gainUnit(o.unit, u.unit) || '1')}`}`)));
  if (gains.length) parts.push(`**DC gain**: ${gains.join(', ')}`);
  if (c.discrete) {
    const d = c.discrete;
    parts.push(`**Sampled** every ${num(d.period, 4)} s by ${d.method} — ${d.verdict}`);
    parts.push(matrices(c, d, 'd'));
    parts.push(polesTable(d.poles, true));
  }
  return parts.join('\n\n');
}

export function systemHover(a: Analysis, sys: SystemSymbol): string | undefined {
  const lin = plantLinearOf(a, sys);
  return sys.kind === 'plant' ? plantMarkdown(lin) : controllerMarkdown(lin);
}

export function pointHover(a: Analysis, sys: SystemSymbol, point: OperatingPointDecl): string | undefined {
  if (sys.kind !== 'plant') return undefined;
  return plantMarkdown(plantLinearOf(a, sys, point.name.name));
}

export function loopHover(a: Analysis, loop: LoopSymbol): string | undefined {
  const l = loopLinearOf(a, loop);
  if (!l.ok) return `_Linear analysis: ${esc(l.problem ?? 'not available')}_`;
  const parts = [`**Closed loop** at its operating point: **${l.verdict}**`, polesTable(l.poles)];
  const dom = dominantLine(l);
  if (dom) parts.push(dom);
  parts.push(l.settling !== null ? `**Settling (2 %)** ≈ ${num(l.settling, 3)} s` : '**Settling**: no estimate (not stable)');
  if (l.margins.length) {
    parts.push(
      '**Margins** (loop broken at each input)\n\n' +
        table(
          ['broken at', 'gain margin', 'phase margin', 'crossover [rad/s]', 'delay margin [s]'],
          l.margins.map((m) => [
            esc(m.input),
            m.problem ? esc(m.problem) : m.gainDb === null ? '∞' : `${num(m.gainDb, 3)} dB`,
            m.phase === null ? '∞' : `${num(m.phase, 3)}°`,
            m.phaseMarginFrequency === null ? '—' : num(m.phaseMarginFrequency, 4),
            m.delay === null ? '—' : num(m.delay, 3),
          ]),
        ),
    );
  }
  if (l.open.length) parts.push(`**Open-loop plant poles**: ${l.open.map((p) => complex(p.re, p.im)).join(', ')}`);
  for (const n of l.notes) parts.push(`_${esc(n)}_`);
  return parts.join('\n\n');
}
