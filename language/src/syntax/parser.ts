// The grammar of the loop language as a Chevrotain parser whose rules return the AST of ast.ts
// directly. `recoveryEnabled` keeps half-typed files analysable: a missing child becomes an
// ErrorExpr or a `missing` Ident with a finite (possibly empty) span, so later stages never see
// NaN offsets or undefined.
//
// Line breaks: whitespace is skipped by the lexer, but an expression does not continue across a
// line break with a binary operator at the start of the next line (outside parentheses and
// brackets). `x' = a` followed by a line `-b -> Sys.u` is therefore two members, as written.

import { EmbeddedActionsParser, EOF, type IOrAlt, type IToken, type IParserErrorMessageProvider, defaultParserErrorProvider } from 'chevrotain';
import type { Span } from '../diagnostics';
import type * as A from './ast';
import * as T from './tokens';

const Kw = T.Kw;

const ruleNames: Record<string, string> = {
  file: 'a plant, controller or loop block',
  block: 'a block',
  member: 'a member',
  entries: 'entries in braces',
  expression: 'an expression',
  path: 'a name',
};

/** Human messages instead of token dumps. */
const messages: IParserErrorMessageProvider = {
  buildMismatchTokenMessage({ expected, actual, ruleName }) {
    const want = expected.LABEL ?? expected.name;
    if (expected === T.RBracket) return `expected ']' to close the brackets, found ${show(actual)}`;
    if (expected === T.RParen) return `expected ')' to close the parentheses, found ${show(actual)}`;
    if (expected === T.RCurly) return `expected '}' to close the ${ruleName === 'block' ? 'block' : 'braces'}, found ${show(actual)}`;
    if (expected === T.Ident) return `expected a name, found ${show(actual)}`;
    // the file rule ends with EOF: what it met is something other than a block at the top level
    if (expected === EOF) return `expected a block ('plant', 'controller' or 'loop'), found ${show(actual)}`;
    if (expected === T.Arrow && ruleName === 'arrowMember') {
      return `expected '->' after this expression, found ${show(actual)} (an arrow reads 'EXPR -> SYSTEM.INPUT'; if the line continues the previous one, end the previous line with the operator)`;
    }
    return `expected ${want}, found ${show(actual)}`;
  },
  buildNotAllInputParsedMessage({ firstRedundant }) {
    return `expected a block ('plant', 'controller' or 'loop'), found ${show(firstRedundant)}`;
  },
  buildNoViableAltMessage({ actual, ruleName }) {
    const tok = actual[0];
    if (ruleName === 'member') {
      if (tok && (tok.tokenType === T.Minus || tok.tokenType === T.Plus || tok.tokenType === T.Star || tok.tokenType === T.Slash)) {
        return `a line cannot start with ${show(tok)}: to continue an expression, end the previous line with the operator`;
      }
      return `expected a member (param, let, state, input, output, an equation, an arrow, ...), found ${show(tok)}`;
    }
    if (ruleName === 'block') return `expected a block ('plant', 'controller' or 'loop'), found ${show(tok)}`;
    if (ruleName === 'operand' || ruleName === 'expression') return `expected an expression, found ${show(tok)}`;
    return `expected ${ruleNames[ruleName] ?? ruleName}, found ${show(tok)}`;
  },
  buildEarlyExitMessage(options) {
    return defaultParserErrorProvider.buildEarlyExitMessage(options);
  },
};

function show(tok: IToken | undefined): string {
  if (!tok || tok.tokenType === EOF) return 'the end of the file';
  const img = tok.image.length > 24 ? tok.image.slice(0, 24) + '…' : tok.image;
  return `'${img}'`;
}

/** Per-token facts the grammar's gates need: did a line break precede it, and is it nested in () or []. */
export interface TokenLayout {
  breakBefore: Uint8Array;
  nested: Uint8Array;
}

export function layoutOf(tokens: IToken[], text: string): TokenLayout {
  const n = tokens.length;
  const breakBefore = new Uint8Array(n);
  const nested = new Uint8Array(n);
  let depth = 0;
  let prevEnd = 0;
  // the first line break at or after prevEnd (no token but white space and comments holds one)
  let nl = -1;
  for (let i = 0; i < n; i++) {
    const tok = tokens[i];
    if (nl < prevEnd && nl !== Infinity) {
      nl = text.indexOf('\n', prevEnd);
      if (nl < 0) nl = Infinity;
    }
    if (nl < tok.startOffset && i > 0) breakBefore[i] = 1;
    prevEnd = tok.startOffset + tok.image.length;
    const tt = tok.tokenType;
    if (tt === T.RParen || tt === T.RBracket) depth = Math.max(0, depth - 1);
    nested[i] = depth > 0 ? 1 : 0;
    if (tt === T.LParen || tt === T.LBracket) depth++;
    // a brace resets nesting so that an unclosed '(' cannot swallow the next member forever
    if (tt === T.LCurly || tt === T.RCurly) depth = 0;
  }
  return { breakBefore, nested };
}

/**
 * The value of a rule that read no token of its own (all of it was recovered). Its span is the
 * end of the enclosing node's span, which is known only to the caller: the caller builds it.
 */
class Deferred {
  constructor(
    readonly frame: Frame,
    readonly build: (f: Frame, span: Span) => unknown,
  ) {}
}

/** What a rule has read so far: tokens in named fields, the values of its subrules in order. */
interface Frame {
  subs: unknown[];
  [k: string]: unknown;
}

/**
 * An operand of a flat expression with prefix operators, or one whose primary read nothing: its
 * parts. An operand without prefixes that read its primary is that primary itself (no wrapper).
 */
