// The abstract syntax tree of a `.loop` file. Plain data: every node carries its source span
// (UTF-16 offsets, end exclusive). Nodes built from recovered input still carry a finite span
// (possibly empty); `missing: true` marks a name or expression the parser had to invent.

import type { Span } from '../diagnostics';

export interface Ident {
  name: string;
  span: Span;
  /** Invented by error recovery: no text behind it. */
  missing?: boolean;
}

/** Bracketed unit text as written, without the brackets: `N*m*s/rad`. */
export interface UnitText {
  text: string;
  /** Span of the text inside the brackets (the brackets excluded). */
  span: Span;
  /** Span including the brackets. */
  outer: Span;
}

// ---------- expressions ----------

export type BinaryOp = '+' | '-' | '*' | '/' | '^' | '<' | '<=' | '>' | '>=' | '==' | '!=' | 'and' | 'or';
export type UnaryOp = '-' | '+' | 'not';

export interface NumberExpr {
  kind: 'number';
  span: Span;
  value: number;
  text: string;
}

/** A number with a bracketed unit: `9.80665 [m/s^2]`. */
export interface QuantityExpr {
  kind: 'quantity';
  span: Span;
  value: number;
  /** The number's text as written. */
  text: string;
  numberSpan: Span;
  unit: UnitText;
}

/** A plain name: a param, let, state, input, output, signal, `t`, `s`, `pi`, or an option word. */
export interface NameExpr {
  kind: 'name';
  span: Span;
  name: string;
  missing?: boolean;
}

/** A dotted path: `Boom.seen`, `Boom.upright.drive`. */
export interface MemberExpr {
  kind: 'member';
  span: Span;
  path: Ident[];
}

/** `x'` read inside an expression: the derivative of a state (resolved to its equation). */
export interface DerivExpr {
  kind: 'deriv';
  span: Span;
  name: Ident;
}

export interface UnaryExpr {
  kind: 'unary';
  span: Span;
  op: UnaryOp;
  opSpan: Span;
  operand: Expr;
}

export interface BinaryExpr {
  kind: 'binary';
  span: Span;
  op: BinaryOp;
  opSpan: Span;
  left: Expr;
  right: Expr;
}

export interface CallExpr {
  kind: 'call';
  span: Span;
  callee: Ident;
  args: Expr[];
}

export interface IfExpr {
  kind: 'if';
  span: Span;
  cond: Expr;
  then: Expr;
  else: Expr;
}

/** `[a, b, c]`: a list (lookup tables). */
export interface ListExpr {
  kind: 'list';
  span: Span;
  items: Expr[];
}

/** `[[a, b], [c, d]]`: a matrix, row by row. `[[]]`-style empty rows are allowed (0 columns). */
export interface MatrixExpr {
  kind: 'matrix';
  span: Span;
  rows: Expr[][];
  rowSpans: Span[];
}

/** Placeholder for an expression the parser could not read. */
export interface ErrorExpr {
  kind: 'error';
  span: Span;
}

export type Expr =
  | NumberExpr
  | QuantityExpr
  | NameExpr
  | MemberExpr
  | DerivExpr
  | UnaryExpr
  | BinaryExpr
  | CallExpr
  | IfExpr
  | ListExpr
  | MatrixExpr
  | ErrorExpr;

/** `name = expr` inside braces: operating-point entries, pid gains, linear matrices, options, use overrides. */
export interface Entry {
  name: Ident;
  value: Expr;
  span: Span;
}

// ---------- system members ----------

export interface ParamDecl {
  kind: 'param';
  span: Span;
  name: Ident;
  value: Expr;
}

export interface LetDecl {
  kind: 'let';
  span: Span;
  name: Ident;
  value: Expr;
}

export interface StateDecl {
  kind: 'state';
  span: Span;
  name: Ident;
  unit?: UnitText;
  init?: Expr;
}

export interface InputDecl {
  kind: 'input';
  span: Span;
  name: Ident;
  unit?: UnitText;
}

export interface OutputDecl {
  kind: 'output';
  span: Span;
  name: Ident;
  unit?: UnitText;
  value?: Expr;
}

/** `NAME' = EXPR` */
export interface DerivEq {
  kind: 'derivEq';
  span: Span;
  target: Ident;
  value: Expr;
}

/** `OUT / IN = EXPR` in the Laplace variable `s`. */
export interface TransferRel {
  kind: 'transfer';
  span: Span;
  output: Ident;
  input: Ident;
  value: Expr;
}

/** `linear { A = M, B = M, C = M, D = M }` */
export interface LinearBlock {
  kind: 'linear';
  span: Span;
  keywordSpan: Span;
  entries: Entry[];
}

/** `pid OUT from IN { kp = E, ki = E, kd = E, rolloff = E, antiwindup = E }` */
export interface PidLaw {
  kind: 'pid';
  span: Span;
  output: Ident;
  input: Ident;
  entries: Entry[];
}

/** `limit NAME within LO .. HI` */
export interface LimitDecl {
  kind: 'limit';
  span: Span;
  target: Ident;
  lo: Expr;
  hi: Expr;
}

/** `operating point NAME { x = E, ... }` */
export interface OperatingPointDecl {
  kind: 'operatingPoint';
  span: Span;
  name: Ident;
  entries: Entry[];
}

export type SampleMethod = 'tustin' | 'hold' | 'forward';

/** `sample every PERIOD (by tustin | hold | forward)?` */
export interface SampleDecl {
  kind: 'sample';
  span: Span;
  period: Expr;
  method?: Ident;
}

