// Inlay hints: the inferred unit after a `let` and after a derived `param` (one computed from
// other values rather than written as a literal), e.g. `let inertia: kg*m^2 = …`; and after a
// loop's name, its closed-loop verdict (`stable · ζ 0.42 · ts ≈ 1.8 s`) from linear analysis.

import type { Analysis } from '../../language/src/analysis';
import type { Span } from '../../language/src/diagnostics';
import type { Expr } from '../../language/src/syntax/ast';
import type { InlayInfo } from './convert';
import { num } from './format-md';
import { loopLinearOf, unitsOf } from './layers';

/** A value written as a literal needs no hint: its unit is right there. */
function isLiteral(e: Expr): boolean {
  if (e.kind === 'number' || e.kind === 'quantity') return true;
  if (e.kind === 'unary') return isLiteral(e.operand);
  return false;
}

const inside = (s: Span, range: Span) => s.end >= range.start && s.start <= range.end;

export function inlayHints(a: Analysis, range: Span): InlayInfo[] {
  const out: InlayInfo[] = [];
  const units = unitsOf(a);
  for (const b of a.ast.blocks) {
    if (!inside(b.span, range)) continue;
    if (b.kind === 'loop') {
      const loop = a.symbols.loops.get(b.name.name);
      const lin = loop && loop.block === b ? loopLinearOf(a, loop) : undefined;
      if (lin?.ok && !b.name.missing) {
        const parts: string[] = [lin.verdict];
        const dom = lin.dominant[0];
        if (dom && dom.im !== 0) parts.push(`ζ ${num(dom.damping, 2)}`);
        if (lin.settling !== null) parts.push(`ts ≈ ${num(lin.settling, 2)} s`);
        out.push({ offset: b.name.span.end, label: parts.join(' · '), kind: 'type', paddingLeft: true, tooltip: 'Closed loop at its operating point (linearized)' });
      }
      for (const m of b.members) {
        if (m.kind !== 'param' || isLiteral(m.value) || !units) continue;
        const text = units.inferredText(m);
        if (text && inside(m.name.span, range)) out.push({ offset: m.name.span.end, label: `: ${text}`, kind: 'type' });
      }
      continue;
    }
    if (!units) continue;
    for (const m of b.members) {
      if (m.kind !== 'let' && !(m.kind === 'param' && !isLiteral(m.value))) continue;
      if (!inside(m.name.span, range) || m.name.missing) continue;
      const text = units.inferredText(m);
      if (text) out.push({ offset: m.name.span.end, label: `: ${text}`, kind: 'type' });
    }
  }
  return out;
}
