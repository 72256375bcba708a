// CST → AST. Reads the Chevrotain concrete syntax tree and builds the plain AST of ast.ts.
// Recovered input is normal here: a missing child becomes an ErrorExpr or a `missing` Ident
// with a finite (possibly empty) span, so later stages never see NaN offsets or undefined.

import type { CstNode, IToken } from 'chevrotain';
import type { Span } from '../diagnostics';
import type * as A from './ast';

type Children = Record<string, Array<CstNode | IToken>>;

function isToken(x: CstNode | IToken | undefined): x is IToken {
  return !!x && (x as IToken).image !== undefined;
}

function validOffset(n: number | undefined): n is number {
  return typeof n === 'number' && Number.isFinite(n);
}

function tokSpan(t: IToken | undefined, fallback: Span): Span {
  if (!t || !validOffset(t.startOffset) || t.isInsertedInRecovery) return { start: fallback.end, end: fallback.end };
  return { start: t.startOffset, end: t.startOffset + t.image.length };
}

function nodeSpan(n: CstNode | undefined, fallback: Span): Span {
  const loc = n?.location;
  if (!loc || !validOffset(loc.startOffset) || !validOffset(loc.endOffset)) return { start: fallback.end, end: fallback.end };
  return { start: loc.startOffset, end: loc.endOffset + 1 };
}

function spanOf(x: CstNode | IToken | undefined, fallback: Span): Span {
  return isToken(x) ? tokSpan(x, fallback) : nodeSpan(x, fallback);
}

const NONE: never[] = [];

// Chevrotain keys children by token type or label, and a key never mixes tokens with nodes, so
// the arrays can be returned as they are (no copies: this runs for every node of the tree).
function tokens(c: Children, key: string): IToken[] {
  return (c[key] as IToken[] | undefined) ?? NONE;
}

function nodes(c: Children, key: string): CstNode[] {
  return (c[key] as CstNode[] | undefined) ?? NONE;
}

/** Builds the AST for one parse. `end` is the document length (for spans of recovered nodes). */
export class AstBuilder {
  constructor(private readonly text: string) {}

  file(cst: CstNode | undefined, comments: IToken[]): A.FileAst {
    const whole: Span = { start: 0, end: this.text.length };
    const blocks: A.Block[] = [];
    for (const b of cst ? nodes(cst.children as Children, 'block') : []) {
      const block = this.block(b);
      if (block) blocks.push(block);
    }
    return {
      kind: 'file',
      span: whole,
      blocks,
      comments: comments.filter((t) => validOffset(t.startOffset)).map((t) => ({ text: t.image, span: tokSpan(t, whole) })),
    };
  }

  private ident(t: IToken | undefined, fallback: Span): A.Ident {
    if (!t || t.isInsertedInRecovery || !validOffset(t.startOffset)) return { name: '', span: { start: fallback.end, end: fallback.end }, missing: true };
    return { name: t.image, span: tokSpan(t, fallback) };
  }

  private block(n: CstNode): A.Block | undefined {
    const c = n.children as Children;
    const span = nodeSpan(n, { start: 0, end: 0 });
    const kwTok = tokens(c, 'Kw_plant')[0] ?? tokens(c, 'Kw_controller')[0] ?? tokens(c, 'Kw_loop')[0];
    if (!kwTok) return undefined;
    const keywordSpan = tokSpan(kwTok, span);
    const name = this.ident(tokens(c, 'name')[0], keywordSpan);
    const descTok = tokens(c, 'description')[0];
    const description = descTok && validOffset(descTok.startOffset) ? { text: unquote(descTok.image), span: tokSpan(descTok, span) } : undefined;
    const lc = tokens(c, 'LCurly')[0];
    const rc = tokens(c, 'RCurly')[0];
    const bodyStart = lc && validOffset(lc.startOffset) ? lc.startOffset + 1 : name.span.end;
    const bodyEnd = rc && validOffset(rc.startOffset) && !rc.isInsertedInRecovery ? rc.startOffset : span.end;
    const bodySpan = { start: bodyStart, end: Math.max(bodyStart, bodyEnd) };
    const kind = kwTok.image as 'plant' | 'controller' | 'loop';
    const members = nodes(c, 'member')
      .map((m) => this.member(m))
      .filter((m): m is A.SystemMember | A.LoopMember => !!m);
    if (kind === 'loop') return { kind, span, keywordSpan, name, description, members: members as A.LoopMember[], bodySpan };
    return { kind, span, keywordSpan, name, description, members: members as A.SystemMember[], bodySpan };
  }

