// Text → AST plus syntax diagnostics. Never throws: a lexer or parser failure becomes a
// diagnostic and the AST holds whatever could be read.

import type { IRecognitionException, IToken } from 'chevrotain';
import { DiagnosticSink, type Span } from '../diagnostics';
import type { Expr, FileAst } from './ast';
import { getParser } from './parser';
import { lexLoop, UnitLit, UnterminatedString } from './tokens';

export interface ParseResult {
  readonly ast: FileAst;
  /** The document's tokens (lexed on first use). */
  readonly tokens: IToken[];
  readonly comments: IToken[];
}

/** Least length of a piece the text is split into for lexing and parsing (see blockStarts). */
export const PIECE_CHARS = 16384;

export function parse(text: string, sink: DiagnosticSink, pieceChars = PIECE_CHARS): ParseResult {
  const blocks: FileAst['blocks'] = [];
  const comments: IToken[] = [];
  const starts = blockStarts(text, pieceChars);
  for (let k = 0; k < starts.length; k++) {
    const last = k + 1 === starts.length;
    // a piece is kept only when it parsed without a syntax error: the whole-file parse's recovery
    // could have carried an error across the cut, so from such a piece on the rest is one piece
    if (!parsePiece(text, starts[k], last ? text.length : starts[k + 1], sink, blocks, comments, !last)) {
      parsePiece(text, starts[k], text.length, sink, blocks, comments, false);
      break;
    }
  }
  const ast: FileAst = {
    kind: 'file',
    span: { start: 0, end: text.length },
    blocks,
    comments: comments.filter((t) => Number.isFinite(t.startOffset)).map((t) => ({ text: t.image, span: { start: t.startOffset, end: t.startOffset + t.image.length } })),
  };
  limitDepth(ast, sink);
  return new ParsedDocument(text, ast, comments);
}

/**
 * A parse result whose tokens are lexed again when first asked for (see blockStarts). The getter
 * is the class's own, not one made per result: an object literal with a getter gets a map of its
 * own per result, and V8's scavenges then keep every earlier result alive through those maps.
 */
class ParsedDocument implements ParseResult {
  private lexed: IToken[] | undefined = undefined;

  constructor(
    private readonly text: string,
    readonly ast: FileAst,
    readonly comments: IToken[],
  ) {}

  get tokens(): IToken[] {
    return (this.lexed ??= lexLoop(this.text).tokens);
  }
}

/**
 * Lexes and parses the blocks in text[from, to), adding them and their comments to `blocks` and
 * `comments` and their diagnostics to `sink`, all with offsets in the whole text. A `tentative`
 * piece adds nothing and returns false when it has a syntax error.
 */
function parsePiece(text: string, from: number, to: number, into: DiagnosticSink, blocks: FileAst['blocks'], comments: IToken[], tentative: boolean): boolean {
  const sink = tentative ? new DiagnosticSink() : into;
  const lexed = lexLoop(from === 0 && to === text.length ? text : text.slice(from, to));
  const pieceComments = (lexed.groups.comments ?? []) as IToken[];
  if (from > 0) {
    shiftTokens(lexed.tokens, from);
    shiftTokens(pieceComments, from);
    for (const e of lexed.errors) e.offset += from;
  }
  for (const e of lexed.errors) {
    const start = Number.isFinite(e.offset) ? e.offset : from;
    let end = start + (e.length || 1);
    end = Math.min(Math.max(end, start + 1), Math.max(text.length, start));
    const ch = text.slice(start, end);
    sink.error('LW104', { start, end }, `unknown character '${ch}'`);
  }
  for (const t of lexed.badNumbers) {
    sink.error('LW105', { start: t.startOffset, end: t.startOffset + t.image.length }, `'${t.image}' is not a number: its exponent has no digits (write it in full, as in 1e3)`);
  }
  for (const t of lexed.unclosed) {
    if (t.tokenType === UnitLit) {
      sink.error('LW102', { start: t.startOffset, end: t.startOffset + t.image.length }, "expected ']' to close the unit");
    } else if (t.tokenType === UnterminatedString) {
      sink.error('LW103', { start: t.startOffset, end: t.startOffset + t.image.length }, 'expected \'"\' to close the string before the end of the line');
    }
  }
  const parser = getParser();
  parser.setInput(lexed.maxDepth > MAX_BRACKET_DEPTH ? dropDeepNesting(lexed.tokens, sink) : lexed.tokens, text);
  let read: FileAst['blocks'] = [];
  try {
    read = parser.parseFile();
  } catch (err) {
    if (tentative) return false;
    // Chevrotain does not throw on bad input with recovery enabled; this guards the unexpected.
    sink.error('LW101', { start: from, end: Math.min(to, from + 1) }, `the file could not be read: ${(err as Error).message}`);
  }
  if (tentative && parser.errors.length > 0) return false;
  reportParseErrors(parser.errors, text, to, sink);
  for (const b of read) blocks.push(b);
  for (const c of pieceComments) comments.push(c);
  if (tentative) for (const d of sink.items) into.items.push(d);
  return true;
}

