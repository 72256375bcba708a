// One analysis per document version, shared by every request on that version. Analyses are
// made on first use (a request, or the debounced diagnostics push) and dropped when the
// document changes or closes. The last analysis without syntax errors is kept per document so
// that features which must not flicker while the user types (code lens titles) can use it.

import type { TextDocument } from 'vscode-languageserver-textdocument';
import { analyze, type Analysis } from '../../language/src/analysis';
import { LineMap } from './convert';

export interface DocState {
  uri: string;
  version: number;
  analysis: Analysis;
  lines: LineMap;
  /** The document parsed without syntax errors (LW1xx). */
  clean: boolean;
}

export function hasSyntaxErrors(a: Analysis): boolean {
  return a.diagnostics.some((d) => d.code.startsWith('LW1'));
}

export class AnalysisStore {
  private readonly current = new Map<string, DocState>();
  private readonly lastClean = new Map<string, DocState>();

  constructor(private readonly lookup: (uri: string) => TextDocument | undefined) {}

  /** The analysis of the document's current version; undefined for a document not open. */
  get(uri: string): DocState | undefined {
    const doc = this.lookup(uri);
    if (!doc) return undefined;
    const cached = this.current.get(uri);
    if (cached && cached.version === doc.version) return cached;
    const text = doc.getText();
    const analysis = analyze(text);
    const state: DocState = { uri, version: doc.version, analysis, lines: new LineMap(text), clean: !hasSyntaxErrors(analysis) };
    this.current.set(uri, state);
    if (state.clean) this.lastClean.set(uri, state);
    return state;
  }

  /** The latest analysis that parsed cleanly (possibly of an older version). */
  lastGood(uri: string): DocState | undefined {
    return this.lastClean.get(uri);
  }

  /** The cached state if it is for the document's current version (no analysis is started). */
  peek(uri: string): DocState | undefined {
    const doc = this.lookup(uri);
    const cached = this.current.get(uri);
    return doc && cached && cached.version === doc.version ? cached : undefined;
  }

  forget(uri: string): void {
    this.current.delete(uri);
    this.lastClean.delete(uri);
  }
}