class Operand {
  constructor(
    readonly pfx: IToken[] | undefined,
    readonly prim: unknown,
    readonly span: Span,
  ) {}
}

/** The parts of an operand value (a primary stands for itself). */
function partsOf(v: unknown, fallback: Span): Operand {
  const o = resolve(v, fallback);
  return o instanceof Operand ? o : new Operand(undefined, o, (o as A.Expr).span);
}

const NONE: never[] = [];

/** Frames start with this shared empty list; `add` replaces it (it is never written). */
const NO_SUBS: unknown[] = Object.freeze([]) as unknown as unknown[];
const newFrame = (): Frame => ({ subs: NO_SUBS });

/**
 * Appends a subrule's value to a frame. Most frames get one value: a one-element array is
 * allocated for it, where a push onto an empty array would allocate room for seventeen.
 */
function add(f: Frame, v: unknown): void {
  if (f.subs.length === 0) f.subs = [v];
  else f.subs.push(v);
}

/** `add` for the operators of an expression frame. */
function addOp(f: Frame, op: IToken): void {
  const ops = f.ops as IToken[];
  if (ops.length === 0) f.ops = [op];
  else ops.push(op);
}

const isPrefix = (tt: unknown): boolean => tt === T.Minus || tt === T.Plus || tt === Kw.not;
const OPERATORS = new Set<unknown>([Kw.or, Kw.and, T.LessEq, T.GreaterEq, T.EqEq, T.NotEq, T.Less, T.Greater, T.Plus, T.Minus, T.Star, T.Slash, T.Caret]);
/** A token that the expression rule's operator alternatives start with. */
const isOperator = (tt: unknown): boolean => OPERATORS.has(tt);

/**
 * The frame of an operand, with every field it may get in place from the start: operands are
 * the commonest rule, and frames of one shape keep the reads in its builder monomorphic.
 */
const operandFrame = (): Frame => ({ subs: NO_SUBS, pfx: undefined, p0: 0, alt: 0, num: undefined, unit: undefined, head: undefined, lp: undefined, quote: undefined, parts: undefined });
const expressionFrame = (): Frame => ({ subs: NO_SUBS, ops: NO_SUBS });

function validOffset(n: number | undefined): n is number {
  return typeof n === 'number' && Number.isFinite(n);
}

function tokSpan(t: IToken | undefined, fallback: Span): Span {
  if (!t || !validOffset(t.startOffset) || t.isInsertedInRecovery) return { start: fallback.end, end: fallback.end };
  return { start: t.startOffset, end: t.startOffset + t.image.length };
}

function ident(t: IToken | undefined, fallback: Span): A.Ident {
  if (!t || t.isInsertedInRecovery || !validOffset(t.startOffset)) return { name: '', span: { start: fallback.end, end: fallback.end }, missing: true };
  return { name: t.image, span: tokSpan(t, fallback) };
}

/** A subrule's value; a recovered empty one gets the end of `fallback` as its span. */
function resolve(v: unknown, fallback: Span): unknown {
  if (v instanceof Deferred) return v.build(v.frame, { start: fallback.end, end: fallback.end });
  return v;
}

function expr(v: unknown, fallback: Span): A.Expr {
  if (v === undefined) return { kind: 'error', span: { start: fallback.end, end: fallback.end } };
  return resolve(v, fallback) as A.Expr;
}

function unit(t: IToken | undefined): A.UnitText | undefined {
  if (!t || !validOffset(t.startOffset) || t.isInsertedInRecovery) return undefined;
  const closed = t.image.endsWith(']');
  const inner = t.image.slice(1, closed ? -1 : undefined);
  const lead = inner.length - inner.trimStart().length;
  const text = inner.trim();
  const start = t.startOffset + 1 + lead;
  return { text, span: { start, end: start + text.length }, outer: { start: t.startOffset, end: t.startOffset + t.image.length } };
}

function path(v: unknown, fallback: Span): A.Ident[] {
  if (v === undefined) return [{ name: '', span: { start: fallback.end, end: fallback.end }, missing: true }];
  const ids = resolve(v, fallback) as IToken[];
  const all = ids.map((t) => ident(t, fallback));
  return all.length ? all : [{ name: '', span: { start: fallback.end, end: fallback.end }, missing: true }];
}

/** Entries take the member's span as fallback (the braces' own span is not used). */
function entries(v: unknown, fallback: Span): A.Entry[] {
  if (v === undefined) return [];
  return (resolve(v, fallback) as unknown[]).map((e) => resolve(e, fallback) as A.Entry);
}

function unquote(s: string): string {
  const body = s.startsWith('"') ? s.slice(1, s.endsWith('"') && s.length > 1 ? -1 : undefined) : s;
  return body.replace(/\\(.)/g, (_, ch: string) => (ch === 'n' ? '\n' : ch === 't' ? '\t' : ch));
}

const BINDING: Record<A.BinaryOp, number> = {
  or: 1,
  and: 2,
  '<': 4,
  '<=': 4,
  '>': 4,
  '>=': 4,
  '==': 4,
  '!=': 4,
  '+': 5,
  '-': 5,
  '*': 6,
  '/': 6,
  '^': 8,
};

function binaryOp(image: string): A.BinaryOp {
  if (image === '\u2212') return '-';
  if (image === '\u00b7') return '*';
  return image as A.BinaryOp;
}

/**
 * Builds the tree of a flat run `operand (op operand)*`, each operand being prefix operators
 * and a primary, by precedence climbing. Binding powers: or 1, and 2, comparisons 4, + − 5,
 * * / 6, ^ 8 (right-associative). A prefix `not` takes everything that binds tighter than
 * `and` (`not a < b` is not (a < b)); a prefix − or + takes what binds tighter than * /
 * (`-x^2` is −(x²), `-a*b` is (−a)·b).
 */
