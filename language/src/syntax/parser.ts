// The grammar of the loop language as a Chevrotain CST parser. Semantics stay out of it: the
// CST goes to to-ast.ts. `recoveryEnabled` keeps half-typed files analysable.
//
// Line breaks: whitespace is skipped by the lexer, but an expression does not continue across a
// line break with a binary operator at the start of the next line (outside parentheses and
// brackets). `x' = a` followed by a line `-b -> Sys.u` is therefore two members, as written.

import { CstParser, EOF, type IOrAlt, type IToken, type TokenType, type IParserErrorMessageProvider, defaultParserErrorProvider } from 'chevrotain';
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
    if (ruleName === 'primary' || ruleName === 'expression') return `expected an expression, found ${show(tok)}`;
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
  for (let i = 0; i < n; i++) {
    const tok = tokens[i];
    for (let k = prevEnd; k < tok.startOffset; k++) {
      if (text.charCodeAt(k) === 10) {
        breakBefore[i] = i > 0 ? 1 : 0;
        break;
      }
    }
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

export class LoopParser extends CstParser {
  private layout: TokenLayout = { breakBefore: new Uint8Array(0), nested: new Uint8Array(0) };
  // Alternatives of each OR, built once: a literal array in a rule body would be allocated (with
  // one object and one closure per alternative) on every call of the rule.
  private blockKeywordAlts?: IOrAlt<unknown>[];
  private descriptionAlts?: IOrAlt<unknown>[];
  private memberAlts?: IOrAlt<unknown>[];
  private sweepAlts?: IOrAlt<unknown>[];
  private operatorAlts?: IOrAlt<unknown>[];
  private prefixAlts?: IOrAlt<unknown>[];
  private primaryAlts?: IOrAlt<unknown>[];
  private nameTailAlts?: IOrAlt<unknown>[];
  private continuation?: { GATE: () => boolean; DEF: () => void };

  constructor() {
    super(T.allTokens, { recoveryEnabled: true, maxLookahead: 4, errorMessageProvider: messages, nodeLocationTracking: 'onlyOffset' });
    this.performSelfAnalysis();
  }

  setInput(tokens: IToken[], text: string): void {
    this.layout = layoutOf(tokens, text);
    this.input = tokens;
  }

  /** True when the next token may continue the current expression (not a new line's start). */
  private continues(): boolean {
    // Chevrotain's lexer adapter keeps the index of the last consumed token in `currIdx`.
    const i = (this as unknown as { currIdx: number }).currIdx + 1;
    if (!(i >= 0 && i < this.layout.breakBefore.length)) return true;
    return !this.layout.breakBefore[i] || !!this.layout.nested[i];
  }

  public file = this.RULE('file', () => {
    this.MANY(() => this.SUBRULE(this.block));
  });

  public block = this.RULE('block', () => {
    this.OR((this.blockKeywordAlts ??= [{ ALT: () => this.CONSUME(Kw.plant) }, { ALT: () => this.CONSUME(Kw.controller) }, { ALT: () => this.CONSUME(Kw.loop) }]));
    this.CONSUME(T.Ident, { LABEL: 'name' });
    this.OPTION(() => this.OR2((this.descriptionAlts ??= [{ ALT: () => this.CONSUME(T.StringLit, { LABEL: 'description' }) }, { ALT: () => this.CONSUME(T.UnterminatedString, { LABEL: 'description' }) }])));
    this.CONSUME(T.LCurly);
    this.MANY(() => this.SUBRULE(this.member));
    this.CONSUME(T.RCurly);
  });

  public member = this.RULE('member', () => {
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
    });
  });

  private paramMember = this.RULE('paramMember', () => {
    this.CONSUME(Kw.param);
    this.CONSUME(T.Ident);
    this.CONSUME(T.Equals);
    this.SUBRULE(this.expression);
  });

  private letMember = this.RULE('letMember', () => {
    this.CONSUME(Kw.let);
    this.CONSUME(T.Ident);
    this.CONSUME(T.Equals);
    this.SUBRULE(this.expression);
  });

  private stateMember = this.RULE('stateMember', () => {
    this.CONSUME(Kw.state);
    this.CONSUME(T.Ident);
    this.OPTION(() => this.CONSUME(T.UnitLit));
    this.OPTION2(() => {
      this.CONSUME(T.Equals);
      this.SUBRULE(this.expression);
    });
  });

  private inputMember = this.RULE('inputMember', () => {
    this.CONSUME(Kw.input);
    this.CONSUME(T.Ident);
    this.OPTION(() => this.CONSUME(T.UnitLit));
  });

  private outputMember = this.RULE('outputMember', () => {
    this.CONSUME(Kw.output);
    this.CONSUME(T.Ident);
    this.OPTION(() => this.CONSUME(T.UnitLit));
    this.OPTION2(() => {
      this.CONSUME(T.Equals);
      this.SUBRULE(this.expression);
    });
  });

  private linearMember = this.RULE('linearMember', () => {
    this.CONSUME(Kw.linear);
    this.SUBRULE(this.entries);
  });

  private pidMember = this.RULE('pidMember', () => {
    this.CONSUME(Kw.pid);
    this.CONSUME(T.Ident, { LABEL: 'output' });
    this.CONSUME(Kw.from);
    this.CONSUME2(T.Ident, { LABEL: 'input' });
    this.SUBRULE(this.entries);
  });

  private limitMember = this.RULE('limitMember', () => {
    this.CONSUME(Kw.limit);
    this.CONSUME(T.Ident);
    this.CONSUME(Kw.within);
    this.SUBRULE(this.expression, { LABEL: 'lo' });
    this.CONSUME(T.DotDot);
    this.SUBRULE2(this.expression, { LABEL: 'hi' });
  });

  private operatingMember = this.RULE('operatingMember', () => {
    this.CONSUME(Kw.operating);
    this.CONSUME(Kw.point);
    this.CONSUME(T.Ident);
    this.SUBRULE(this.entries);
  });

  private sampleMember = this.RULE('sampleMember', () => {
    this.CONSUME(Kw.sample);
    this.CONSUME(Kw.every);
    this.SUBRULE(this.expression);
    this.OPTION(() => {
      this.CONSUME(Kw.by);
      this.CONSUME(T.Ident, { LABEL: 'method' });
    });
  });

  private signalMember = this.RULE('signalMember', () => {
    this.CONSUME(Kw.signal);
    this.CONSUME(T.Ident);
    this.CONSUME(T.Equals);
    this.SUBRULE(this.expression);
  });

  private useMember = this.RULE('useMember', () => {
    this.CONSUME(Kw.use);
    this.CONSUME(T.Ident, { LABEL: 'name' });
    this.CONSUME(T.Equals);
    this.CONSUME2(T.Ident, { LABEL: 'system' });
    this.CONSUME(T.LParen);
    this.MANY(() => {
      this.SUBRULE(this.entry);
      this.OPTION(() => this.CONSUME(T.Comma));
    });
    this.CONSUME(T.RParen);
  });

  private aroundMember = this.RULE('aroundMember', () => {
    this.CONSUME(Kw.around);
    this.SUBRULE(this.path);
  });

  private startMember = this.RULE('startMember', () => {
    this.CONSUME(Kw.start);
    this.SUBRULE(this.path);
    this.CONSUME(T.Equals);
    this.SUBRULE(this.expression);
  });

  private simulateMember = this.RULE('simulateMember', () => {
    this.CONSUME(Kw.simulate);
    this.SUBRULE(this.expression);
    this.OPTION(() => this.SUBRULE(this.entries));
  });

  private compareMember = this.RULE('compareMember', () => {
    this.CONSUME(Kw.compare);
    this.CONSUME(Kw.linear);
  });

  private sweepMember = this.RULE('sweepMember', () => {
    this.CONSUME(Kw.sweep);
    this.OR((this.sweepAlts ??= [
      {
        ALT: () => {
          this.CONSUME(Kw.start);
          this.SUBRULE(this.path, { LABEL: 'startPath' });
          this.CONSUME(Kw.over);
          this.SUBRULE(this.expression, { LABEL: 'values' });
          this.MANY(() => {
            this.CONSUME(T.Comma);
            this.SUBRULE2(this.expression, { LABEL: 'values' });
          });
        },
      },
      {
        ALT: () => {
          this.SUBRULE2(this.path, { LABEL: 'paramPath' });
          this.CONSUME2(Kw.over);
          this.SUBRULE3(this.expression, { LABEL: 'lo' });
          this.CONSUME(T.DotDot);
          this.SUBRULE4(this.expression, { LABEL: 'hi' });
          this.CONSUME(Kw.steps);
          this.SUBRULE5(this.expression, { LABEL: 'steps' });
        },
      },
    ]));
  });

  private showMember = this.RULE('showMember', () => {
    this.CONSUME(Kw.show);
    this.SUBRULE(this.expression);
    this.MANY(() => {
      this.CONSUME(T.Comma);
      this.SUBRULE2(this.expression);
    });
  });

  private expectMember = this.RULE('expectMember', () => {
    this.CONSUME(Kw.expect);
    this.SUBRULE(this.expression);
  });

  private solveMember = this.RULE('solveMember', () => {
    this.CONSUME(Kw.solve);
    this.CONSUME(Kw.algebraic);
  });

  private derivMember = this.RULE('derivMember', () => {
    this.CONSUME(T.Ident);
    this.CONSUME(T.Quote);
    this.CONSUME(T.Equals);
    this.SUBRULE(this.expression);
  });

  private transferMember = this.RULE('transferMember', () => {
    this.CONSUME(T.Ident, { LABEL: 'output' });
    this.CONSUME(T.Slash);
    this.CONSUME2(T.Ident, { LABEL: 'input' });
    this.CONSUME(T.Equals);
    this.SUBRULE(this.expression);
  });

  private arrowMember = this.RULE('arrowMember', () => {
    this.SUBRULE(this.expression);
    this.CONSUME(T.Arrow);
    this.SUBRULE(this.path);
  });

  public path = this.RULE('path', () => {
    this.CONSUME(T.Ident);
    this.MANY(() => {
      this.CONSUME(T.Dot);
      this.CONSUME2(T.Ident);
    });
  });

  private entries = this.RULE('entries', () => {
    this.CONSUME(T.LCurly);
    this.MANY(() => {
      this.SUBRULE(this.entry);
      this.OPTION(() => this.CONSUME(T.Comma));
    });
    this.CONSUME(T.RCurly);
  });

  private entry = this.RULE('entry', () => {
    this.CONSUME(T.Ident);
    this.CONSUME(T.Equals);
    this.SUBRULE(this.expression);
  });

  // ---------- expressions ----------
  // An expression is a flat run of operands and binary operators; to-ast.ts builds the tree by
  // precedence (or < and < not < comparisons < + - < * / < unary - + < ^). Keeping the grammar
  // flat keeps the concrete tree small: three nodes per operand instead of one per level.

  public expression = this.RULE('expression', () => {
    this.SUBRULE(this.operand, { LABEL: 'operands' });
    this.MANY((this.continuation ??= {
      GATE: () => this.continues(),
      DEF: () => {
        this.OR((this.operatorAlts ??= [
          { ALT: () => this.CONSUME(Kw.or, { LABEL: 'ops' }) },
          { ALT: () => this.CONSUME(Kw.and, { LABEL: 'ops' }) },
          { ALT: () => this.CONSUME(T.LessEq, { LABEL: 'ops' }) },
          { ALT: () => this.CONSUME(T.GreaterEq, { LABEL: 'ops' }) },
          { ALT: () => this.CONSUME(T.EqEq, { LABEL: 'ops' }) },
          { ALT: () => this.CONSUME(T.NotEq, { LABEL: 'ops' }) },
          { ALT: () => this.CONSUME(T.Less, { LABEL: 'ops' }) },
          { ALT: () => this.CONSUME(T.Greater, { LABEL: 'ops' }) },
          { ALT: () => this.CONSUME(T.Plus, { LABEL: 'ops' }) },
          { ALT: () => this.CONSUME(T.Minus, { LABEL: 'ops' }) },
          { ALT: () => this.CONSUME(T.Star, { LABEL: 'ops' }) },
          { ALT: () => this.CONSUME(T.Slash, { LABEL: 'ops' }) },
          { ALT: () => this.CONSUME(T.Caret, { LABEL: 'ops' }) },
        ]));
        this.SUBRULE2(this.operand, { LABEL: 'operands' });
      },
    }));
  });

  /** Prefix operators (`-`, `+`, `not`) then a primary. */
  private operand = this.RULE('operand', () => {
    this.MANY(this.prefix);
    this.SUBRULE(this.primary);
  });

  private prefix = (): void => {
    this.OR((this.prefixAlts ??= [
      { ALT: () => this.CONSUME(T.Minus, { LABEL: 'prefix' }) },
      { ALT: () => this.CONSUME(T.Plus, { LABEL: 'prefix' }) },
      { ALT: () => this.CONSUME(Kw.not, { LABEL: 'prefix' }) },
    ]));
  };

  private primary = this.RULE('primary', () => {
    this.OR((this.primaryAlts ??= [
      {
        ALT: () => {
          this.CONSUME(T.NumberLit);
          this.OPTION(() => this.CONSUME(T.UnitLit));
        },
      },
      { ALT: () => this.SUBRULE(this.nameExpr) },
      {
        ALT: () => {
          this.CONSUME(T.LParen);
          this.SUBRULE(this.expression);
          this.CONSUME(T.RParen);
        },
      },
      { ALT: () => this.SUBRULE(this.listExpr) },
      { ALT: () => this.SUBRULE(this.ifExpr) },
    ]));
  });

  private nameExpr = this.RULE('nameExpr', () => {
    this.CONSUME(T.Ident);
    this.OR((this.nameTailAlts ??= [
      {
        ALT: () => {
          this.CONSUME(T.LParen);
          this.MANY_SEP({ SEP: T.Comma, DEF: () => this.SUBRULE(this.expression, { LABEL: 'args' }) });
          this.CONSUME(T.RParen);
        },
      },
      { ALT: () => this.CONSUME(T.Quote) },
      {
        ALT: () =>
          this.MANY(() => {
            this.CONSUME(T.Dot);
            this.CONSUME2(T.Ident, { LABEL: 'parts' });
          }),
      },
    ]));
  });

  private listExpr = this.RULE('listExpr', () => {
    this.CONSUME(T.LBracket);
    this.MANY_SEP({ SEP: T.Comma, DEF: () => this.SUBRULE(this.expression, { LABEL: 'items' }) });
    this.CONSUME(T.RBracket);
  });

  private ifExpr = this.RULE('ifExpr', () => {
    this.CONSUME(Kw.if);
    this.SUBRULE(this.expression, { LABEL: 'cond' });
    this.CONSUME(Kw.then);
    this.SUBRULE2(this.expression, { LABEL: 'then' });
    this.CONSUME(Kw.else);
    this.SUBRULE3(this.expression, { LABEL: 'else' });
  });
}

/** One parser instance for the process: Chevrotain parsers are reusable and costly to build. */
let shared: LoopParser | undefined;
export function getParser(): LoopParser {
  shared ??= new LoopParser();
  return shared;
}