  private member(n: CstNode): A.SystemMember | A.LoopMember | undefined {
    let inner: CstNode | IToken | undefined;
    for (const k in n.children) {
      inner = (n.children as Children)[k][0];
      break;
    }
    if (!inner || isToken(inner)) return undefined;
    const c = inner.children as Children;
    const span = nodeSpan(inner, nodeSpan(n, { start: 0, end: 0 }));
    const id = (key = 'Ident', i = 0) => this.ident(tokens(c, key)[i], span);
    const ex = (key = 'expression', i = 0) => this.expr(nodes(c, key)[i], span);
    switch (inner.name) {
      case 'paramMember':
        return { kind: 'param', span, name: id(), value: ex() };
      case 'letMember':
        return { kind: 'let', span, name: id(), value: ex() };
      case 'stateMember': {
        const init = nodes(c, 'expression')[0];
        return { kind: 'state', span, name: id(), unit: this.unit(tokens(c, 'UnitLit')[0]), init: init ? this.expr(init, span) : undefined };
      }
      case 'inputMember':
        return { kind: 'input', span, name: id(), unit: this.unit(tokens(c, 'UnitLit')[0]) };
      case 'outputMember': {
        const value = nodes(c, 'expression')[0];
        return { kind: 'output', span, name: id(), unit: this.unit(tokens(c, 'UnitLit')[0]), value: value ? this.expr(value, span) : undefined };
      }
      case 'linearMember':
        return { kind: 'linear', span, keywordSpan: tokSpan(tokens(c, 'Kw_linear')[0], span), entries: this.entries(nodes(c, 'entries')[0], span) };
      case 'pidMember':
        return { kind: 'pid', span, output: id('output'), input: id('input'), entries: this.entries(nodes(c, 'entries')[0], span) };
      case 'limitMember':
        return { kind: 'limit', span, target: id(), lo: ex('lo'), hi: ex('hi') };
      case 'operatingMember':
        return { kind: 'operatingPoint', span, name: id(), entries: this.entries(nodes(c, 'entries')[0], span) };
      case 'sampleMember': {
        const m = tokens(c, 'method')[0];
        return { kind: 'sample', span, period: ex(), method: m ? this.ident(m, span) : undefined };
      }
      case 'signalMember':
        return { kind: 'signal', span, name: id(), value: ex() };
      case 'useMember':
        return { kind: 'use', span, name: id('name'), system: id('system'), overrides: nodes(c, 'entry').map((e) => this.entry(e, span)) };
      case 'aroundMember':
        return { kind: 'around', span, target: this.path(nodes(c, 'path')[0], span) };
      case 'startMember':
        return { kind: 'start', span, target: this.path(nodes(c, 'path')[0], span), value: ex() };
      case 'simulateMember': {
        const opts = nodes(c, 'entries')[0];
        return { kind: 'simulate', span, duration: ex(), options: opts ? this.entries(opts, span) : [] };
      }
      case 'compareMember':
        return { kind: 'compare', span };
      case 'sweepMember': {
        const sp = nodes(c, 'startPath')[0];
        if (sp || tokens(c, 'Kw_start').length) {
          return { kind: 'sweepStart', span, target: this.path(sp, span), values: nodes(c, 'values').map((v) => this.expr(v, span)) };
        }
        return { kind: 'sweepParam', span, target: this.path(nodes(c, 'paramPath')[0], span), lo: ex('lo'), hi: ex('hi'), steps: ex('steps') };
      }
      case 'showMember':
        return { kind: 'show', span, signals: nodes(c, 'expression').map((e) => this.expr(e, span)) };
      case 'expectMember':
        return { kind: 'expect', span, test: ex() };
      case 'solveMember':
        return { kind: 'solveAlgebraic', span };
      case 'derivMember':
        return { kind: 'derivEq', span, target: id(), value: ex() };
      case 'transferMember':
        return { kind: 'transfer', span, output: id('output'), input: id('input'), value: ex() };
      case 'arrowMember': {
        const pathNode = nodes(c, 'path')[0];
        const target = this.path(pathNode, span);
        return {
          kind: 'arrow',
          span,
          source: ex(),
          arrowSpan: tokSpan(tokens(c, 'Arrow')[0], span),
          target,
          targetSpan: target.length ? { start: target[0].span.start, end: target[target.length - 1].span.end } : { start: span.end, end: span.end },
        };
      }
      default:
        return undefined;
    }
  }

  private unit(t: IToken | undefined): A.UnitText | undefined {
    if (!t || !validOffset(t.startOffset) || t.isInsertedInRecovery) return undefined;
    const closed = t.image.endsWith(']');
    const inner = t.image.slice(1, closed ? -1 : undefined);
    const lead = inner.length - inner.trimStart().length;
    const text = inner.trim();
    const start = t.startOffset + 1 + lead;
    return { text, span: { start, end: start + text.length }, outer: { start: t.startOffset, end: t.startOffset + t.image.length } };
  }

  private path(n: CstNode | undefined, fallback: Span): A.Ident[] {
    if (!n) return [{ name: '', span: { start: fallback.end, end: fallback.end }, missing: true }];
    const ids = tokens(n.children as Children, 'Ident');
    const all = ids.map((t) => this.ident(t, fallback));
    return all.length ? all : [{ name: '', span: { start: fallback.end, end: fallback.end }, missing: true }];
  }

  private entries(n: CstNode | undefined, fallback: Span): A.Entry[] {
    if (!n) return [];
    return nodes(n.children as Children, 'entry').map((e) => this.entry(e, fallback));
  }

  private entry(n: CstNode, fallback: Span): A.Entry {
    const c = n.children as Children;
    const span = nodeSpan(n, fallback);
    return { name: this.ident(tokens(c, 'Ident')[0], span), value: this.expr(nodes(c, 'expression')[0], span), span };
  }