function flatExpression(operands: unknown[], ops: IToken[], span: Span): A.Expr {
  // the commonest expression is one operand without prefixes: its primary as it is
  if (ops.length === 0 && operands.length === 1 && operands[0]) {
    const o = resolve(operands[0], span);
    if (!(o instanceof Operand)) return o as A.Expr;
    if (!o.pfx || o.pfx.length === 0) return expr(o.prim, o.span);
    operands = [o];
  }
  let pos = 0; // operand being read; ops[pos] follows operands[pos]
  let pre = 0; // prefix operators of operands[pos] already read
  const empty = (at: number): A.Expr => ({ kind: 'error', span: { start: at, end: at } });
  const atom = (): A.Expr => {
    const raw = operands[pos];
    if (!raw) return empty(span.end);
    const o = partsOf(raw, span);
    const pfx = o.pfx ?? NONE;
    if (pre < pfx.length) {
      const t = pfx[pre++];
      const op: A.UnaryOp = t.image === 'not' ? 'not' : t.image === '+' ? '+' : '-';
      const operand = climb(op === 'not' ? 2 : 6);
      const opSpan = tokSpan(t, span);
      const whole = { start: opSpan.start, end: Math.max(opSpan.end, operand.span.end) };
      // A signed literal is one value: `-10 [degC]` is minus ten degrees Celsius (263.15 K),
      // not the negation of 283.15 K. Folding the sign here gives every later pass that reading.
      if ((op === '-' || op === '+') && (operand.kind === 'number' || operand.kind === 'quantity') && !operand.text.startsWith('-') && !operand.text.startsWith('+')) {
        const value = op === '-' ? -operand.value : operand.value;
        const text = (op === '-' ? '-' : '') + operand.text;
        const numberSpan = { start: opSpan.start, end: operand.kind === 'quantity' ? operand.numberSpan.end : operand.span.end };
        return operand.kind === 'quantity' ? { ...operand, span: whole, value, text, numberSpan } : { ...operand, span: whole, value, text };
      }
      return { kind: 'unary', span: whole, op, opSpan, operand };
    }
    const e = expr(o.prim, o.span);
    pos++;
    pre = 0;
    return e;
  };
  const climb = (minBp: number): A.Expr => {
    let left = atom();
    while (pos - 1 < ops.length && pos > 0) {
      const opTok = ops[pos - 1];
      const op = binaryOp(opTok.image);
      const bp = BINDING[op];
      if (bp <= minBp) break;
      const consumed = pos;
      const right = operands[pos] ? climb(op === '^' ? bp - 1 : bp) : empty(left.span.end);
      if (pos === consumed && !operands[consumed]) pos++;
      left = { kind: 'binary', span: { start: left.span.start, end: Math.max(left.span.end, right.span.end) }, op, opSpan: tokSpan(opTok, left.span), left, right };
    }
    return left;
  };
  return climb(0);
}

function list(items: A.Expr[], span: Span): A.Expr {
  if (items.length > 0 && items.every((i) => i.kind === 'list' || i.kind === 'matrix')) {
    // a list of lists is a matrix; `[[1, 2]]` is a 1×2 matrix
    const rows: A.Expr[][] = [];
    const rowSpans: Span[] = [];
    for (const it of items) {
      if (it.kind === 'list') {
        rows.push(it.items);
        rowSpans.push(it.span);
      } else if (it.kind === 'matrix') {
        rows.push(...it.rows);
        rowSpans.push(...it.rowSpans);
      }
    }
    return { kind: 'matrix', span, rows, rowSpans };
  }
  return { kind: 'list', span, items };
}

type Member = A.SystemMember | A.LoopMember;

const ZERO: Span = { start: 0, end: 0 };

export class LoopParser extends EmbeddedActionsParser {
  private layout: TokenLayout = { breakBefore: new Uint8Array(0), nested: new Uint8Array(0) };
  // Start offsets of the tokens consumed so far (inserted ones left out) and the end of the last
  // one: a rule's span runs from the first token it consumed to the last.
  // (a typed array of one slot per token, so that it is neither grown nor copied by the
  // collector while the syntax tree is being built; nStarts is its length in use)
  private starts = new Int32Array(0);
  private nStarts = 0;
  private lastEnd = 0;
  // The value of the last rule that failed (what it had read), for its caller or its recovery.
  private pending: unknown = undefined;
  private hasPending = false;
  // Frames of the rules whose shared alternatives or repetitions are running.
  private exTop!: Frame;
  private opTop!: Frame;
  private liTop!: Frame;
  // Alternatives of each OR, built once: a literal array in a rule body would be allocated (with
  // one object and one closure per alternative) on every call of the rule.
  private blockKeywordAlts?: IOrAlt<IToken>[];
  private descriptionAlts?: IOrAlt<IToken>[];
  private memberAlts?: IOrAlt<unknown>[];
  private operatorAlts?: IOrAlt<IToken>[];
  private prefixAlts?: IOrAlt<IToken>[];
  private primaryAlts?: IOrAlt<unknown>[];
  private nameTailAlts?: IOrAlt<unknown>[];
  private continuation?: { GATE: () => boolean; DEF: () => void };
  private argList?: { SEP: typeof T.Comma; DEF: () => void };
  private itemList?: { SEP: typeof T.Comma; DEF: () => void };

