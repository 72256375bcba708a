// The one place where the language's plain data (UTF-16 offsets, spans, diagnostics, quick
// fixes) and the features' editor-shaped results become LSP types. Feature files compute in
// offsets and strings; main.ts passes their results through here.

import {
  CodeAction,
  CodeActionKind,
  CodeLens,
  CompletionItem,
  CompletionItemKind,
  DiagnosticRelatedInformation,
  DiagnosticSeverity,
  DiagnosticTag,
  DocumentSymbol,
  FoldingRange,
  FoldingRangeKind,
  InlayHint,
  InlayHintKind,
  InsertTextFormat,
  Location,
  MarkupKind,
  SymbolKind,
  TextEdit as LspTextEdit,
  type Diagnostic as LspDiagnostic,
  type Hover,
  type Position,
  type Range,
  type SemanticTokens,
  type WorkspaceEdit,
} from 'vscode-languageserver/node';
import type { Diagnostic, QuickFix, Span, TextEdit } from '../../language/src/diagnostics';

// ---------- positions ----------

/**
 * Offsets ↔ LSP positions for one text. Line breaks are `\n`, `\r\n` and a lone `\r`, as in
 * the protocol; characters are UTF-16 code units, which is what the language's offsets are.
 */
export class LineMap {
  readonly starts: number[];
  constructor(readonly text: string) {
    const starts = [0];
    for (let i = 0; i < text.length; i++) {
      const c = text.charCodeAt(i);
      if (c === 13 /* \r */) {
        if (text.charCodeAt(i + 1) === 10) i++;
        starts.push(i + 1);
      } else if (c === 10) starts.push(i + 1);
    }
    this.starts = starts;
  }

  get lineCount(): number {
    return this.starts.length;
  }

  /** The line holding an offset (clamped to the text). */
  lineOf(offset: number): number {
    const o = Math.max(0, Math.min(this.text.length, Number.isFinite(offset) ? offset : 0));
    let lo = 0;
    let hi = this.starts.length - 1;
    while (lo < hi) {
      const mid = (lo + hi + 1) >> 1;
      if (this.starts[mid] <= o) lo = mid;
      else hi = mid - 1;
    }
    return lo;
  }

  position(offset: number): Position {
    const o = Math.max(0, Math.min(this.text.length, Number.isFinite(offset) ? offset : 0));
    const line = this.lineOf(o);
    return { line, character: o - this.starts[line] };
  }

  /** End of the line's content, before its line break. */
  lineEnd(line: number): number {
    if (line + 1 >= this.starts.length) return this.text.length;
    let end = this.starts[line + 1];
    if (end > 0 && this.text.charCodeAt(end - 1) === 10) end--;
    if (end > 0 && this.text.charCodeAt(end - 1) === 13) end--;
    return Math.max(this.starts[line], end);
  }

  /** Offset of a position; out-of-range lines and characters are clamped, never thrown on. */
  offset(pos: Position | undefined): number {
    if (!pos || !Number.isFinite(pos.line) || !Number.isFinite(pos.character)) return 0;
    if (pos.line < 0) return 0;
    if (pos.line >= this.starts.length) return this.text.length;
    const start = this.starts[pos.line];
    return Math.min(start + Math.max(0, Math.floor(pos.character)), this.lineEnd(pos.line));
  }

  range(span: Span): Range {
    return { start: this.position(span.start), end: this.position(Math.max(span.start, span.end)) };
  }

  spanOf(range: Range): Span {
    const a = this.offset(range.start);
    const b = this.offset(range.end);
    return { start: Math.min(a, b), end: Math.max(a, b) };
  }
}

// ---------- diagnostics ----------

const SEVERITY: Record<Diagnostic['severity'], DiagnosticSeverity> = {
  error: DiagnosticSeverity.Error,
  warning: DiagnosticSeverity.Warning,
  info: DiagnosticSeverity.Information,
};

/** Codes whose text marks something redundant or shadowed (shown faded). */
const UNNECESSARY = new Set(['LW209']);

export const SOURCE = 'loopwright';

