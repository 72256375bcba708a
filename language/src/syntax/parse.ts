// Text → AST plus syntax diagnostics. Never throws: a lexer or parser failure becomes a
// diagnostic and the AST holds whatever could be read.

import type { IRecognitionException, IToken } from 'chevrotain';
import { DiagnosticSink, type Span } from '../diagnostics';
import type { Expr, FileAst } from './ast';
import { getParser } from './parser';
import { lexLoop, UnitLit, UnterminatedString } from './tokens';

export interface ParseResult {
  ast: FileAst;
  tokens: IToken[];
  comments: IToken[];
}

export function parse(text: string, sink: DiagnosticSink): ParseResult {
  const lexed = lexLoop(text);
  for (const e of lexed.errors) {
    const start = Number.isFinite(e.offset) ? e.offset : 0;
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
  const comments = (lexed.groups.comments ?? []) as IToken[];
  const parser = getParser();
  parser.setInput(lexed.maxDepth > MAX_BRACKET_DEPTH ? dropDeepNesting(lexed.tokens, sink) : lexed.tokens, text);
  let blocks: FileAst['blocks'] = [];
  try {
    blocks = parser.parseFile();
  } catch (err) {
    // Chevrotain does not throw on bad input with recovery enabled; this guards the unexpected.
    sink.error('LW101', { start: 0, end: Math.min(text.length, 1) }, `the file could not be read: ${(err as Error).message}`);
  }
  reportParseErrors(parser.errors, text, sink);
  const ast: FileAst = {
    kind: 'file',
    span: { start: 0, end: text.length },
    blocks,
    comments: comments.filter((t) => Number.isFinite(t.startOffset)).map((t) => ({ text: t.image, span: { start: t.startOffset, end: t.startOffset + t.image.length } })),
  };
  limitDepth(ast, sink);
  return { ast, tokens: lexed.tokens, comments };
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

function reportParseErrors(errors: IRecognitionException[], text: string, sink: DiagnosticSink): void {
  const seen = new Set<string>();
  for (const e of errors) {
    const span = errorSpan(e, text);
    const key = `${span.start}:${e.message}`;
    if (seen.has(key)) continue;
    seen.add(key);
    sink.error('LW101', span, e.message);
  }
}

function errorSpan(e: IRecognitionException, text: string): Span {
  const tok = e.token;
  if (tok && Number.isFinite(tok.startOffset) && !tok.isInsertedInRecovery && tok.image !== undefined && tok.tokenType?.name !== 'EOF') {
    return { start: tok.startOffset, end: tok.startOffset + Math.max(1, tok.image.length) };
  }
  const prev = (e as IRecognitionException & { previousToken?: IToken }).previousToken;
  if (prev && Number.isFinite(prev.startOffset)) {
    const end = prev.startOffset + prev.image.length;
    return { start: end, end: Math.min(text.length, end + 1) > end ? end + 1 : end };
  }
  return { start: Math.max(0, text.length - 1), end: text.length };
}