  constructor() {
    super(T.allTokens, { recoveryEnabled: true, maxLookahead: 4, errorMessageProvider: messages });
    this.performSelfAnalysis();
    const self = this as unknown as { consumeInternal: (tt: unknown, idx: number, opts: unknown) => IToken };
    const consume = self.consumeInternal;
    self.consumeInternal = (tt, idx, opts) => {
      const t = consume.call(this, tt, idx, opts);
      if (!t.isInsertedInRecovery && validOffset(t.startOffset)) {
        if (this.nStarts === this.starts.length) {
          // cannot happen (each input token is consumed once); grown rather than lost if it does
          const grown = new Int32Array(2 * this.starts.length + 16);
          grown.set(this.starts);
          this.starts = grown;
        }
        this.starts[this.nStarts++] = t.startOffset;
        this.lastEnd = t.startOffset + t.image.length;
      }
      return t;
    };
  }

  setInput(tokens: IToken[], text: string): void {
    this.layout = layoutOf(tokens, text);
    if (this.starts.length < tokens.length + 1) this.starts = new Int32Array(tokens.length + 1);
    this.nStarts = 0;
    this.lastEnd = 0;
    this.pending = undefined;
    this.hasPending = false;
    this.input = tokens;
  }

  /** Parses the whole input into its blocks. */
  parseFile(): A.Block[] {
    const v = this.file();
    const blocks = (v instanceof Deferred ? v.frame.subs : ((v as unknown[] | undefined) ?? NONE)) as unknown[];
    const out: A.Block[] = [];
    for (const b of blocks) {
      const block = resolve(b, ZERO) as A.Block | undefined;
      if (block) out.push(block);
    }
    return out;
  }

  /**
   * A rule that reads into a frame and builds its value from it. When the rule fails, what it
   * had read (with the value of a failed subrule) is still built: the caller or the recovery
   * gets it, as a half-typed member still has its name and the part of its value before the gap.
   */
  private R<T>(name: string, body: (f: Frame) => void, build: (f: Frame, span: Span) => T, frame: () => Frame = newFrame) {
    return this.RULE(
      name,
      (): T => {
        const f: Frame = frame();
        if (this.RECORDING_PHASE) {
          body(f);
          return undefined as T;
        }
        const n0 = this.nStarts;
        try {
          body(f);
        } catch (e) {
          if (this.hasPending) {
            add(f, this.pending);
            this.hasPending = false;
          }
          this.pending = this.finish(f, n0, build);
          this.hasPending = true;
          throw e;
        }
        return this.finish(f, n0, build) as T;
      },
      {
        recoveryValueFunc: () => {
          const v = this.pending;
          this.pending = undefined;
          this.hasPending = false;
          return v as T;
        },
      },
    );
  }

  private finish(f: Frame, n0: number, build: (f: Frame, span: Span) => unknown): unknown {
    if (n0 < this.nStarts) return build(f, { start: this.starts[n0], end: this.lastEnd });
    return new Deferred(f, build);
  }

  /** True when the next token may continue the current expression (not a new line's start). */
  private continues(): boolean {
    // Chevrotain's lexer adapter keeps the index of the last consumed token in `currIdx`.
    const i = (this as unknown as { currIdx: number }).currIdx + 1;
    if (!(i >= 0 && i < this.layout.breakBefore.length)) return true;
    return !this.layout.breakBefore[i] || !!this.layout.nested[i];
  }

  public file = this.R(
    'file',
    (f) => {
      this.MANY(() => {
        add(f, this.SUBRULE(this.block));
      });
    },
    (f) => f.subs,
  );

  public block = this.R(
    'block',
    (f) => {
      f.kw = this.OR((this.blockKeywordAlts ??= [{ ALT: () => this.CONSUME(Kw.plant) }, { ALT: () => this.CONSUME(Kw.controller) }, { ALT: () => this.CONSUME(Kw.loop) }]));
      f.name = this.CONSUME(T.Ident);
      this.OPTION(() => {
        f.desc = this.OR2((this.descriptionAlts ??= [{ ALT: () => this.CONSUME(T.StringLit) }, { ALT: () => this.CONSUME(T.UnterminatedString) }]));
      });
      f.lc = this.CONSUME(T.LCurly);
      this.MANY(() => {
        add(f, this.SUBRULE(this.member));
      });
      f.rc = this.CONSUME(T.RCurly);
    },
    (f, span): A.Block | undefined => {
      const kwTok = f.kw as IToken | undefined;
      if (!kwTok) return undefined;
      const keywordSpan = tokSpan(kwTok, span);
      const name = ident(f.name as IToken | undefined, keywordSpan);
      const descTok = f.desc as IToken | undefined;
      const description = descTok && validOffset(descTok.startOffset) ? { text: unquote(descTok.image), span: tokSpan(descTok, span) } : undefined;
      const lc = f.lc as IToken | undefined;
      const rc = f.rc as IToken | undefined;
      const bodyStart = lc && validOffset(lc.startOffset) ? lc.startOffset + 1 : name.span.end;
      const bodyEnd = rc && validOffset(rc.startOffset) && !rc.isInsertedInRecovery ? rc.startOffset : span.end;
      const bodySpan = { start: bodyStart, end: Math.max(bodyStart, bodyEnd) };
      const kind = kwTok.image as 'plant' | 'controller' | 'loop';
      const members: Member[] = [];
      for (const m of f.subs) {
        const member = resolve(m, ZERO) as Member | undefined;
        if (member) members.push(member);
      }
      if (kind === 'loop') return { kind, span, keywordSpan, name, description, members: members as A.LoopMember[], bodySpan };
      return { kind, span, keywordSpan, name, description, members: members as A.SystemMember[], bodySpan };
    },
  );

