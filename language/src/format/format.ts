// The canonical layout of a `.loop` file. Used by the editor's "Format Document" and the CLI.
//
// Layout:
//   - one blank line between blocks; inside a block at most one blank line between members, none
//     after `{` or before `}`; blank lines inside a member are dropped;
//   - 2-space indent per open block or multi-line brace group; a member continued on the next
//     line (as the user broke it) is indented one more level;
//   - every member starts its own line; entries of a brace group that spanned several lines each
//     start their own line; a brace group written on one line stays on one line (`{ a = 1, b = 2 }`);
//   - one space around binary operators, `=`, `->` and `..`, except `^` (`arm^2`); none inside
//     parentheses and brackets, before `,` or around `.`; one space after `,`; unary signs stick
//     to their operand (`-4 [N*m]`); calls stick to their name (`sin(tilt)`);
//   - trailing comments after two spaces; whole-line comments on their own line at the indent of
//     what follows; no alignment of any kind; no trailing whitespace; one final newline; the
//     file's line-break style (`\n` or `\r\n`) is kept.
// Line breaks the user put inside a member are kept (the grammar reads them, see parser.ts);
// breaks are only added before members, entries, comments and block braces.
//
// Safety: a file with syntax errors is not formatted. The result is checked before it is
// returned — the same tokens and comments in the same order, no syntax errors, the same members
// — and refused otherwise, so formatting can never lose or change text beyond whitespace.

import type { IToken } from 'chevrotain';
import { DiagnosticSink } from '../diagnostics';
import type { FileAst } from '../syntax/ast';
import { parse } from '../syntax/parse';

export type FormatResult = { ok: true; text: string } | { ok: false; reason: string };

const INDENT = '  ';

interface Item {
  image: string;
  type: string;
  start: number;
  end: number;
  comment: boolean;
}

/** Tokens after which a `-`, `+` is binary (they end an operand). */
const OPERAND_END = new Set(['Ident', 'NumberLit', 'UnitLit', 'RParen', 'RBracket', 'Quote', 'StringLit']);

function hasSyntaxErrors(sink: DiagnosticSink): string | undefined {
  const d = sink.items.find((x) => x.code.startsWith('LW1'));
  return d ? `${d.code} ${d.message}` : undefined;
}

function itemsOf(tokens: IToken[], comments: IToken[]): Item[] {
  const all: Item[] = [];
  for (const t of tokens) all.push({ image: t.image, type: t.tokenType.name, start: t.startOffset, end: t.startOffset + t.image.length, comment: false });
  for (const c of comments) all.push({ image: c.image, type: 'Comment', start: c.startOffset, end: c.startOffset + c.image.length, comment: true });
  return all.sort((a, b) => a.start - b.start);
}

interface Structure {
  memberStarts: Set<number>;
  blockStarts: Set<number>;
  entryStarts: Set<number>;
  /** Member kinds per block, to check that a result parses to the same structure. */
  shape: string;
}

function structureOf(ast: FileAst): Structure {
  const memberStarts = new Set<number>();
  const blockStarts = new Set<number>();
  const entryStarts = new Set<number>();
  const shape: string[] = [];
  for (const b of ast.blocks) {
    blockStarts.add(b.keywordSpan.start);
    shape.push(`${b.kind}(${b.members.map((m) => m.kind).join(',')})`);
    for (const m of b.members) {
      memberStarts.add(m.span.start);
      const entries = 'entries' in m ? m.entries : m.kind === 'simulate' ? m.options : m.kind === 'use' ? m.overrides : [];
      for (const e of entries) entryStarts.add(e.span.start);
    }
  }
  return { memberStarts, blockStarts, entryStarts, shape: shape.join(';') };
}

type Frame = { kind: 'block' | 'multi' | 'inline'; open: string };

class Layout {
  private lines: string[] = [];
  private line = '';
  constructor(private readonly eol: string) {}

  newline(blank: boolean, indent: number): void {
    this.flush();
    if (blank && this.lines.length && this.lines[this.lines.length - 1] !== '') this.lines.push('');
    this.line = INDENT.repeat(Math.max(0, indent));
  }

  get atLineStart(): boolean {
    return this.line.trim() === '';
  }

  write(s: string): void {
    this.line += s;
  }

  private flush(): void {
    if (this.line.trim() !== '' || this.lines.length) this.lines.push(this.line.replace(/[ \t]+$/, ''));
    this.line = '';
  }

  text(): string {
    this.flush();
    while (this.lines.length && this.lines[this.lines.length - 1] === '') this.lines.pop();
    return this.lines.length ? this.lines.join(this.eol) + this.eol : '';
  }
}

function newlinesBetween(text: string, from: number, to: number): number {
  let n = 0;
  for (let i = from; i < to; i++) if (text.charCodeAt(i) === 10) n++;
  return n;
}

