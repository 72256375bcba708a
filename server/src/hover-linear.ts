// The linear-analysis part of hovers: matrices as tables labelled with names and units, pole
// tables, verdicts, margins. Everything comes from the linear layer through layers.ts; when the
// layer has nothing for a block these return undefined and the hover keeps its other parts.

import type { Analysis } from '../../language/src/analysis';
import type { LoopSymbol, SystemSymbol } from '../../language/src/check/symbols';
import type { OperatingPointDecl } from '../../language/src/syntax/ast';
import type { PoleInfo } from '../../language/src/protocol';
import { code, complex, esc, num, table } from './format-md';
import { controllerOf, loopLinearOf, plantLinearOf, type LabelledMatrices, type NamedUnit, type PlantLinear } from './layers';

const label = (v: NamedUnit) => (v.unit ? `${v.name} [${v.unit}]` : v.name);

/** One matrix as a table: rows and columns labelled with their names and units. */
export function matrixTable(name: string, M: ArrayLike<number>, rows: NamedUnit[], cols: NamedUnit[]): string {
  if (rows.length === 0 || cols.length === 0) return `**${name}** is empty (${rows.length}×${cols.length})`;
  const body = rows.map((r, i) => [`**${esc(label(r))}**`, ...cols.map((_, j) => num(M[i * cols.length + j], 5))]);
  return `**${name}**\n\n${table([' ', ...cols.map((c) => esc(label(c)))], body)}`;
}

export function matricesMarkdown(m: LabelledMatrices): string {
  return [
    matrixTable('A', m.A, m.states, m.states),
    matrixTable('B', m.B, m.states, m.inputs),
    matrixTable('C', m.C, m.outputs, m.states),
    matrixTable('D', m.D, m.outputs, m.inputs),
  ].join('\n\n');
}

export function polesTable(poles: PoleInfo[], discrete = false): string {
  if (!poles.length) return 'No poles';
  const rows = poles.map((p) => [complex(p.re, p.im), num(p.damping, 3), Number.isFinite(p.natural) ? num(p.natural, 4) : '∞', p.timeConstant === null ? '—' : num(p.timeConstant, 4)]);
  return table([discrete ? 'pole (z)' : 'pole', 'damping ζ', 'natural ωn [rad/s]', 'time constant [s]'], rows);
}

function plantMarkdown(p: PlantLinear): string {
  const parts = [`Linearized at ${code(p.point)}`, matricesMarkdown(p), `**Open-loop poles** (${p.verdict})\n\n${polesTable(p.poles)}`];
  if (p.residual.length) {
    const worst = p.residual.map((r) => `${code(`${r.state}'`)} = ${num(r.value, 4)}${r.unit ? ` ${r.unit}` : ''}`).join(', ');
    parts.push(`**Equilibrium residual**: ${worst}${p.equilibrium ? ' (an equilibrium)' : ' — **not an equilibrium**'}`);
  }
  return parts.join('\n\n');
}

export function systemHover(a: Analysis, sys: SystemSymbol): string | undefined {
  if (sys.kind === 'plant') {
    const p = plantLinearOf(a, sys);
    return p ? plantMarkdown(p) : undefined;
  }
  const c = controllerOf(a, sys);
  if (!c) return undefined;
  const parts = [`**Realization**\n\n${matricesMarkdown(c)}`, `**Poles**\n\n${polesTable(c.poles)}`];
  parts.push(c.zeros.length ? `**Zeros**: ${c.zeros.map((z) => complex(z.re, z.im)).join(', ')}` : '**Zeros**: none');
  if (c.dcGain) parts.push(`**DC gain**: ${c.dcGain.map((g) => `${num(g.value, 5)}${g.unit ? ` ${code(g.unit)}` : ''} (${esc(g.from)} → ${esc(g.to)})`).join(', ')}`);
  if (c.sampled) {
    parts.push(`**Sampled** every ${num(c.sampled.period, 4)} s by ${c.sampled.method}`);
    parts.push(matricesMarkdown({ ...c, A: c.sampled.Ad, B: c.sampled.Bd, C: c.sampled.Cd, D: c.sampled.Dd }).replace(/\*\*([ABCD])\*\*/g, '**$1d**'));
  }
  return parts.join('\n\n');
}

export function pointHover(a: Analysis, sys: SystemSymbol, point: OperatingPointDecl): string | undefined {
  if (sys.kind !== 'plant') return undefined;
  const p = plantLinearOf(a, sys, point.name.name);
  return p ? plantMarkdown(p) : undefined;
}

export function loopHover(a: Analysis, loop: LoopSymbol): string | undefined {
  const l = loopLinearOf(a, loop);
  if (!l) return undefined;
  const parts = [`**Closed loop** at ${l.around.map(code).join(', ') || 'zero'}: **${l.verdict}**`, polesTable(l.poles)];
  if (l.dominant) parts.push(`**Dominant**: ${complex(l.dominant.re, l.dominant.im)} (ζ ${num(l.dominant.damping, 3)}, ωn ${num(l.dominant.natural, 4)} rad/s)`);
  if (l.settling !== null) parts.push(`**Settling (2 %)** ≈ ${num(l.settling, 3)} s`);
  if (l.margins.length) {
    parts.push(
      table(
        ['loop broken at', 'gain margin', 'phase margin', 'crossover [rad/s]'],
        l.margins.map((m) => [esc(m.at), m.gainDb === null ? '∞' : `${num(m.gainDb, 3)} dB`, m.phaseDeg === null ? '∞' : `${num(m.phaseDeg, 3)}°`, m.crossover === null ? '—' : num(m.crossover, 4)]),
      ),
    );
  }
  return parts.join('\n\n');
}
