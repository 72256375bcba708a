// The per-document facade: one Analysis per text version. Parsing, name checks and unit checks
// run at once; heavier results (compiled models, linearizations, runs) are computed on first use
// by the layers that own them. The server, the CLI and the tests all go through here, so a hover,
// a code lens and `loopwright linearize` can never disagree.

import { DiagnosticSink, type Diagnostic } from './diagnostics';
import type { FileAst } from './syntax/ast';
import { parse, type ParseResult } from './syntax/parse';
import { checkNames } from './check/names';
import { checkAlgebraicLoops } from './check/wiring';
import type { SymbolTable } from './check/symbols';
import type { IToken } from 'chevrotain';
import { checkUnits, type UnitsResult } from './check/units';
import { checkOperatingPoints } from './linear/equilibrium';

export interface AnalyzeOptions {
  /** Skip the unit checks (for benchmarks of the front end alone). */
  skipUnits?: boolean;
  /** Skip the equilibrium checks of operating points (they evaluate the plant equations). */
  skipOperatingPoints?: boolean;
}

export interface Analysis {
  text: string;
  ast: FileAst;
  symbols: SymbolTable;
  /** Unit results (SI values of literals, dimensions of expressions); absent when skipped. */
  units?: UnitsResult;
  diagnostics: Diagnostic[];
  tokens: IToken[];
  /** Results of later layers, memoised per analysis by their owners (see model/ and linear/). */
  cache: Map<string, unknown>;
  /** Adds diagnostics from a later layer (model, linear) exactly once per key. */
  sink: DiagnosticSink;
}

/**
 * An analysis whose tokens come from its parse when first asked for (the parse drops its tokens
 * block by block, syntax/parse.ts). A class, so that the getter is shared by every analysis.
 */
class DocumentAnalysis implements Analysis {
  readonly diagnostics: Diagnostic[];
  readonly cache = new Map<string, unknown>();

  constructor(
    readonly text: string,
    readonly ast: FileAst,
    readonly symbols: SymbolTable,
    readonly units: UnitsResult | undefined,
    readonly sink: DiagnosticSink,
    private readonly parsed: ParseResult | undefined,
  ) {
    this.diagnostics = sink.items;
  }

  get tokens(): IToken[] {
    try {
      return this.parsed ? this.parsed.tokens : [];
    } catch {
      return [];
    }
  }
}

/** Analyses a document. Never throws, whatever the text. */
export function analyze(text: string, options: AnalyzeOptions = {}): Analysis {
  const sink = new DiagnosticSink();
  let ast: FileAst = { kind: 'file', span: { start: 0, end: text.length }, blocks: [], comments: [] };
  let parsed: ParseResult | undefined;
  let symbols: SymbolTable = { systems: new Map(), loops: new Map(), blocks: [], refs: [], resolved: new Map() };
  let units: UnitsResult | undefined;
  try {
    parsed = parse(text, sink);
    ast = parsed.ast;
    symbols = checkNames(ast, sink);
    checkAlgebraicLoops(symbols, sink);
    if (!options.skipUnits) units = checkUnits(ast, symbols, sink);
  } catch (err) {
    sink.error('LW101', { start: 0, end: Math.min(1, text.length) }, `internal error while analysing (please report): ${(err as Error).message}`);
  }
  const analysis: Analysis = new DocumentAnalysis(text, ast, symbols, units, sink, parsed);
  if (!options.skipUnits && !options.skipOperatingPoints) {
    try {
      sink.items.push(...checkOperatingPoints(analysis));
    } catch (err) {
      sink.error('LW101', { start: 0, end: Math.min(1, text.length) }, `internal error in the operating-point checks (please report): ${(err as Error).message}`);
    }
  }
  return analysis;
}