  public member = this.R(
    'member',
    (f) => {
      add(f, 
        this.OR({
          IGNORE_AMBIGUITIES: true,
          DEF: (this.memberAlts ??= [
            { ALT: () => this.SUBRULE(this.paramMember) },
            { ALT: () => this.SUBRULE(this.letMember) },
            { ALT: () => this.SUBRULE(this.stateMember) },
            { ALT: () => this.SUBRULE(this.inputMember) },
            { ALT: () => this.SUBRULE(this.outputMember) },
            { ALT: () => this.SUBRULE(this.linearMember) },
            { ALT: () => this.SUBRULE(this.pidMember) },
            { ALT: () => this.SUBRULE(this.limitMember) },
            { ALT: () => this.SUBRULE(this.operatingMember) },
            { ALT: () => this.SUBRULE(this.sampleMember) },
            { ALT: () => this.SUBRULE(this.signalMember) },
            { ALT: () => this.SUBRULE(this.useMember) },
            { ALT: () => this.SUBRULE(this.aroundMember) },
            { ALT: () => this.SUBRULE(this.startMember) },
            { ALT: () => this.SUBRULE(this.simulateMember) },
            { ALT: () => this.SUBRULE(this.compareMember) },
            { ALT: () => this.SUBRULE(this.sweepMember) },
            { ALT: () => this.SUBRULE(this.showMember) },
            { ALT: () => this.SUBRULE(this.expectMember) },
            { ALT: () => this.SUBRULE(this.solveMember) },
            // `x' = …` and `y / u = …` are told from an arrow by the lookahead itself (Ident Quote
            // Equals; Ident Slash Ident Equals): no expression of an arrow has '=' in that place.
            { ALT: () => this.SUBRULE(this.derivMember) },
            { ALT: () => this.SUBRULE(this.transferMember) },
            { ALT: () => this.SUBRULE(this.arrowMember) },
          ]),
        }),
      );
    },
    // a member is its one alternative; none (no viable member) leaves nothing
    (f, span) => (f.subs.length ? resolve(f.subs[0], span) : undefined),
  );

  private paramMember = this.R(
    'paramMember',
    (f) => {
      this.CONSUME(Kw.param);
      f.id = this.CONSUME(T.Ident);
      this.CONSUME(T.Equals);
      add(f, this.SUBRULE(this.expression));
    },
    (f, span): Member => ({ kind: 'param', span, name: ident(f.id as IToken, span), value: expr(f.subs[0], span) }),
  );

  private letMember = this.R(
    'letMember',
    (f) => {
      this.CONSUME(Kw.let);
      f.id = this.CONSUME(T.Ident);
      this.CONSUME(T.Equals);
      add(f, this.SUBRULE(this.expression));
    },
    (f, span): Member => ({ kind: 'let', span, name: ident(f.id as IToken, span), value: expr(f.subs[0], span) }),
  );

  private stateMember = this.R(
    'stateMember',
    (f) => {
      this.CONSUME(Kw.state);
      f.id = this.CONSUME(T.Ident);
      this.OPTION(() => {
        f.unit = this.CONSUME(T.UnitLit);
      });
      this.OPTION2(() => {
        this.CONSUME(T.Equals);
        add(f, this.SUBRULE(this.expression));
      });
    },
    (f, span): Member => ({ kind: 'state', span, name: ident(f.id as IToken, span), unit: unit(f.unit as IToken | undefined), init: f.subs.length ? expr(f.subs[0], span) : undefined }),
  );

  private inputMember = this.R(
    'inputMember',
    (f) => {
      this.CONSUME(Kw.input);
      f.id = this.CONSUME(T.Ident);
      this.OPTION(() => {
        f.unit = this.CONSUME(T.UnitLit);
      });
    },
    (f, span): Member => ({ kind: 'input', span, name: ident(f.id as IToken, span), unit: unit(f.unit as IToken | undefined) }),
  );

  private outputMember = this.R(
    'outputMember',
    (f) => {
      this.CONSUME(Kw.output);
      f.id = this.CONSUME(T.Ident);
      this.OPTION(() => {
        f.unit = this.CONSUME(T.UnitLit);
      });
      this.OPTION2(() => {
        this.CONSUME(T.Equals);
        add(f, this.SUBRULE(this.expression));
      });
    },
    (f, span): Member => ({ kind: 'output', span, name: ident(f.id as IToken, span), unit: unit(f.unit as IToken | undefined), value: f.subs.length ? expr(f.subs[0], span) : undefined }),
  );

  private linearMember = this.R(
    'linearMember',
    (f) => {
      f.kw = this.CONSUME(Kw.linear);
      add(f, this.SUBRULE(this.entries));
    },
    (f, span): Member => ({ kind: 'linear', span, keywordSpan: tokSpan(f.kw as IToken, span), entries: entries(f.subs[0], span) }),
  );

  private pidMember = this.R(
    'pidMember',
    (f) => {
      this.CONSUME(Kw.pid);
      f.output = this.CONSUME(T.Ident);
      this.CONSUME(Kw.from);
      f.input = this.CONSUME2(T.Ident);
      add(f, this.SUBRULE(this.entries));
    },
    (f, span): Member => ({ kind: 'pid', span, output: ident(f.output as IToken, span), input: ident(f.input as IToken, span), entries: entries(f.subs[0], span) }),
  );

  private limitMember = this.R(
    'limitMember',
    (f) => {
      this.CONSUME(Kw.limit);
      f.id = this.CONSUME(T.Ident);
      this.CONSUME(Kw.within);
      add(f, this.SUBRULE(this.expression));
      this.CONSUME(T.DotDot);
      add(f, this.SUBRULE2(this.expression));
    },
    (f, span): Member => ({ kind: 'limit', span, target: ident(f.id as IToken, span), lo: expr(f.subs[0], span), hi: expr(f.subs[1], span) }),
  );