function layout(text: string, items: Item[], s: Structure, eol: string): string {
  const out = new Layout(eol);
  const frames: Frame[] = [];
  const level = () => frames.filter((f) => f.kind !== 'inline').length;
  let prev: Item | undefined;
  let prevUnary = false;
  let lastClosedBlock = false;

  const isStatementStart = (i: number): boolean => {
    // The next non-comment item starts a member, a block or an entry of a multi-line group, or closes one.
    for (let j = i; j < items.length; j++) {
      const it = items[j];
      if (it.comment) continue;
      const top = frames[frames.length - 1];
      if (s.memberStarts.has(it.start) || s.blockStarts.has(it.start)) return true;
      if (it.type === 'RCurly' && top && top.kind !== 'inline') return true;
      if (top?.kind === 'multi' && s.entryStarts.has(it.start)) return true;
      return false;
    }
    return true;
  };

  for (let i = 0; i < items.length; i++) {
    const it = items[i];
    const top = frames[frames.length - 1];
    const originalBreaks = prev ? newlinesBetween(text, prev.end, it.start) : 0;
    const blankBefore = originalBreaks >= 2;

    // ---- does a line break come before this item? ----
    let brk = false;
    let blank = false;
    let indent = level();
    if (!prev) brk = false;
    else if (prev.comment) brk = true;
    else if (it.comment) brk = originalBreaks > 0;
    else if (s.blockStarts.has(it.start) || s.memberStarts.has(it.start)) brk = true;
    else if (prev.type === 'LCurly' && top && top.kind !== 'inline') brk = true;
    else if (it.type === 'RCurly' && top && top.kind !== 'inline') brk = true;
    else if (top?.kind === 'multi' && s.entryStarts.has(it.start)) brk = true;
    else if (originalBreaks > 0) brk = true;

    if (brk) {
      const closing = it.type === 'RCurly' && top && top.kind !== 'inline';
      const afterOpen = prev?.type === 'LCurly' && top && top.kind !== 'inline';
      if (closing) indent = level() - 1;
      else if (it.comment ? !isStatementStart(i + 1) : !(s.blockStarts.has(it.start) || s.memberStarts.has(it.start) || (top?.kind === 'multi' && s.entryStarts.has(it.start)))) indent = level() + 1;
      const statement = !closing && !afterOpen && (it.comment ? isStatementStart(i + 1) : s.blockStarts.has(it.start) || s.memberStarts.has(it.start) || (top?.kind === 'multi' && s.entryStarts.has(it.start)));
      if (frames.length === 0 && lastClosedBlock) blank = true;
      else if (statement && blankBefore) blank = true;
      out.newline(blank, indent);
      lastClosedBlock = false;
    } else if (prev) {
      out.write(spaceBetween(prev, it, prevUnary));
    }

    // ---- write it, keep the frames ----
    out.write(it.image);
    if (it.type === 'LCurly') {
      const kind: Frame['kind'] = frames.length === 0 ? 'block' : closingHasBreak(text, items, i) ? 'multi' : 'inline';
      frames.push({ kind, open: it.image });
    } else if (it.type === 'RCurly') {
      const f = frames.pop();
      lastClosedBlock = f?.kind === 'block';
    } else if (!it.comment) lastClosedBlock = false;
    if (!it.comment) prevUnary = (it.type === 'Minus' || it.type === 'Plus') && (brk || !prevOperand(items, i));
    prev = it;
  }
  return out.text();
}

/** True when the item before `i` (skipping comments) ends an operand, so `items[i]` is binary. */
function prevOperand(items: Item[], i: number): boolean {
  for (let j = i - 1; j >= 0; j--) {
    if (items[j].comment) continue;
    return OPERAND_END.has(items[j].type);
  }
  return false;
}

/** Does the brace group opened at `i` span a line break in the original text? */
function closingHasBreak(text: string, items: Item[], i: number): boolean {
  let depth = 0;
  for (let j = i; j < items.length; j++) {
    if (items[j].comment) return true;
    if (items[j].type === 'LCurly') depth++;
    else if (items[j].type === 'RCurly') {
      depth--;
      if (depth === 0) return newlinesBetween(text, items[i].end, items[j].start) > 0;
    }
  }
  return true;
}

function spaceBetween(prev: Item, it: Item, prevUnary: boolean): string {
  const p = prev.type;
  const c = it.type;
  if (it.comment) return '  ';
  if (prevUnary) return '';
  if (p === 'LParen' || p === 'LBracket') return '';
  if (c === 'RParen' || c === 'RBracket' || c === 'Comma') return '';
  if (p === 'Comma') return ' ';
  if (c === 'Dot' || p === 'Dot') return '';
  if (c === 'Quote') return '';
  if (c === 'Caret' || p === 'Caret') return '';
  if (c === 'LParen') return p === 'Ident' ? '' : ' ';
  if (p === 'LCurly' && c === 'RCurly') return '';
  return ' ';
}

/** The non-whitespace content of a text, in order: what formatting must preserve. */
function contentOf(text: string): { images: string[]; errors: boolean; shape: string } {
  const sink = new DiagnosticSink();
  const parsed = parse(text, sink);
  const images = itemsOf(parsed.tokens, parsed.comments).map((i) => i.image);
  return { images, errors: !!hasSyntaxErrors(sink), shape: structureOf(parsed.ast).shape };
}

/** Formats a whole file; refuses (with a reason) rather than risk changing it. Never throws. */
export function format(text: string): FormatResult {
  try {
    const sink = new DiagnosticSink();
    const parsed = parse(text, sink);
    const err = hasSyntaxErrors(sink);
    if (err) return { ok: false, reason: `the file has syntax errors (${err})` };
    const items = itemsOf(parsed.tokens, parsed.comments);
    const structure = structureOf(parsed.ast);
    const crlf = (text.match(/\r\n/g)?.length ?? 0) > (text.match(/(?<!\r)\n/g)?.length ?? 0);
    const result = layout(text, items, structure, crlf ? '\r\n' : '\n');
    const before = items.map((i) => i.image);
    const after = contentOf(result);
    if (after.errors || after.shape !== structure.shape || after.images.length !== before.length || after.images.some((x, k) => x !== before[k])) {
      return { ok: false, reason: 'the layout could not be applied without changing the text (please report)' };
    }
    return { ok: true, text: result };
  } catch (e) {
    return { ok: false, reason: `internal error while formatting: ${(e as Error)?.message ?? String(e)}` };
  }
}