  // ---------- expressions ----------

  expr(n: CstNode | undefined, fallback: Span): A.Expr {
    if (!n) return { kind: 'error', span: { start: fallback.end, end: fallback.end } };
    const c = n.children as Children;
    const span = nodeSpan(n, fallback);
    switch (n.name) {
      case 'expression':
        return this.flatExpression(c, span);
      case 'primary':
        return this.primary(c, span);
      case 'nameExpr':
        return this.nameExpr(c, span);
      case 'listExpr':
        return this.list(c, span);
      case 'ifExpr':
        return {
          kind: 'if',
          span,
          cond: this.expr(nodes(c, 'cond')[0], span),
          then: this.expr(nodes(c, 'then')[0], span),
          else: this.expr(nodes(c, 'else')[0], span),
        };
      default:
        return { kind: 'error', span };
    }
  }

  /**
   * Builds the tree of a flat run `operand (op operand)*`, each operand being prefix operators
   * and a primary, by precedence climbing. Binding powers: or 1, and 2, comparisons 4, + − 5,
   * * / 6, ^ 8 (right-associative). A prefix `not` takes everything that binds tighter than
   * `and` (`not a < b` is not (a < b)); a prefix − or + takes what binds tighter than * /
   * (`-x^2` is −(x²), `-a*b` is (−a)·b).
   */
  private flatExpression(c: Children, span: Span): A.Expr {
    const operands = nodes(c, 'operands');
    const ops = tokens(c, 'ops');
    let pos = 0; // operand being read; ops[pos] follows operands[pos]
    let pre = 0; // prefix operators of operands[pos] already read
    const empty = (at: number): A.Expr => ({ kind: 'error', span: { start: at, end: at } });
    const atom = (): A.Expr => {
      const o = operands[pos];
      if (!o) return empty(span.end);
      const pfx = tokens(o.children as Children, 'prefix');
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
      const oc = o.children as Children;
      const e = this.expr(nodes(oc, 'primary')[0], nodeSpan(o, span));
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

  private primary(c: Children, span: Span): A.Expr {
    const num = tokens(c, 'NumberLit')[0];
    if (num) {
      const numberSpan = tokSpan(num, span);
      const value = Number(num.image);
      const unit = this.unit(tokens(c, 'UnitLit')[0]);
      if (num.isInsertedInRecovery || !validOffset(num.startOffset)) return { kind: 'error', span: numberSpan };
      if (unit) return { kind: 'quantity', span: { start: numberSpan.start, end: unit.outer.end }, value, text: num.image, numberSpan, unit };
      return { kind: 'number', span: numberSpan, value, text: num.image };
    }
    for (const key of PRIMARY_KINDS) {
      const sub = nodes(c, key)[0];
      if (sub) return this.expr(sub, span);
    }
    const inner = nodes(c, 'expression')[0];
    if (inner) {
      const e = this.expr(inner, span);
      // keep the parentheses in the span so ranges cover what the user sees
      return { ...e, span } as A.Expr;
    }
    return { kind: 'error', span };
  }

  private nameExpr(c: Children, span: Span): A.Expr {
    const head = this.ident(tokens(c, 'Ident')[0], span);
    if (head.missing) return { kind: 'error', span };
    if (tokens(c, 'LParen').length) {
      return { kind: 'call', span, callee: head, args: nodes(c, 'args').map((a) => this.expr(a, span)) };
    }
    if (tokens(c, 'Quote').length) return { kind: 'deriv', span, name: head };
    const parts = tokens(c, 'parts').map((t) => this.ident(t, span));
    if (parts.length) {
      const path = [head, ...parts];
      return { kind: 'member', span: { start: head.span.start, end: path[path.length - 1].span.end }, path };
    }
    return { kind: 'name', span: head.span, name: head.name };
  }

  private list(c: Children, span: Span): A.Expr {
    const items = nodes(c, 'items').map((i) => this.expr(i, span));
    if (items.length > 0 && items.every((i) => i.kind === 'list' || i.kind === 'matrix')) {
      // a list of lists is a matrix; `[[1, 2]]` is a 1×2 matrix
      const rows: A.Expr[][] = [];
      const rowSpans: Span[] = [];
      for (const it of items) {
        if (it.kind === 'list') {
          rows.push(it.items);
          rowSpans.push(it.span);
        } else {
          rows.push(...it.rows);
          rowSpans.push(...it.rowSpans);
        }
      }
      return { kind: 'matrix', span, rows, rowSpans };
    }
    return { kind: 'list', span, items };
  }
}

/** Rules a primary may consist of, in the order they are looked for. */
const PRIMARY_KINDS = ['nameExpr', 'listExpr', 'ifExpr'] as const;

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

function unquote(s: string): string {
  const body = s.startsWith('"') ? s.slice(1, s.endsWith('"') && s.length > 1 ? -1 : undefined) : s;
  return body.replace(/\\(.)/g, (_, ch: string) => (ch === 'n' ? '\n' : ch === 't' ? '\t' : ch));
}