  private operatingMember = this.R(
    'operatingMember',
    (f) => {
      this.CONSUME(Kw.operating);
      this.CONSUME(Kw.point);
      f.id = this.CONSUME(T.Ident);
      add(f, this.SUBRULE(this.entries));
    },
    (f, span): Member => ({ kind: 'operatingPoint', span, name: ident(f.id as IToken, span), entries: entries(f.subs[0], span) }),
  );

  private sampleMember = this.R(
    'sampleMember',
    (f) => {
      this.CONSUME(Kw.sample);
      this.CONSUME(Kw.every);
      add(f, this.SUBRULE(this.expression));
      this.OPTION(() => {
        this.CONSUME(Kw.by);
        f.method = this.CONSUME(T.Ident);
      });
    },
    (f, span): Member => {
      const m = f.method as IToken | undefined;
      return { kind: 'sample', span, period: expr(f.subs[0], span), method: m ? ident(m, span) : undefined };
    },
  );

  private signalMember = this.R(
    'signalMember',
    (f) => {
      this.CONSUME(Kw.signal);
      f.id = this.CONSUME(T.Ident);
      this.CONSUME(T.Equals);
      add(f, this.SUBRULE(this.expression));
    },
    (f, span): Member => ({ kind: 'signal', span, name: ident(f.id as IToken, span), value: expr(f.subs[0], span) }),
  );

  private useMember = this.R(
    'useMember',
    (f) => {
      this.CONSUME(Kw.use);
      f.name = this.CONSUME(T.Ident);
      this.CONSUME(T.Equals);
      f.system = this.CONSUME2(T.Ident);
      this.CONSUME(T.LParen);
      this.MANY(() => {
        add(f, this.SUBRULE(this.entry));
        this.OPTION(() => this.CONSUME(T.Comma));
      });
      this.CONSUME(T.RParen);
    },
    (f, span): Member => ({ kind: 'use', span, name: ident(f.name as IToken, span), system: ident(f.system as IToken, span), overrides: f.subs.map((e) => resolve(e, span) as A.Entry) }),
  );

  private aroundMember = this.R(
    'aroundMember',
    (f) => {
      this.CONSUME(Kw.around);
      add(f, this.SUBRULE(this.path));
    },
    (f, span): Member => ({ kind: 'around', span, target: path(f.subs[0], span) }),
  );

  private startMember = this.R(
    'startMember',
    (f) => {
      this.CONSUME(Kw.start);
      add(f, this.SUBRULE(this.path));
      this.CONSUME(T.Equals);
      add(f, this.SUBRULE(this.expression));
    },
    (f, span): Member => ({ kind: 'start', span, target: path(f.subs[0], span), value: expr(f.subs[1], span) }),
  );

  private simulateMember = this.R(
    'simulateMember',
    (f) => {
      this.CONSUME(Kw.simulate);
      add(f, this.SUBRULE(this.expression));
      this.OPTION(() => {
        add(f, this.SUBRULE(this.entries));
      });
    },
    (f, span): Member => ({ kind: 'simulate', span, duration: expr(f.subs[0], span), options: f.subs.length > 1 ? entries(f.subs[1], span) : [] }),
  );

  private compareMember = this.R(
    'compareMember',
    () => {
      this.CONSUME(Kw.compare);
      this.CONSUME(Kw.linear);
    },
    (_f, span): Member => ({ kind: 'compare', span }),
  );

  private sweepMember = this.R(
    'sweepMember',
    (f) => {
      this.CONSUME(Kw.sweep);
      this.OR([
        {
          ALT: () => {
            f.start = this.CONSUME(Kw.start);
            add(f, this.SUBRULE(this.path));
            this.CONSUME(Kw.over);
            add(f, this.SUBRULE(this.expression));
            this.MANY(() => {
              this.CONSUME(T.Comma);
              add(f, this.SUBRULE2(this.expression));
            });
          },
        },
        {
          ALT: () => {
            add(f, this.SUBRULE2(this.path));
            this.CONSUME2(Kw.over);
            add(f, this.SUBRULE3(this.expression));
            this.CONSUME(T.DotDot);
            add(f, this.SUBRULE4(this.expression));
            this.CONSUME(Kw.steps);
            add(f, this.SUBRULE5(this.expression));
          },
        },
      ]);
    },
    (f, span): Member => {
      if (f.start) {
        return { kind: 'sweepStart', span, target: path(f.subs[0], span), values: f.subs.slice(1).map((v) => expr(v, span)) };
      }
      return { kind: 'sweepParam', span, target: path(f.subs[0], span), lo: expr(f.subs[1], span), hi: expr(f.subs[2], span), steps: expr(f.subs[3], span) };
    },
  );

  private showMember = this.R(
    'showMember',
    (f) => {
      this.CONSUME(Kw.show);
      add(f, this.SUBRULE(this.expression));
      this.MANY(() => {
        this.CONSUME(T.Comma);
        add(f, this.SUBRULE2(this.expression));
      });
    },
    (f, span): Member => ({ kind: 'show', span, signals: f.subs.map((e) => expr(e, span)) }),
  );

  private expectMember = this.R(
    'expectMember',
    (f) => {
      this.CONSUME(Kw.expect);
      add(f, this.SUBRULE(this.expression));
    },
    (f, span): Member => ({ kind: 'expect', span, test: expr(f.subs[0], span) }),
  );

  private solveMember = this.R(
    'solveMember',
    () => {
      this.CONSUME(Kw.solve);
      this.CONSUME(Kw.algebraic);
    },
    (_f, span): Member => ({ kind: 'solveAlgebraic', span }),
  );