function shiftTokens(tokens: IToken[], by: number): void {
  for (let i = 0; i < tokens.length; i++) {
    const t = tokens[i];
    t.startOffset += by;
    if (t.endOffset !== undefined) t.endOffset += by;
  }
}

/**
 * Where the text splits into pieces that are lexed and parsed one after another: 0, and the start
 * of a line that begins with a block keyword (`plant`, `controller`, `loop`), once the piece before
 * it holds at least `minChars` characters. A piece's tokens are dropped once it is parsed, so a
 * large document never holds all its tokens at once while its tree is built: they die young
 * instead of being copied by the collector (the tokens are lexed again only when something asks
 * for them, as the editor's colouring does).
 *
 * A cut is made only where the whole-file parse is certainly between two blocks: at brace depth 0
 * with no ( or [ open, and right after the '}' that closed the block before (comments and blank
 * lines aside). Anything this scan cannot be sure of as the lexer would read it (a brace or a
 * quote inside brackets, where a unit may hold it) stops the cutting for the rest of the text.
 * Fewer cuts only make the pieces more like the whole file; test/syntax/pieces.test.ts checks that
 * the result does not depend on the cuts.
 */
export function blockStarts(text: string, minChars = PIECE_CHARS): number[] {
  const out = [0];
  let braces = 0;
  let brackets = 0;
  // the last character that is not white space or in a comment
  let last = -1;
  let lineStart = true;
  const n = text.length;
  for (let i = 0; i < n; i++) {
    if (lineStart) {
      lineStart = false;
      if (braces === 0 && brackets === 0 && last === 125 /* } */ && i - out[out.length - 1] >= minChars && startsBlock(text, i)) out.push(i);
    }
    const c = text.charCodeAt(i);
    if (c === 10 /* \n */) {
      lineStart = true;
      continue;
    }
    if (c === 32 || c === 9 || c === 13) continue;
    if (c === 35 /* # */) {
      // a comment runs to the end of the line
      while (i + 1 < n && text.charCodeAt(i + 1) !== 10 && text.charCodeAt(i + 1) !== 13) i++;
      continue;
    }
    last = c;
    if (c === 34 /* " */) {
      // a string ends at its closing quote or at the end of the line
      let j = i + 1;
      while (j < n) {
        const d = text.charCodeAt(j);
        if (d === 10 || d === 13 || d === 34) break;
        j += d === 92 /* \ */ && j + 1 < n && text.charCodeAt(j + 1) !== 10 && text.charCodeAt(j + 1) !== 13 ? 2 : 1;
      }
      if (j < n && text.charCodeAt(j) === 34) i = j;
      else i = j - 1;
    } else if (c === 123 || c === 125 /* { } */) {
      braces = c === 123 ? braces + 1 : Math.max(0, braces - 1);
      // as in the lexer's nesting count: a brace ends any ( or [ left open
      brackets = 0;
    } else if (c === 40 /* ( */) brackets++;
    else if (c === 41 /* ) */ || c === 93 /* ] */) brackets = Math.max(0, brackets - 1);
    else if (c === 91 /* [ */) {
      brackets++;
      // a unit in brackets is one token up to its ']' (or the end of the line, '[' or '#'); a brace
      // or a quote in there may or may not be one: stop cutting rather than guess
      for (let j = i + 1; j < n; j++) {
        const d = text.charCodeAt(j);
        if (d === 93 || d === 10 || d === 13 || d === 91 || d === 35) break;
        if (d === 123 || d === 125 || d === 34) return out;
      }
    }
  }
  return out;
}

const BLOCK_WORDS = ['plant', 'controller', 'loop'];

/** Does a block keyword, as a whole word, begin at `at` (the start of a line)? */
function startsBlock(text: string, at: number): boolean {
  for (const w of BLOCK_WORDS) {
    if (!text.startsWith(w, at)) continue;
    const next = text.charCodeAt(at + w.length);
    // a space or tab after the word: `loop Name {`, not `loopy` or `loop.x`
    if (next === 32 || next === 9) return true;
  }
  return false;
}

/** Deepest bracket nesting the parser accepts (its rules recurse per level). */
export const MAX_BRACKET_DEPTH = 128;

/**
 * Tokens nested deeper than MAX_BRACKET_DEPTH in ( and [ are left out (with one LW106 on them),
 * so that a pathological line cannot exhaust the parser's stack and lose the rest of the file.
 */
function dropDeepNesting(tokens: IToken[], sink: DiagnosticSink): IToken[] {
  const kept: IToken[] = [];
  let depth = 0;
  let dropStart = -1;
  let dropEnd = -1;
  for (const t of tokens) {
    const n = t.tokenType.name;
    if (n === 'LCurly' || n === 'RCurly') depth = 0;
    const opening = n === 'LParen' || n === 'LBracket';
    const closing = n === 'RParen' || n === 'RBracket';
    if (opening) depth++;
    const inside = depth > MAX_BRACKET_DEPTH;
    if (closing) depth = Math.max(0, depth - 1);
    if (inside) {
      if (dropStart < 0) dropStart = t.startOffset;
      dropEnd = t.startOffset + t.image.length;
      continue;
    }
    if (dropStart >= 0) {
      sink.error('LW106', { start: dropStart, end: dropEnd }, `brackets nested more than ${MAX_BRACKET_DEPTH} deep; this part was not read`);
      dropStart = -1;
    }
    kept.push(t);
  }
  if (dropStart >= 0) sink.error('LW106', { start: dropStart, end: dropEnd }, `brackets nested more than ${MAX_BRACKET_DEPTH} deep; this part was not read`);
  return kept;
}

