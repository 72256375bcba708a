// The symbol table built by the name checks: what every declared name is, and what every name
// use refers to. Plain data over the AST; the unit checker, the model compiler and the editor
// features (definition, references, rename, outline) all read it.

import type { Span } from '../diagnostics';
import type {
  Block,
  DerivEq,
  Expr,
  InputDecl,
  LetDecl,
  LimitDecl,
  LinearBlock,
  LoopBlock,
  OperatingPointDecl,
  OutputDecl,
  ParamDecl,
  PidLaw,
  SampleDecl,
  SignalDecl,
  StateDecl,
  SystemBlock,
  TransferRel,
  UseDecl,
} from '../syntax/ast';

export type MemberKind = 'param' | 'let' | 'state' | 'input' | 'output' | 'operatingPoint';

export interface MemberSymbol {
  kind: MemberKind;
  name: string;
  nameSpan: Span;
  system: SystemSymbol;
  decl: ParamDecl | LetDecl | StateDecl | InputDecl | OutputDecl | OperatingPointDecl;
  /** This member as a name target: one object, shared by every use that resolves to it. */
  target: Target;
}

/** Where an output's value comes from (exactly one of these, else a diagnostic). */
export type OutputSource =
  | { kind: 'equation'; decl: OutputDecl }
  | { kind: 'transfer'; decl: TransferRel }
  | { kind: 'pid'; decl: PidLaw }
  | { kind: 'linear'; decl: LinearBlock };

export interface SystemSymbol {
  kind: 'plant' | 'controller';
  name: string;
  nameSpan: Span;
  block: SystemBlock;
  /** Every declared member by name (params, lets, states, inputs, outputs, operating points). */
  members: Map<string, MemberSymbol>;
  params: ParamDecl[];
  lets: LetDecl[];
  states: StateDecl[];
  inputs: InputDecl[];
  outputs: OutputDecl[];
  points: OperatingPointDecl[];
  /** State name -> its derivative equation (the first, when duplicated). */
  derivs: Map<string, DerivEq>;
  /** Output name -> where its value comes from. */
  outputSources: Map<string, OutputSource>;
  /** Input or output name -> its limit. */
  limits: Map<string, LimitDecl>;
  transfers: TransferRel[];
  pids: PidLaw[];
  linears: LinearBlock[];
  sample?: SampleDecl;
  /**
   * With a `linear` block the block describes the whole system: every declared input and output,
   * and as states the declared states when there are any (sizes must fit), else hidden states
   * as many as its A matrix has rows.
   */
  linearUsesDeclaredStates: boolean;
  /** This system as a name target: one object, shared by every use that resolves to it. */
  target: Target;
}

export type LoopNameKind = 'signal' | 'loopParam' | 'use';

export interface LoopSymbol {
  name: string;
  nameSpan: Span;
  block: LoopBlock;
  signals: Map<string, SignalDecl>;
  params: Map<string, ParamDecl>;
  /** `use NAME = SYSTEM(...)` instances by name. */
  uses: Map<string, UseDecl>;
  /**
   * Every system instance the loop uses, by instance name, in the order of the closed-loop state
   * (plants in file order, then controllers in file order; `use` instances after the system they copy).
   */
  instances: Map<string, LoopInstance>;
}

export interface LoopInstance {
  /** Instance name: the system's own name, or the `use` name. */
  name: string;
  system: SystemSymbol;
  use?: UseDecl;
}

/** What a name use resolves to. */
export type Target =
  | { kind: 'member'; member: MemberSymbol }
  | { kind: 'system'; system: SystemSymbol }
  | { kind: 'loop'; loop: LoopSymbol }
  | { kind: 'signal'; loop: LoopSymbol; decl: SignalDecl }
  | { kind: 'loopParam'; loop: LoopSymbol; decl: ParamDecl }
  | { kind: 'use'; loop: LoopSymbol; decl: UseDecl }
  /** `Boom.upright.drive`: the value an operating point gives a state or input. */
  | { kind: 'pointValue'; point: MemberSymbol; member: MemberSymbol }
  | { kind: 'builtin'; name: 'pi' | 't' | 's' }
  /** A function name in a call. */
  | { kind: 'function'; name: string }
  | { kind: 'option'; name: string };

/** One use of a name in the text (a reference), or its declaration (`decl: true`). */
export interface Reference {
  span: Span;
  name: string;
  target: Target;
  decl?: boolean;
}

export interface SymbolTable {
  systems: Map<string, SystemSymbol>;
  loops: Map<string, LoopSymbol>;
  /** Blocks in file order (duplicates included). */
  blocks: Block[];
  /** Every resolved name occurrence, declarations included, sorted by start offset. */
  refs: Reference[];
  /** Resolution of each name-like expression node (NameExpr, MemberExpr, DerivExpr). */
  resolved: Map<Expr, Target>;
}

/** A stable key for a target, for grouping references (rename, find references). */
export function targetKey(t: Target): string {
  switch (t.kind) {
    case 'member':
      return `member:${t.member.system.name}.${t.member.name}`;
    case 'system':
      return `system:${t.system.name}`;
    case 'loop':
      return `loop:${t.loop.name}`;
    case 'signal':
      return `signal:${t.loop.name}.${t.decl.name.name}`;
    case 'loopParam':
      return `loopParam:${t.loop.name}.${t.decl.name.name}`;
    case 'use':
      return `use:${t.loop.name}.${t.decl.name.name}`;
    case 'pointValue':
      return `member:${t.member.system.name}.${t.member.name}`;
    case 'builtin':
      return `builtin:${t.name}`;
    case 'function':
      return `function:${t.name}`;
    case 'option':
      return `option:${t.name}`;
  }
}