export function toDiagnostic(d: Diagnostic, lines: LineMap, uri: string): LspDiagnostic {
  const out: LspDiagnostic = {
    range: lines.range(d.span),
    severity: SEVERITY[d.severity] ?? DiagnosticSeverity.Error,
    code: d.code,
    source: SOURCE,
    message: d.message,
  };
  if (d.related?.length) {
    out.relatedInformation = d.related.map((r) => DiagnosticRelatedInformation.create(Location.create(uri, lines.range(r.span)), r.message));
  }
  if (UNNECESSARY.has(d.code)) out.tags = [DiagnosticTag.Unnecessary];
  if (d.fixes?.length) out.data = { fixes: d.fixes.length };
  return out;
}

// ---------- edits and actions ----------

export function toTextEdit(e: TextEdit, lines: LineMap): LspTextEdit {
  return LspTextEdit.replace(lines.range(e.span), e.newText);
}

export function toWorkspaceEdit(uri: string, edits: TextEdit[], lines: LineMap, version?: number | null): WorkspaceEdit {
  const lsp = edits.map((e) => toTextEdit(e, lines));
  if (version === undefined) return { changes: { [uri]: lsp } };
  return { documentChanges: [{ textDocument: { uri, version }, edits: lsp }] };
}

export function toQuickFix(fix: QuickFix, diagnostic: LspDiagnostic, uri: string, lines: LineMap): CodeAction {
  const action = CodeAction.create(fix.title, toWorkspaceEdit(uri, fix.edits, lines), CodeActionKind.QuickFix);
  action.diagnostics = [diagnostic];
  if (fix.preferred) action.isPreferred = true;
  return action;
}

export function toPrepareRename(span: Span, placeholder: string, lines: LineMap): { range: Range; placeholder: string } {
  return { range: lines.range(span), placeholder };
}

// ---------- hover ----------

export interface HoverInfo {
  span: Span;
  markdown: string;
}

export function toHover(h: HoverInfo, lines: LineMap): Hover {
  return { contents: { kind: MarkupKind.Markdown, value: h.markdown }, range: lines.range(h.span) };
}

// ---------- lenses ----------

export interface LensInfo {
  span: Span;
  title: string;
  command: string;
  args: unknown[];
}

export function toCodeLens(l: LensInfo, lines: LineMap): CodeLens {
  const lens = CodeLens.create(lines.range(l.span));
  lens.command = { title: l.title, command: l.command, arguments: l.args };
  return lens;
}

// ---------- inlay hints ----------

export interface InlayInfo {
  offset: number;
  label: string;
  kind: 'type' | 'parameter';
  tooltip?: string;
  paddingLeft?: boolean;
}

export function toInlayHint(h: InlayInfo, lines: LineMap): InlayHint {
  const hint = InlayHint.create(lines.position(h.offset), h.label, h.kind === 'type' ? InlayHintKind.Type : InlayHintKind.Parameter);
  if (h.paddingLeft) hint.paddingLeft = true;
  if (h.tooltip) hint.tooltip = { kind: MarkupKind.Markdown, value: h.tooltip };
  return hint;
}

// ---------- completion ----------

export type CompletionKind = 'keyword' | 'block' | 'state' | 'input' | 'output' | 'param' | 'let' | 'point' | 'system' | 'loop' | 'signal' | 'use' | 'function' | 'builtin' | 'unit' | 'option';

const COMPLETION_KIND: Record<CompletionKind, CompletionItemKind> = {
  keyword: CompletionItemKind.Keyword,
  block: CompletionItemKind.Keyword,
  state: CompletionItemKind.Variable,
  input: CompletionItemKind.Field,
  output: CompletionItemKind.Property,
  param: CompletionItemKind.Constant,
  let: CompletionItemKind.Variable,
  point: CompletionItemKind.EnumMember,
  system: CompletionItemKind.Class,
  loop: CompletionItemKind.Module,
  signal: CompletionItemKind.Event,
  use: CompletionItemKind.Class,
  function: CompletionItemKind.Function,
  builtin: CompletionItemKind.Constant,
  unit: CompletionItemKind.Unit,
  option: CompletionItemKind.Value,
};

export interface CompletionInfo {
  label: string;
  kind: CompletionKind;
  detail?: string;
  documentation?: string;
  /** Snippet text (with $1 placeholders) to insert instead of the label. */
  snippet?: string;
  sortText?: string;
}

