// Text helpers for human-friendly CLI output: aligned tables and diagnostic lines.

import type { Diagnostic } from '../diagnostics';
import { lineIndex, positionAt } from '../diagnostics';

export interface LocatedDiagnostic {
  file: string;
  line: number;
  column: number;
  endLine: number;
  endColumn: number;
  severity: Diagnostic['severity'];
  code: string;
  message: string;
}

/** 1-based lines and columns, as editors and compilers print them. */
export function locate(file: string, text: string, diags: Diagnostic[]): LocatedDiagnostic[] {
  const starts = lineIndex(text);
  return diags
    .slice()
    .sort((a, b) => a.span.start - b.span.start || a.code.localeCompare(b.code))
    .map((d) => {
      const s = positionAt(starts, d.span.start);
      const e = positionAt(starts, d.span.end);
      return { file, line: s.line + 1, column: s.character + 1, endLine: e.line + 1, endColumn: e.character + 1, severity: d.severity, code: d.code, message: d.message };
    });
}

export function diagnosticLine(d: LocatedDiagnostic): string {
  return `${d.file}:${d.line}:${d.column}: ${d.severity} ${d.code} ${d.message}`;
}

/** Left-aligned text columns, right-aligned numeric ones. */
export function table(header: string[], rows: string[][]): string {
  const widths = header.map((h, i) => Math.max(h.length, ...rows.map((r) => (r[i] ?? '').length)));
  const numeric = header.map((_, i) => rows.length > 0 && rows.every((r) => /^[-+]?[\d.]+(e[-+]?\d+)?( |$)/i.test(r[i] ?? '') || (r[i] ?? '') === '—'));
  const fmt = (r: string[]) => r.map((c, i) => (numeric[i] ? (c ?? '').padStart(widths[i]) : (c ?? '').padEnd(widths[i]))).join('  ').trimEnd();
  return [fmt(header), widths.map((w) => '─'.repeat(w)).join('  '), ...rows.map(fmt)].join('\n');
}

/** A number with a sensible count of significant digits for tables. */
export function num(x: number | null | undefined, digits = 4): string {
  if (x === null || x === undefined || Number.isNaN(x)) return '—';
  if (!Number.isFinite(x)) return x > 0 ? '∞' : '−∞';
  if (x === 0) return '0';
  const a = Math.abs(x);
  if (a >= 1e-3 && a < 1e6) return String(Number(x.toPrecision(digits)));
  return x.toExponential(digits - 1);
}
