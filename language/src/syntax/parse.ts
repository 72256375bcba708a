// Text → AST plus syntax diagnostics. Never throws: a lexer or parser failure becomes a
// diagnostic and the AST holds whatever could be read.

import type { IRecognitionException, IToken } from 'chevrotain';
import { DiagnosticSink, type Span } from '../diagnostics';
import type { FileAst } from './ast';
import { getParser } from './parser';
import { AstBuilder } from './to-ast';
import { loopLexer, UnitLit, UnterminatedString } from './tokens';

export interface ParseResult {
  ast: FileAst;
  tokens: IToken[];
  comments: IToken[];
}

export function parse(text: string, sink: DiagnosticSink): ParseResult {
  const lexed = loopLexer.tokenize(text);
  for (const e of lexed.errors) {
    const start = Number.isFinite(e.offset) ? e.offset : 0;
    let end = start + (e.length || 1);
    end = Math.min(Math.max(end, start + 1), Math.max(text.length, start));
    const ch = text.slice(start, end);
    sink.error('LW104', { start, end }, `unknown character '${ch}'`);
  }
  for (const t of lexed.tokens) {
    if (t.tokenType === UnitLit && !t.image.endsWith(']')) {
      sink.error('LW102', { start: t.startOffset, end: t.startOffset + t.image.length }, "expected ']' to close the unit");
    } else if (t.tokenType === UnterminatedString) {
      sink.error('LW103', { start: t.startOffset, end: t.startOffset + t.image.length }, 'expected \'"\' to close the string before the end of the line');
    }
  }
  const comments = (lexed.groups.comments ?? []) as IToken[];
  const parser = getParser();
  parser.setInput(lexed.tokens, text);
  let cst;
  try {
    cst = parser.file();
  } catch (err) {
    // Chevrotain does not throw on bad input with recovery enabled; this guards the unexpected.
    sink.error('LW101', { start: 0, end: Math.min(text.length, 1) }, `the file could not be read: ${(err as Error).message}`);
  }
  reportParseErrors(parser.errors, text, sink);
  const ast = new AstBuilder(text).file(cst, comments);
  return { ast, tokens: lexed.tokens, comments };
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
