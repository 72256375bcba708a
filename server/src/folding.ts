// Folding: every brace pair over several lines (blocks, operating points, pid and linear
// entries, simulate options), multi-line brackets (matrices, tables), and runs of two or more
// whole-line comments.

import type { Analysis } from '../../language/src/analysis';
import type { FoldInfo } from './convert';

export function foldingRanges(a: Analysis): FoldInfo[] {
  const out: FoldInfo[] = [];
  const stack: Array<{ open: string; start: number }> = [];
  const closes: Record<string, string> = { RCurly: 'LCurly', RBracket: 'LBracket', RParen: 'LParen' };
  for (const t of a.tokens) {
    const n = t.tokenType.name;
    if (n === 'LCurly' || n === 'LBracket' || n === 'LParen') stack.push({ open: n, start: t.startOffset });
    else if (closes[n]) {
      // Pop to the matching opener; unmatched closers are skipped.
      let i = stack.length - 1;
      while (i >= 0 && stack[i].open !== closes[n]) i--;
      if (i < 0) continue;
      const open = stack[i];
      stack.length = i;
      out.push({ start: open.start, end: t.startOffset, kind: 'region' });
    }
  }
  // Comment runs: comments that are alone on consecutive lines.
  const text = a.text;
  let runStart = -1;
  let runEnd = -1;
  let prevLineEnd = -1;
  const flush = () => {
    if (runStart >= 0 && text.slice(runStart, runEnd).includes('\n')) out.push({ start: runStart, end: runEnd, kind: 'comment' });
    runStart = -1;
  };
  for (const c of a.ast.comments) {
    const lineStart = text.lastIndexOf('\n', c.span.start - 1) + 1;
    const alone = text.slice(lineStart, c.span.start).trim() === '';
    if (!alone) {
      flush();
      continue;
    }
    const adjacent = runStart >= 0 && text.slice(prevLineEnd, lineStart).trim() === '' && text.slice(prevLineEnd, lineStart).split('\n').length === 2;
    if (!adjacent) flush();
    if (runStart < 0) runStart = c.span.start;
    runEnd = c.span.end;
    prevLineEnd = c.span.end;
  }
  flush();
  return out;
}