  private derivMember = this.R(
    'derivMember',
    (f) => {
      f.id = this.CONSUME(T.Ident);
      this.CONSUME(T.Quote);
      this.CONSUME(T.Equals);
      add(f, this.SUBRULE(this.expression));
    },
    (f, span): Member => ({ kind: 'derivEq', span, target: ident(f.id as IToken, span), value: expr(f.subs[0], span) }),
  );

  private transferMember = this.R(
    'transferMember',
    (f) => {
      f.output = this.CONSUME(T.Ident);
      this.CONSUME(T.Slash);
      f.input = this.CONSUME2(T.Ident);
      this.CONSUME(T.Equals);
      add(f, this.SUBRULE(this.expression));
    },
    (f, span): Member => ({ kind: 'transfer', span, output: ident(f.output as IToken, span), input: ident(f.input as IToken, span), value: expr(f.subs[0], span) }),
  );

  private arrowMember = this.R(
    'arrowMember',
    (f) => {
      add(f, this.SUBRULE(this.expression));
      f.arrow = this.CONSUME(T.Arrow);
      add(f, this.SUBRULE(this.path));
    },
    (f, span): Member => {
      const target = path(f.subs[1], span);
      return {
        kind: 'arrow',
        span,
        source: expr(f.subs[0], span),
        arrowSpan: tokSpan(f.arrow as IToken | undefined, span),
        target,
        targetSpan: target.length ? { start: target[0].span.start, end: target[target.length - 1].span.end } : { start: span.end, end: span.end },
      };
    },
  );

  /** The tokens of a dotted name (the caller makes idents of them). */
  public path = this.R(
    'path',
    (f) => {
      add(f, this.CONSUME(T.Ident));
      this.MANY(() => {
        this.CONSUME(T.Dot);
        add(f, this.CONSUME2(T.Ident));
      });
    },
    (f) => f.subs,
  );

  /** The entries in braces (each built with the enclosing member's span as fallback). */
  private entries = this.R(
    'entries',
    (f) => {
      this.CONSUME(T.LCurly);
      this.MANY(() => {
        add(f, this.SUBRULE(this.entry));
        this.OPTION(() => this.CONSUME(T.Comma));
      });
      this.CONSUME(T.RCurly);
    },
    (f) => f.subs,
  );

  private entry = this.R(
    'entry',
    (f) => {
      f.id = this.CONSUME(T.Ident);
      this.CONSUME(T.Equals);
      add(f, this.SUBRULE(this.expression));
    },
    (f, span): A.Entry => ({ name: ident(f.id as IToken, span), value: expr(f.subs[0], span), span }),
  );

  // ---------- expressions ----------
  // An expression is a flat run of operands and binary operators, built into a tree by
  // precedence in flatExpression (or < and < not < comparisons < + - < * / < unary - + < ^).

  public expression = this.R(
    'expression',
    (f) => {
      add(f, this.SUBRULE(this.operand));
      this.exTop = f;
      // most expressions are one operand: the repetition runs only when an operator continues it
      if (!this.RECORDING_PHASE && !(isOperator(this.LA(1).tokenType) && this.continues())) return;
      this.MANY((this.continuation ??= {
        GATE: () => this.continues(),
        DEF: () => {
          const g = this.exTop;
          addOp(
            g,
            this.OR((this.operatorAlts ??= [
              { ALT: () => this.CONSUME(Kw.or) },
              { ALT: () => this.CONSUME(Kw.and) },
              { ALT: () => this.CONSUME(T.LessEq) },
              { ALT: () => this.CONSUME(T.GreaterEq) },
              { ALT: () => this.CONSUME(T.EqEq) },
              { ALT: () => this.CONSUME(T.NotEq) },
              { ALT: () => this.CONSUME(T.Less) },
              { ALT: () => this.CONSUME(T.Greater) },
              { ALT: () => this.CONSUME(T.Plus) },
              { ALT: () => this.CONSUME(T.Minus) },
              { ALT: () => this.CONSUME(T.Star) },
              { ALT: () => this.CONSUME(T.Slash) },
              { ALT: () => this.CONSUME(T.Caret) },
            ])),
          );
          add(g, this.SUBRULE2(this.operand));
          this.exTop = g;
        },
      }));
    },
    (f, span): A.Expr => flatExpression(f.subs, f.ops as IToken[], span),
    expressionFrame,
  );

