// Tokens of the loop language, as an ordered list: Chevrotain tries patterns in order and takes
// the first that matches, so order matters wherever one pattern is a prefix of another.
//   - comments and strings first (their insides must not lex as anything else);
//   - the bracketed unit (context-sensitive: only right after a number, or after the name in a
//     `state` / `input` / `output` declaration) before the plain `[`;
//   - `->` before `-`, `..` before `.` and numbers, two-character comparisons before one-character;
//   - keywords are not patterns of their own: every word lexes as an identifier and `lexLoop`
//     then retypes the words that are keywords (one Map lookup per word, so `plantain` stays a
//     name without the lexer trying each keyword and then the longer identifier).
// Contextual keywords (`point`, `from`, `within`, `every`, `by`, `over`, `steps`, `algebraic`)
// are also in the Ident category: they can be used as ordinary names anywhere else.

import { createToken, Lexer, type IToken, type TokenType } from 'chevrotain';

export const WhiteSpace = createToken({ name: 'WhiteSpace', pattern: /[ \t\r\n\f\v\u00a0\ufeff]+/, group: Lexer.SKIPPED, line_breaks: true });
export const Comment = createToken({ name: 'Comment', pattern: /#[^\n\r]*/, group: 'comments' });
export const StringLit = createToken({ name: 'StringLit', pattern: /"(?:[^"\\\n\r]|\\.)*"/, label: 'a string' });
/** A string with no closing quote before the end of the line; reported, then read as a string. */
export const UnterminatedString = createToken({ name: 'UnterminatedString', pattern: /"(?:[^"\\\n\r]|\\.)*/, label: 'a string' });

const identRe = /[\p{L}_][\p{L}\p{N}_]*/uy;
/** ASCII letters, digits and `_`: the characters of almost every name, tested by code. */
function asciiWord(c: number, first: boolean): boolean {
  return (c >= 97 && c <= 122) || (c >= 65 && c <= 90) || c === 95 || (!first && c >= 48 && c <= 57);
}
/**
 * Identifiers may use any Unicode letter (`θ`, `ω`). An all-ASCII name is scanned by character
 * code; a name with any other character goes to a sticky Unicode regex, which decides.
 */
const identResult = [''] as unknown as RegExpExecArray;
function matchIdent(text: string, offset: number): RegExpExecArray | null {
  const n = text.length;
  let i = offset;
  if (i < n && asciiWord(text.charCodeAt(i), true)) {
    i++;
    while (i < n && asciiWord(text.charCodeAt(i), false)) i++;
    if (i >= n || text.charCodeAt(i) < 128) {
      // the lexer reads the image out of the result at once and keeps nothing: one array serves
      identResult[0] = text.slice(offset, i);
      return identResult;
    }
  }
  identRe.lastIndex = offset;
  return identRe.exec(text);
}
// The hint feeds the lexer's first-character table. Above U+00FF that table works in blocks of
// 256 code points, so one starter per block makes every letter of the Basic Multilingual Plane
// (Greek θ and ω, Cyrillic, ...) reach the identifier pattern, which then decides.
const identStarters = [
  '_',
  ...'abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ',
  ...'ªµºÀÁÂÃÄÅÆÇÈÉÊËÌÍÎÏÐÑÒÓÔÕÖØÙÚÛÜÝÞßàáâãäåæçèéêëìíîïðñòóôõöøùúûüýþÿ',
  ...Array.from({ length: 255 }, (_, b) => b + 1)
    .filter((b) => b < 0xd8 || b > 0xdf)
    .map((b) => String.fromCharCode(b * 256)),
];
export const Ident = createToken({ name: 'Ident', pattern: { exec: matchIdent }, line_breaks: false, label: 'a name', start_chars_hint: identStarters });

const reservedWords = [
  'plant', 'controller', 'loop', 'param', 'let', 'state', 'input', 'output', 'linear', 'pid', 'limit',
  'operating', 'sample', 'signal', 'use', 'around', 'start', 'simulate', 'compare', 'sweep', 'show',
  'expect', 'solve', 'if', 'then', 'else', 'and', 'or', 'not',
] as const;
const contextualWords = ['point', 'from', 'within', 'every', 'by', 'over', 'steps', 'algebraic'] as const;

function keyword(word: string, contextual: boolean): TokenType {
  return createToken({
    name: 'Kw_' + word,
    pattern: Lexer.NA,
    label: `'${word}'`,
    categories: contextual ? [Ident] : [],
  });
}

export const Kw = Object.fromEntries([
  ...reservedWords.map((w) => [w, keyword(w, false)]),
  ...contextualWords.map((w) => [w, keyword(w, true)]),
]) as Record<(typeof reservedWords)[number] | (typeof contextualWords)[number], TokenType>;

export const RESERVED_WORDS: readonly string[] = reservedWords;
const keywordOf = new Map<string, TokenType>(Object.entries(Kw));
const reservedSet = new Set<string>(reservedWords);
export const CONTEXTUAL_WORDS: readonly string[] = contextualWords;