export function toCompletionItem(c: CompletionInfo): CompletionItem {
  const item = CompletionItem.create(c.label);
  item.kind = COMPLETION_KIND[c.kind];
  if (c.detail) item.detail = c.detail;
  if (c.documentation) item.documentation = { kind: MarkupKind.Markdown, value: c.documentation };
  if (c.snippet) {
    item.insertText = c.snippet;
    item.insertTextFormat = InsertTextFormat.Snippet;
  }
  if (c.sortText) item.sortText = c.sortText;
  return item;
}

// ---------- locations ----------

export function toLocation(uri: string, span: Span, lines: LineMap): Location {
  return Location.create(uri, lines.range(span));
}

// ---------- outline ----------

export type OutlineKind = 'plant' | 'controller' | 'loop' | 'param' | 'let' | 'state' | 'input' | 'output' | 'point' | 'equation' | 'relation' | 'limit' | 'sample' | 'signal' | 'arrow' | 'use' | 'run' | 'expect';

const SYMBOL_KIND: Record<OutlineKind, SymbolKind> = {
  plant: SymbolKind.Class,
  controller: SymbolKind.Class,
  loop: SymbolKind.Module,
  param: SymbolKind.Constant,
  let: SymbolKind.Variable,
  state: SymbolKind.Variable,
  input: SymbolKind.Field,
  output: SymbolKind.Property,
  point: SymbolKind.EnumMember,
  equation: SymbolKind.Function,
  relation: SymbolKind.Function,
  limit: SymbolKind.Operator,
  sample: SymbolKind.Event,
  signal: SymbolKind.Event,
  arrow: SymbolKind.Operator,
  use: SymbolKind.Object,
  run: SymbolKind.Event,
  expect: SymbolKind.Boolean,
};

export interface OutlineNode {
  name: string;
  detail?: string;
  kind: OutlineKind;
  span: Span;
  selection: Span;
  children?: OutlineNode[];
}

export function toDocumentSymbol(n: OutlineNode, lines: LineMap): DocumentSymbol {
  const range = lines.range(n.span);
  let selection = lines.range(n.selection);
  // The protocol requires the selection inside the range.
  if (n.selection.start < n.span.start || n.selection.end > n.span.end) selection = range;
  return DocumentSymbol.create(
    n.name || '(unnamed)',
    n.detail,
    SYMBOL_KIND[n.kind],
    range,
    selection,
    n.children?.map((c) => toDocumentSymbol(c, lines)),
  );
}

// ---------- semantic tokens ----------

export interface SemanticToken {
  start: number;
  length: number;
  type: number;
  modifiers: number;
}

/** Relative encoding of the protocol; tokens spanning a line break are cut at it. */
export function toSemanticTokens(tokens: SemanticToken[], lines: LineMap): SemanticTokens {
  const sorted = tokens.filter((t) => t.length > 0).sort((a, b) => a.start - b.start);
  const data: number[] = [];
  let prevLine = 0;
  let prevChar = 0;
  let lastEnd = -1;
  for (const t of sorted) {
    if (t.start < lastEnd) continue; // overlapping tokens are not allowed
    const pos = lines.position(t.start);
    const length = Math.min(t.length, lines.lineEnd(pos.line) - t.start);
    if (length <= 0) continue;
    const dl = pos.line - prevLine;
    const dc = dl === 0 ? pos.character - prevChar : pos.character;
    data.push(dl, dc, length, t.type, t.modifiers);
    prevLine = pos.line;
    prevChar = pos.character;
    lastEnd = t.start + length;
  }
  return { data };
}

// ---------- folding ----------

export interface FoldInfo {
  start: number;
  end: number;
  kind: 'region' | 'comment';
}

export function toFoldingRanges(folds: FoldInfo[], lines: LineMap): FoldingRange[] {
  const out: FoldingRange[] = [];
  const seen = new Set<string>();
  for (const f of folds) {
    const a = lines.lineOf(f.start);
    let b = lines.lineOf(f.end);
    // A region ending with its closing brace folds up to the line before it, keeping `}` visible.
    if (f.kind === 'region' && b > a) b -= 1;
    if (b <= a) continue;
    const key = `${a}:${b}`;
    if (seen.has(key)) continue;
    seen.add(key);
    out.push(FoldingRange.create(a, b, undefined, undefined, f.kind === 'comment' ? FoldingRangeKind.Comment : FoldingRangeKind.Region));
  }
  return out;
}
