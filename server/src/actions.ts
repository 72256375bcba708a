// Code actions: the quick fixes the language attaches to its diagnostics (insert or replace a
// unit, rewrite an operating point with the input that holds it, ...). Fixes are always taken
// from the analysis of the current version, so their edits fit the text they apply to.

import type { Diagnostic, QuickFix, Span } from '../../language/src/diagnostics';
import type { DocState } from './documents';

export interface FixFor {
  diagnostic: Diagnostic;
  fix: QuickFix;
}

const overlaps = (a: Span, b: Span) => a.start <= b.end && b.start <= a.end;

/**
 * Fixes for the diagnostics the client names (by code and span), or — when it names none — for
 * every diagnostic touching the range.
 */
export function quickFixes(state: DocState, diagnostics: Diagnostic[], range: Span, asked: Array<{ code: string; span: Span }>): FixFor[] {
  const withFixes = diagnostics.filter((d) => d.fixes?.length);
  const chosen = asked.length
    ? withFixes.filter((d) => asked.some((x) => x.code === d.code && x.span.start === d.span.start && x.span.end === d.span.end))
    : withFixes.filter((d) => overlaps(d.span, range));
  const out: FixFor[] = [];
  const seen = new Set<string>();
  for (const d of chosen) {
    for (const fix of d.fixes ?? []) {
      const key = `${fix.title}|${fix.edits.map((e) => `${e.span.start}:${e.span.end}:${e.newText}`).join(';')}`;
      if (seen.has(key)) continue;
      if (!fix.edits.every((e) => e.span.start >= 0 && e.span.end <= state.analysis.text.length && e.span.start <= e.span.end)) continue;
      seen.add(key);
      out.push({ diagnostic: d, fix });
    }
  }
  return out;
}