/**
 * A unit in brackets. Lexed as one token so that `s`, `m` and `/` inside it never meet the
 * expression grammar. Matches only where a unit may stand; an unclosed bracket is still a unit
 * token (reported by the parser as LW102) so the rest of the line is not misread.
 */
function matchUnit(text: string, offset: number, tokens: IToken[]): RegExpExecArray | null {
  if (text.charCodeAt(offset) !== 91 /* [ */) return null;
  const prev = tokens[tokens.length - 1];
  if (!prev) return null;
  const prevType = prev.tokenType;
  let allowed = prevType === NumberLit;
  // While lexing, keywords are still identifiers (lexLoop retypes them afterwards), so the
  // declaration keyword and the declared name are told apart by their text.
  if (!allowed && prevType === Ident && !reservedSet.has(prev.image)) {
    const before = tokens[tokens.length - 2];
    allowed = !!before && before.tokenType === Ident && (before.image === 'state' || before.image === 'input' || before.image === 'output');
  }
  if (!allowed) return null;
  let i = offset + 1;
  while (i < text.length) {
    const c = text.charCodeAt(i);
    if (c === 93 /* ] */) {
      i++;
      break;
    }
    if (c === 10 || c === 13 || c === 91 || c === 35 /* # */) break;
    i++;
  }
  unitResult[0] = text.slice(offset, i);
  return unitResult;
}
const unitResult = [''] as unknown as RegExpExecArray;

/**
 * A number. An exponent marker with no digits after it (`1e+`, `2.5e`) is read as part of the
 * number, so that it is reported as one invalid number (LW105) rather than as a number followed
 * by a stray name; `1else` stays a number and a keyword.
 */
export const NUMBER_PATTERN = /(?:\d+(?:\.\d+)?|\.\d+)(?:[eE][+-]?\d+|[eE][+-](?!\d)|[eE](?![A-Za-z0-9_]))?/y;
const isDigit = (c: number): boolean => c >= 48 && c <= 57;
const isWordChar = (c: number): boolean => isDigit(c) || (c >= 65 && c <= 90) || (c >= 97 && c <= 122) || c === 95;
/** The index after the digits from `i` on. */
function skipDigits(text: string, i: number, n: number): number {
  while (i < n && isDigit(text.charCodeAt(i))) i++;
  return i;
}
/** NUMBER_PATTERN at `offset`, read by character code (one result array serves, as for names). */
export function matchNumber(text: string, offset: number): RegExpExecArray | null {
  const n = text.length;
  let i = offset;
  if (i < n && isDigit(text.charCodeAt(i))) {
    i = skipDigits(text, i, n);
    if (i + 1 < n && text.charCodeAt(i) === 46 && isDigit(text.charCodeAt(i + 1))) i = skipDigits(text, i + 2, n);
  } else if (i + 1 < n && text.charCodeAt(i) === 46 && isDigit(text.charCodeAt(i + 1))) i = skipDigits(text, i + 2, n);
  else return null;
  const e = i < n ? text.charCodeAt(i) : -1;
  if (e === 101 || e === 69) {
    const j = i + 1;
    const c = j < n ? text.charCodeAt(j) : -1;
    if (c === 43 || c === 45) i = skipDigits(text, j + 1, n); // a sign: its digits if any (else the number is reported, LW105)
    else if (isDigit(c)) i = skipDigits(text, j, n);
    else if (!isWordChar(c)) i = j; // `1e` alone (LW105); `1else` is a number and a keyword
  }
  numberResult[0] = text.slice(offset, i);
  return numberResult;
}
const numberResult = [''] as unknown as RegExpExecArray;
export const NumberLit = createToken({
  name: 'NumberLit',
  pattern: { exec: matchNumber },
  line_breaks: false,
  label: 'a number',
  start_chars_hint: ['0', '1', '2', '3', '4', '5', '6', '7', '8', '9', '.'],
});
/** A number whose exponent has no digits (see NumberLit). */
export function missingExponent(image: string): boolean {
  const c = image.charCodeAt(image.length - 1);
  return c === 101 || c === 69 || c === 43 || c === 45; // e E + -
}
export const UnitLit = createToken({ name: 'UnitLit', pattern: { exec: matchUnit }, line_breaks: false, label: 'a unit in brackets', start_chars_hint: ['['] });