export type SystemMember =
  | ParamDecl
  | LetDecl
  | StateDecl
  | InputDecl
  | OutputDecl
  | DerivEq
  | TransferRel
  | LinearBlock
  | PidLaw
  | LimitDecl
  | OperatingPointDecl
  | SampleDecl;

// ---------- loop members ----------

export interface SignalDecl {
  kind: 'signal';
  span: Span;
  name: Ident;
  value: Expr;
}

/** `EXPR -> SYSTEM.INPUT` */
export interface Arrow {
  kind: 'arrow';
  span: Span;
  source: Expr;
  arrowSpan: Span;
  /** Usually two parts: system and input. */
  target: Ident[];
  targetSpan: Span;
}

/** `use NAME = SYSTEM(param = E, ...)` */
export interface UseDecl {
  kind: 'use';
  span: Span;
  name: Ident;
  system: Ident;
  overrides: Entry[];
}

/** `around SYSTEM.POINT` */
export interface AroundDecl {
  kind: 'around';
  span: Span;
  target: Ident[];
}

/** `start SYSTEM.STATE = E` */
export interface StartDecl {
  kind: 'start';
  span: Span;
  target: Ident[];
  value: Expr;
}

/** `simulate DURATION { options }` */
export interface SimulateDecl {
  kind: 'simulate';
  span: Span;
  duration: Expr;
  options: Entry[];
}

export interface CompareDecl {
  kind: 'compare';
  span: Span;
}

/** `sweep start SYSTEM.STATE over V1, V2, ...` */
export interface SweepStartDecl {
  kind: 'sweepStart';
  span: Span;
  target: Ident[];
  values: Expr[];
}

/** `sweep SYSTEM.PARAM over LO .. HI steps N` (or a loop param: one part). */
export interface SweepParamDecl {
  kind: 'sweepParam';
  span: Span;
  target: Ident[];
  lo: Expr;
  hi: Expr;
  steps: Expr;
}

export interface ShowDecl {
  kind: 'show';
  span: Span;
  signals: Expr[];
}

/** `expect EXPR CMP EXPR`; `test` is the whole comparison. */
export interface ExpectDecl {
  kind: 'expect';
  span: Span;
  test: Expr;
}

export interface SolveAlgebraicDecl {
  kind: 'solveAlgebraic';
  span: Span;
}

export type LoopMember =
  | SignalDecl
  | Arrow
  | ParamDecl
  | UseDecl
  | AroundDecl
  | StartDecl
  | SimulateDecl
  | CompareDecl
  | SweepStartDecl
  | SweepParamDecl
  | ShowDecl
  | ExpectDecl
  | SolveAlgebraicDecl;

// ---------- blocks ----------

export interface SystemBlock {
  kind: 'plant' | 'controller';
  span: Span;
  keywordSpan: Span;
  name: Ident;
  description?: { text: string; span: Span };
  members: SystemMember[];
  /** Span of the body between the braces (for folding and outline). */
  bodySpan: Span;
}

export interface LoopBlock {
  kind: 'loop';
  span: Span;
  keywordSpan: Span;
  name: Ident;
  description?: { text: string; span: Span };
  members: LoopMember[];
  bodySpan: Span;
}

export type Block = SystemBlock | LoopBlock;

export interface Comment {
  text: string;
  span: Span;
}

export interface FileAst {
  kind: 'file';
  span: Span;
  blocks: Block[];
  comments: Comment[];
}

export function isSystem(b: Block): b is SystemBlock {
  return b.kind === 'plant' || b.kind === 'controller';
}

/** Calls `visit` on `e` and every sub-expression, parents first. */
export function walkExpr(e: Expr | undefined, visit: (e: Expr) => void): void {
  if (!e) return;
  visit(e);
  switch (e.kind) {
    case 'unary':
      walkExpr(e.operand, visit);
      break;
    case 'binary':
      walkExpr(e.left, visit);
      walkExpr(e.right, visit);
      break;
    case 'call':
      for (const a of e.args) walkExpr(a, visit);
      break;
    case 'if':
      walkExpr(e.cond, visit);
      walkExpr(e.then, visit);
      walkExpr(e.else, visit);
      break;
    case 'list':
      for (const a of e.items) walkExpr(a, visit);
      break;
    case 'matrix':
      for (const r of e.rows) for (const a of r) walkExpr(a, visit);
      break;
    default:
      break;
  }
}

/** Every expression directly held by a member (not descending into them). */
export function memberExprs(m: SystemMember | LoopMember): Expr[] {
  switch (m.kind) {
    case 'param':
    case 'let':
    case 'signal':
    case 'derivEq':
    case 'transfer':
      return [m.value];
    case 'state':
      return m.init ? [m.init] : [];
    case 'output':
      return m.value ? [m.value] : [];
    case 'input':
    case 'compare':
    case 'solveAlgebraic':
    case 'around':
      return [];
    case 'linear':
    case 'pid':
    case 'operatingPoint':
      return m.entries.map((x) => x.value);
    case 'limit':
      return [m.lo, m.hi];
    case 'sample':
      return [m.period];
    case 'arrow':
      return [m.source];
    case 'use':
      return m.overrides.map((x) => x.value);
    case 'start':
      return [m.value];
    case 'simulate':
      return [m.duration, ...m.options.map((x) => x.value)];
    case 'sweepStart':
      return m.values;
    case 'sweepParam':
      return [m.lo, m.hi, m.steps];
    case 'show':
      return m.signals;
    case 'expect':
      return [m.test];
  }
}

/** The dotted text of a path: `Boom.tilt`. */
export function pathText(path: Ident[]): string {
  return path.map((p) => p.name).join('.');
}