/** Deepest expression tree later passes accept; deeper ones are replaced by an error node. */
export const MAX_EXPRESSION_DEPTH = 200;

/**
 * Every later pass walks expressions recursively; a generated or pasted expression thousands of
 * levels deep (a sum of 3,000 terms) would exhaust the stack there. Such an expression is
 * reported once and replaced by an error node, so the rest of the file still analyses.
 */
function limitDepth(ast: FileAst, sink: DiagnosticSink): void {
  // Every node on a path from the root to a leaf owns a token of its own (an operator, a name,
  // a bracket, 'if', the literal), so an expression is never deeper than its text is long:
  // members shorter than the limit are skipped without walking them.
  const replace = (e: Expr): Expr => {
    if (e.span.end - e.span.start <= MAX_EXPRESSION_DEPTH || depthOf(e) <= MAX_EXPRESSION_DEPTH) return e;
    sink.error('LW106', e.span, `this expression is nested more than ${MAX_EXPRESSION_DEPTH} levels deep; split it with 'let' or 'signal'`);
    return { kind: 'error', span: e.span };
  };
  for (const b of ast.blocks) {
    for (const m of b.members as unknown as Array<Record<string, unknown>>) {
      const span = m.span as { start: number; end: number };
      if (span.end - span.start <= MAX_EXPRESSION_DEPTH) continue;
      for (const k in m) {
        const v = m[k];
        if (isExpr(v)) m[k] = replace(v);
        else if (Array.isArray(v)) {
          for (let i = 0; i < v.length; i++) {
            const item = v[i] as unknown;
            if (isExpr(item)) v[i] = replace(item);
            else if (item && typeof item === 'object' && 'value' in item && isExpr((item as { value: unknown }).value)) {
              (item as { value: Expr }).value = replace((item as { value: Expr }).value);
            }
          }
        }
      }
    }
  }
}

const EXPR_KINDS = new Set(['number', 'quantity', 'name', 'member', 'deriv', 'unary', 'binary', 'call', 'if', 'list', 'matrix', 'error']);
function isExpr(v: unknown): v is Expr {
  return !!v && typeof v === 'object' && EXPR_KINDS.has((v as { kind?: string }).kind ?? '') && 'span' in (v as object) && !('name' in (v as object) && typeof (v as { name: unknown }).name === 'object');
}

/** Depth of an expression tree, computed without recursion (stops once past the limit). */
function depthOf(root: Expr): number {
  let max = 0;
  const exprs: Expr[] = [root];
  const depths: number[] = [1];
  while (exprs.length) {
    const e = exprs.pop()!;
    const d = depths.pop()!;
    if (d > max) max = d;
    if (max > MAX_EXPRESSION_DEPTH) return max;
    const below = d + 1;
    switch (e.kind) {
      case 'unary':
        exprs.push(e.operand);
        depths.push(below);
        break;
      case 'binary':
        exprs.push(e.left, e.right);
        depths.push(below, below);
        break;
      case 'call':
        for (const a of e.args) {
          exprs.push(a);
          depths.push(below);
        }
        break;
      case 'if':
        exprs.push(e.cond, e.then, e.else);
        depths.push(below, below, below);
        break;
      case 'list':
        for (const a of e.items) {
          exprs.push(a);
          depths.push(below);
        }
        break;
      case 'matrix':
        for (const r of e.rows)
          for (const a of r) {
            exprs.push(a);
            depths.push(below);
          }
        break;
      default:
        break;
    }
  }
  return max;
}

function reportParseErrors(errors: IRecognitionException[], text: string, end: number, sink: DiagnosticSink): void {
  const seen = new Set<string>();
  for (const e of errors) {
    const span = errorSpan(e, text, end);
    const key = `${span.start}:${e.message}`;
    if (seen.has(key)) continue;
    seen.add(key);
    sink.error('LW101', span, e.message);
  }
}

/** Where a parse error goes; `end` is the end of the piece being parsed (where its input ran out). */
function errorSpan(e: IRecognitionException, text: string, end: number): Span {
  const tok = e.token;
  if (tok && Number.isFinite(tok.startOffset) && !tok.isInsertedInRecovery && tok.image !== undefined && tok.tokenType?.name !== 'EOF') {
    return { start: tok.startOffset, end: tok.startOffset + Math.max(1, tok.image.length) };
  }
  const prev = (e as IRecognitionException & { previousToken?: IToken }).previousToken;
  if (prev && Number.isFinite(prev.startOffset)) {
    const after = prev.startOffset + prev.image.length;
    return { start: after, end: Math.min(text.length, after + 1) > after ? after + 1 : after };
  }
  return { start: Math.max(0, end - 1), end };
}