export const Arrow = createToken({ name: 'Arrow', pattern: /->/, label: "'->'" });
export const DotDot = createToken({ name: 'DotDot', pattern: /\.\./, label: "'..'" });
export const Dot = createToken({ name: 'Dot', pattern: /\./, label: "'.'" });
export const LessEq = createToken({ name: 'LessEq', pattern: /<=/, label: "'<='" });
export const GreaterEq = createToken({ name: 'GreaterEq', pattern: />=/, label: "'>='" });
export const EqEq = createToken({ name: 'EqEq', pattern: /==/, label: "'=='" });
export const NotEq = createToken({ name: 'NotEq', pattern: /!=/, label: "'!='" });
export const Less = createToken({ name: 'Less', pattern: /</, label: "'<'" });
export const Greater = createToken({ name: 'Greater', pattern: />/, label: "'>'" });
export const Equals = createToken({ name: 'Equals', pattern: /=/, label: "'='" });
export const Plus = createToken({ name: 'Plus', pattern: /\+/, label: "'+'" });
export const Minus = createToken({ name: 'Minus', pattern: /-|\u2212/, label: "'-'" });
export const Star = createToken({ name: 'Star', pattern: /\*|\u00b7/, label: "'*'" });
export const Slash = createToken({ name: 'Slash', pattern: /\//, label: "'/'" });
export const Caret = createToken({ name: 'Caret', pattern: /\^/, label: "'^'" });
export const Quote = createToken({ name: 'Quote', pattern: /'/, label: "'" + "'" + "' (derivative)" });
export const LParen = createToken({ name: 'LParen', pattern: /\(/, label: "'('" });
export const RParen = createToken({ name: 'RParen', pattern: /\)/, label: "')'" });
export const LBracket = createToken({ name: 'LBracket', pattern: /\[/, label: "'['" });
export const RBracket = createToken({ name: 'RBracket', pattern: /]/, label: "']'" });
export const LCurly = createToken({ name: 'LCurly', pattern: /{/, label: "'{'" });
export const RCurly = createToken({ name: 'RCurly', pattern: /}/, label: "'}'" });
export const Comma = createToken({ name: 'Comma', pattern: /,/, label: "','" });

export const allTokens: TokenType[] = [
  WhiteSpace,
  Comment,
  StringLit,
  UnterminatedString,
  UnitLit,
  Arrow,
  DotDot,
  NumberLit,
  Dot,
  LessEq,
  GreaterEq,
  EqEq,
  NotEq,
  Less,
  Greater,
  Equals,
  Plus,
  Minus,
  Star,
  Slash,
  Caret,
  Quote,
  LParen,
  RParen,
  LBracket,
  RBracket,
  LCurly,
  RCurly,
  Comma,
  Ident,
  // never matched by the lexer (pattern NA): lexLoop gives words these types
  ...Object.values(Kw),
];

/**
 * Tokens carry offsets only; lines and columns come from the document's line index where they
 * are needed (diagnostics, LSP ranges), not from every token.
 */
const loopLexer = new Lexer(allTokens, {
  positionTracking: 'onlyOffset',
  skipValidations: true,
});

export type LexResult = Pick<ReturnType<Lexer['tokenize']>, 'tokens' | 'errors' | 'groups'> & {
  /** Unit tokens without their ']' and strings without their closing quote, in order. */
  unclosed: IToken[];
  /** Numbers whose exponent has no digits (`1e+`), in order. */
  badNumbers: IToken[];
  /** Deepest nesting of ( and [ (reset at braces). */
  maxDepth: number;
};

/**
 * Lexes a document: the lexer proper, then one pass over the tokens that retypes keywords from
 * identifiers and notes unclosed units and strings and the deepest bracket nesting.
 */
export function lexLoop(text: string): LexResult {
  const r = loopLexer.tokenize(text);
  const facts = scanTokens(r.tokens);
  return { tokens: r.tokens, errors: r.errors, groups: r.groups, unclosed: facts.unclosed, badNumbers: facts.badNumbers, maxDepth: facts.maxDepth };
}

/** The pass of lexLoop over the tokens (a function of its own, so that its loop is optimised on its own). */
function scanTokens(toks: IToken[]): { unclosed: IToken[]; badNumbers: IToken[]; maxDepth: number } {
  const unclosed: IToken[] = [];
  const badNumbers: IToken[] = [];
  let depth = 0;
  let maxDepth = 0;
  for (let i = 0; i < toks.length; i++) {
    const t = toks[i];
    const tt = t.tokenType;
    if (tt === Ident) {
      const kw = keywordOf.get(t.image);
      if (kw !== undefined) {
        t.tokenType = kw;
        t.tokenTypeIdx = kw.tokenTypeIdx!;
      }
    } else if (tt === LParen || tt === LBracket) {
      if (++depth > maxDepth) maxDepth = depth;
    } else if (tt === RParen || tt === RBracket) {
      if (depth > 0) depth--;
    } else if (tt === LCurly || tt === RCurly) {
      depth = 0;
    } else if (tt === NumberLit) {
      if (missingExponent(t.image)) badNumbers.push(t);
    } else if ((tt === UnitLit && !t.image.endsWith(']')) || tt === UnterminatedString) {
      unclosed.push(t);
    }
  }
  return { unclosed, badNumbers, maxDepth };
}

export function tokenMatches(tok: IToken, type: TokenType): boolean {
  if (tok.tokenType === type) return true;
  const cats = (tok.tokenType as TokenType & { CATEGORIES?: TokenType[] }).CATEGORIES;
  return !!cats && cats.includes(type);
}
