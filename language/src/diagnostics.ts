// Plain-data diagnostics shared by every layer. Offsets are UTF-16 code-unit offsets into the
// document text, `end` exclusive. Nothing here knows about editors or protocols.

export interface Span {
  start: number;
  end: number;
}

export type Severity = 'error' | 'warning' | 'info';

export interface TextEdit {
  span: Span;
  newText: string;
}

/** A quick fix as plain data: the server turns it into a code action. */
export interface QuickFix {
  title: string;
  edits: TextEdit[];
  /** The fix the user most likely wants (shown first, applied by "fix all"). */
  preferred?: boolean;
}

export interface RelatedInfo {
  span: Span;
  message: string;
}

export interface Diagnostic {
  code: string;
  severity: Severity;
  message: string;
  span: Span;
  related?: RelatedInfo[];
  fixes?: QuickFix[];
}

/** Collects diagnostics; checks receive one and call `report`. */
export class DiagnosticSink {
  readonly items: Diagnostic[] = [];

  report(code: string, severity: Severity, span: Span, message: string, extra?: { related?: RelatedInfo[]; fixes?: QuickFix[] }): Diagnostic {
    const d: Diagnostic = { code, severity, message, span: safeSpan(span) };
    if (extra?.related?.length) d.related = extra.related.map((r) => ({ span: safeSpan(r.span), message: r.message }));
    if (extra?.fixes?.length) d.fixes = extra.fixes;
    this.items.push(d);
    return d;
  }

  error(code: string, span: Span, message: string, extra?: { related?: RelatedInfo[]; fixes?: QuickFix[] }): Diagnostic {
    return this.report(code, 'error', span, message, extra);
  }

  warning(code: string, span: Span, message: string, extra?: { related?: RelatedInfo[]; fixes?: QuickFix[] }): Diagnostic {
    return this.report(code, 'warning', span, message, extra);
  }

  info(code: string, span: Span, message: string, extra?: { related?: RelatedInfo[]; fixes?: QuickFix[] }): Diagnostic {
    return this.report(code, 'info', span, message, extra);
  }
}

/** Recovered syntax nodes may carry NaN offsets; never let them escape. */
export function safeSpan(span: Span | undefined): Span {
  if (!span) return { start: 0, end: 0 };
  const s = Number.isFinite(span.start) ? Math.max(0, span.start) : 0;
  const e = Number.isFinite(span.end) ? Math.max(s, span.end) : s;
  return { start: s, end: e };
}

export function joinSpans(a: Span, b: Span): Span {
  return { start: Math.min(a.start, b.start), end: Math.max(a.end, b.end) };
}

/** 0-based line and character of an offset (for the CLI; the server has its own converter). */
export function lineIndex(text: string): number[] {
  const starts = [0];
  for (let i = 0; i < text.length; i++) if (text.charCodeAt(i) === 10) starts.push(i + 1);
  return starts;
}

export function positionAt(starts: number[], offset: number): { line: number; character: number } {
  let lo = 0;
  let hi = starts.length - 1;
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if (starts[mid] <= offset) lo = mid;
    else hi = mid - 1;
  }
  return { line: lo, character: offset - starts[lo] };
}
