// Code lenses above each loop: "▶ Simulate", "Compare linear" (with `compare linear`) and
// "Sweep (N runs)" (with a sweep). Their titles come from the last parse without syntax errors,
// so they do not flicker or vanish while a line is half typed; their positions come from the
// current text. The commands belong to the client (Commands in protocol.ts), args [uri, loop].
// No run lenses in an untrusted workspace.

import type { Analysis } from '../../language/src/analysis';
import { Commands } from '../../language/src/protocol';
import type { LoopBlock } from '../../language/src/syntax/ast';
import type { LensInfo } from './convert';

interface LoopLensPlan {
  loop: string;
  compare: boolean;
  /** Number of sweep runs, or undefined without a sweep. */
  sweepRuns?: number;
}

function sweepRuns(loop: LoopBlock): number | undefined {
  let runs: number | undefined;
  for (const m of loop.members) {
    if (m.kind === 'sweepStart') runs = (runs ?? 0) + m.values.length;
    else if (m.kind === 'sweepParam') {
      const n = m.steps.kind === 'number' ? m.steps.value : NaN;
      runs = (runs ?? 0) + (Number.isInteger(n) && n > 0 ? n : 0);
    }
  }
  return runs;
}

export function planLenses(a: Analysis): LoopLensPlan[] {
  return a.ast.blocks
    .filter((b): b is LoopBlock => b.kind === 'loop' && !b.name.missing && b.name.name !== '')
    .map((b) => ({ loop: b.name.name, compare: b.members.some((m) => m.kind === 'compare'), sweepRuns: sweepRuns(b) }));
}

/** Where `loop NAME` stands in the current text. */
function loopHeaders(a: Analysis): Map<string, { start: number; end: number }> {
  const out = new Map<string, { start: number; end: number }>();
  const toks = a.tokens;
  for (let i = 0; i + 1 < toks.length; i++) {
    if (toks[i].tokenType.name !== 'Kw_loop') continue;
    const name = toks[i + 1];
    if (name.tokenType.name !== 'Ident' && !name.tokenType.name.startsWith('Kw_')) continue;
    if (!out.has(name.image)) out.set(name.image, { start: toks[i].startOffset, end: name.startOffset + name.image.length });
  }
  return out;
}

/**
 * @param current the analysis of the current text
 * @param lastGood the last analysis without syntax errors (may be `current`)
 */
export function codeLenses(uri: string, current: Analysis, lastGood: Analysis | undefined, clean: boolean): LensInfo[] {
  const plans = clean || !lastGood ? planLenses(current) : planLenses(lastGood);
  const headers = loopHeaders(current);
  const out: LensInfo[] = [];
  for (const p of plans) {
    const span = headers.get(p.loop);
    if (!span) continue;
    const args = [uri, p.loop];
    out.push({ span, title: '▶ Simulate', command: Commands.simulate, args });
    if (p.compare) out.push({ span, title: 'Compare linear', command: Commands.compareLinear, args });
    if (p.sweepRuns !== undefined) out.push({ span, title: `Sweep (${p.sweepRuns} run${p.sweepRuns === 1 ? '' : 's'})`, command: Commands.sweep, args });
  }
  return out;
}