  /**
   * One operand: prefix operators (`-`, `+`, `not`), then a primary: a number with its unit, a
   * name (plain, dotted, called or differentiated), parentheses, a list or an `if`. One rule, so
   * that the commonest operand, a plain name, costs one rule call.
   */
  // f.alt: 1 a number, 2 a name, 3 parentheses, 4 a list or `if` (its value is the primary);
  // f.p0: index in `starts` of the primary's first token
  private operand = this.R(
    'operand',
    (f) => {
      this.opTop = f;
      // most operands have no prefix: the repetition (and its end-of-repetition recovery check)
      // runs only when one is next; the grammar is recorded with it either way
      if (this.RECORDING_PHASE || isPrefix(this.LA(1).tokenType)) this.MANY(this.prefix);
      f.p0 = this.nStarts;
      this.OR((this.primaryAlts ??= [
        {
          ALT: () => {
            const g = this.opTop;
            g.alt = 1;
            g.num = this.CONSUME(T.NumberLit);
            this.OPTION(this.unitOption);
          },
        },
        {
          ALT: () => {
            const g = this.opTop;
            g.alt = 2;
            g.head = this.CONSUME(T.Ident);
            // a plain name (the commonest operand) has no tail to choose
            const nt = this.LA(1).tokenType;
            if (!this.RECORDING_PHASE && nt !== T.LParen && nt !== T.Quote && nt !== T.Dot) return;
            this.OR2((this.nameTailAlts ??= [
              {
                ALT: () => {
                  this.opTop.lp = this.CONSUME(T.LParen);
                  this.MANY_SEP((this.argList ??= {
                    SEP: T.Comma,
                    DEF: () => {
                      const h = this.opTop;
                      add(h, this.SUBRULE(this.expression));
                      this.opTop = h;
                    },
                  }));
                  this.CONSUME(T.RParen);
                },
              },
              {
                ALT: () => {
                  this.opTop.quote = this.CONSUME(T.Quote);
                },
              },
              {
                ALT: () =>
                  this.MANY2(() => {
                    this.CONSUME(T.Dot);
                    const h = this.opTop;
                    const id = this.CONSUME2(T.Ident);
                    if (h.parts) (h.parts as IToken[]).push(id);
                    else h.parts = [id];
                  }),
              },
            ]));
          },
        },
        {
          ALT: () => {
            const g = this.opTop;
            g.alt = 3;
            this.CONSUME2(T.LParen);
            add(g, this.SUBRULE2(this.expression));
            this.CONSUME2(T.RParen);
          },
        },
        {
          ALT: () => {
            const g = this.opTop;
            g.alt = 4;
            add(g, this.SUBRULE(this.listExpr));
          },
        },
        {
          ALT: () => {
            const g = this.opTop;
            g.alt = 4;
            add(g, this.SUBRULE(this.ifExpr));
          },
        },
      ]));
    },
    (f, span): unknown => {
      const p0 = f.p0 as number | undefined;
      const pfx = f.pfx as IToken[] | undefined;
      // the primary's own span: from its first token (prefix operators left out) to the end
      // (an operand that read nothing at all is built later, once its caller knows where it
      // stands: its span is then empty and later tokens are not its own)
      const read = p0 !== undefined && p0 < this.nStarts && span.end > span.start;
      // without prefixes the primary starts where the operand does: the operand is its primary
      if (read && pfx === undefined) return this.primaryOf(f, span);
      const pspan = read ? { start: this.starts[p0], end: span.end } : { start: span.end, end: span.end };
      return new Operand(pfx, read ? this.primaryOf(f, pspan) : undefined, span);
    },
    operandFrame,
  );

  private prefix = (): void => {
    const t = this.OR3((this.prefixAlts ??= [{ ALT: () => this.CONSUME(T.Minus) }, { ALT: () => this.CONSUME(T.Plus) }, { ALT: () => this.CONSUME(Kw.not) }]));
    const f = this.opTop;
    ((f.pfx as IToken[] | undefined) ?? (f.pfx = [])).push(t);
  };

  private unitOption = (): void => {
    this.opTop.unit = this.CONSUME(T.UnitLit);
  };

  /** The primary of an operand whose primary read at least one token; `span` is its own span. */
  private primaryOf(f: Frame, span: Span): A.Expr {
    const num = f.num as IToken | undefined;
    if (num) {
      const numberSpan = tokSpan(num, span);
      // a number with a missing exponent (reported as LW105) reads as its mantissa
      const value = T.missingExponent(num.image) ? Number(num.image.replace(/[eE][+-]?$/, '')) : Number(num.image);
      const u = unit(f.unit as IToken | undefined);
      if (num.isInsertedInRecovery || !validOffset(num.startOffset)) return { kind: 'error', span: numberSpan };
      if (u) return { kind: 'quantity', span: { start: numberSpan.start, end: u.outer.end }, value, text: num.image, numberSpan, unit: u };
      return { kind: 'number', span: numberSpan, value, text: num.image };
    }
    if (f.alt === 2) {
      const head = ident(f.head as IToken | undefined, span);
      if (head.missing) return { kind: 'error', span };
      if (f.lp) return { kind: 'call', span, callee: head, args: f.subs.map((a) => expr(a, span)) };
      if (f.quote) return { kind: 'deriv', span, name: head };
      const parts = f.parts as IToken[] | undefined;
      if (parts) {
        const p = [head];
        for (const t of parts) p.push(ident(t, span));
        return { kind: 'member', span: { start: head.span.start, end: p[p.length - 1].span.end }, path: p };
      }
      return { kind: 'name', span: head.span, name: head.name };
    }
    if (f.subs.length) {
      const e = expr(f.subs[0], span);
      // keep the parentheses in the span so ranges cover what the user sees
      return f.alt === 3 ? ({ ...e, span } as A.Expr) : e;
    }
    return { kind: 'error', span };
  }

  private listExpr = this.R(
    'listExpr',
    (f) => {
      this.CONSUME(T.LBracket);
      this.liTop = f;
      this.MANY_SEP((this.itemList ??= {
        SEP: T.Comma,
        DEF: () => {
          const g = this.liTop;
          add(g, this.SUBRULE(this.expression));
          this.liTop = g;
        },
      }));
      this.CONSUME(T.RBracket);
    },
    (f, span): A.Expr =>
      list(
        f.subs.map((i) => expr(i, span)),
        span,
      ),
  );

  private ifExpr = this.R(
    'ifExpr',
    (f) => {
      this.CONSUME(Kw.if);
      add(f, this.SUBRULE(this.expression));
      this.CONSUME(Kw.then);
      add(f, this.SUBRULE2(this.expression));
      this.CONSUME(Kw.else);
      add(f, this.SUBRULE3(this.expression));
    },
    (f, span): A.Expr => ({ kind: 'if', span, cond: expr(f.subs[0], span), then: expr(f.subs[1], span), else: expr(f.subs[2], span) }),
  );
}

/** One parser instance for the process: Chevrotain parsers are reusable and costly to build. */
let shared: LoopParser | undefined;
export function getParser(): LoopParser {
  shared ??= new LoopParser();
  return shared;
}
