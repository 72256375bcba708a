// One helper per editor feature. Sources carry markers: `|` is the cursor, `«…»` marks an
// expected range. Helpers strip the markers, open the text in the server and return the answer
// in plain terms (strings, marked texts), so tests read as "source → expected answer".

import type {
  CodeLens,
  CompletionItem,
  CompletionList,
  DocumentSymbol,
  Hover,
  InlayHint,
  Location,
  MarkupContent,
  Position,
  Range,
  SemanticTokens,
  TextEdit,
  WorkspaceEdit,
} from 'vscode-languageserver-protocol';
import type { Server } from './harness';

export interface Marked {
  text: string;
  cursor: number;
  /** Expected ranges, in order of appearance, as offsets into `text`. */
  ranges: Array<{ start: number; end: number }>;
}

/** Strips `|` and `«…»` markers. */
export function mark(src: string): Marked {
  let text = '';
  let cursor = -1;
  const ranges: Array<{ start: number; end: number }> = [];
  const open: number[] = [];
  for (const ch of src) {
    if (ch === '|') cursor = text.length;
    else if (ch === '«') open.push(text.length);
    else if (ch === '»') ranges.push({ start: open.pop()!, end: text.length });
    else text += ch;
  }
  return { text, cursor, ranges };
}

export function positionAt(text: string, offset: number): Position {
  const before = text.slice(0, offset);
  const line = before.split('\n').length - 1;
  return { line, character: offset - (before.lastIndexOf('\n') + 1) };
}

export function offsetAt(text: string, pos: Position): number {
  const lines = text.split('\n');
  let off = 0;
  for (let i = 0; i < pos.line && i < lines.length; i++) off += lines[i].length + 1;
  return off + pos.character;
}

export function rangeText(text: string, r: Range): string {
  return text.slice(offsetAt(text, r.start), offsetAt(text, r.end));
}

export function rangeOf(text: string, span: { start: number; end: number }): Range {
  return { start: positionAt(text, span.start), end: positionAt(text, span.end) };
}

/** Applies LSP text edits (non-overlapping) to a text. */
export function applyEdits(text: string, edits: TextEdit[]): string {
  const spans = edits.map((e) => ({ start: offsetAt(text, e.range.start), end: offsetAt(text, e.range.end), newText: e.newText })).sort((a, b) => b.start - a.start);
  let out = text;
  for (const e of spans) out = out.slice(0, e.start) + e.newText + out.slice(e.end);
  return out;
}

let counter = 0;
export function freshUri(name = 'doc'): string {
  return `file:///test/${name}-${++counter}.loop`;
}

/** Opens marked source; returns its uri and the stripped text. */
export async function openMarked(server: Server, src: string, name?: string): Promise<Marked & { uri: string }> {
  const m = mark(src);
  const uri = freshUri(name);
  await server.open(uri, m.text);
  return { ...m, uri };
}

export async function hoverText(server: Server, src: string): Promise<string> {
  const m = await openMarked(server, src, 'hover');
  const h = await server.request<Hover | null>('textDocument/hover', { textDocument: { uri: m.uri }, position: positionAt(m.text, m.cursor) });
  server.close(m.uri);
  if (!h) return '';
  return typeof h.contents === 'string' ? h.contents : (h.contents as MarkupContent).value;
}

export async function completionLabels(server: Server, src: string): Promise<string[]> {
  const m = await openMarked(server, src, 'completion');
  const r = await server.request<CompletionItem[] | CompletionList | null>('textDocument/completion', { textDocument: { uri: m.uri }, position: positionAt(m.text, m.cursor) });
  server.close(m.uri);
  const items = Array.isArray(r) ? r : (r?.items ?? []);
  return items.map((i) => i.label);
}

/** The text after renaming the name at the cursor, or the error message. */
export async function renamed(server: Server, src: string, newName: string): Promise<{ text?: string; error?: string; edits?: number }> {
  const m = await openMarked(server, src, 'rename');
  try {
    const edit = await server.request<WorkspaceEdit | null>('textDocument/rename', { textDocument: { uri: m.uri }, position: positionAt(m.text, m.cursor), newName });
    const edits = edit?.changes?.[m.uri] ?? [];
    return { text: applyEdits(m.text, edits), edits: edits.length };
  } catch (e) {
    return { error: (e as Error).message };
  } finally {
    server.close(m.uri);
  }
}

/** The marked ranges the definition (first) or references (all) point at, as texts with offsets. */
export async function definitionSpan(server: Server, src: string): Promise<{ start: number; end: number } | undefined> {
  const m = await openMarked(server, src, 'definition');
  const loc = await server.request<Location | null>('textDocument/definition', { textDocument: { uri: m.uri }, position: positionAt(m.text, m.cursor) });
  server.close(m.uri);
  return loc ? { start: offsetAt(m.text, loc.range.start), end: offsetAt(m.text, loc.range.end) } : undefined;
}

export async function referenceSpans(server: Server, src: string, includeDeclaration = true): Promise<Array<{ start: number; end: number }>> {
  const m = await openMarked(server, src, 'references');
  const locs = await server.request<Location[] | null>('textDocument/references', { textDocument: { uri: m.uri }, position: positionAt(m.text, m.cursor), context: { includeDeclaration } });
  server.close(m.uri);
  return (locs ?? []).map((l) => ({ start: offsetAt(m.text, l.range.start), end: offsetAt(m.text, l.range.end) })).sort((a, b) => a.start - b.start);
}

export async function lensTitles(server: Server, uri: string): Promise<string[]> {
  const lenses = await server.request<CodeLens[] | null>('textDocument/codeLens', { textDocument: { uri } });
  return (lenses ?? []).map((l) => l.command?.title ?? '');
}

export async function lenses(server: Server, uri: string): Promise<CodeLens[]> {
  return (await server.request<CodeLens[] | null>('textDocument/codeLens', { textDocument: { uri } })) ?? [];
}

export async function symbolsOf(server: Server, uri: string): Promise<DocumentSymbol[]> {
  return (await server.request<DocumentSymbol[] | null>('textDocument/documentSymbol', { textDocument: { uri } })) ?? [];
}

export interface DecodedToken {
  text: string;
  type: string;
  modifiers: string[];
}

/** Full-document semantic tokens decoded with the legend the server declared. */
export async function semanticTokensOf(server: Server, uri: string, text: string, legend: { tokenTypes: string[]; tokenModifiers: string[] }): Promise<DecodedToken[]> {
  const r = await server.request<SemanticTokens | null>('textDocument/semanticTokens/full', { textDocument: { uri } });
  const data = r?.data ?? [];
  const out: DecodedToken[] = [];
  let line = 0;
  let ch = 0;
  for (let i = 0; i + 4 < data.length + 1; i += 5) {
    const [dl, dc, len, type, mods] = data.slice(i, i + 5);
    line += dl;
    ch = dl === 0 ? ch + dc : dc;
    const start = offsetAt(text, { line, character: ch });
    out.push({ text: text.slice(start, start + len), type: legend.tokenTypes[type], modifiers: legend.tokenModifiers.filter((_, k) => mods & (1 << k)) });
  }
  return out;
}

export async function inlayLabels(server: Server, uri: string, text: string): Promise<Array<{ after: string; label: string }>> {
  const end = positionAt(text, text.length);
  const hints = (await server.request<InlayHint[] | null>('textDocument/inlayHint', { textDocument: { uri }, range: { start: { line: 0, character: 0 }, end } })) ?? [];
  return hints.map((h) => {
    const off = offsetAt(text, h.position);
    const word = /[\p{L}_][\p{L}\p{N}_]*$/u.exec(text.slice(0, off))?.[0] ?? '';
    return { after: word, label: typeof h.label === 'string' ? h.label : h.label.map((p) => p.value).join('') };
  });
}

export async function formatted(server: Server, uri: string, text: string): Promise<{ text?: string; error?: string }> {
  try {
    const edits = await server.request<TextEdit[] | null>('textDocument/formatting', { textDocument: { uri }, options: { tabSize: 2, insertSpaces: true } });
    return { text: applyEdits(text, edits ?? []) };
  } catch (e) {
    return { error: (e as Error).message };
  }
}
