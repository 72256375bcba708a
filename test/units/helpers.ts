// Shared helpers for the unit tests: run the front end and the unit checker on a text, and
// read expected ranges from markers written into the source.

import { analyze } from '../../language/src/analysis';
import { DiagnosticSink, type Diagnostic, type Span } from '../../language/src/diagnostics';
import { checkUnits, type UnitsResult } from '../../language/src/check/units';

export interface UnitRun {
  text: string;
  /** Diagnostics of parsing and name checks. */
  front: Diagnostic[];
  /** Diagnostics of the unit checker alone. */
  units: Diagnostic[];
  result: UnitsResult;
  analysis: ReturnType<typeof analyze>;
}

export function runUnits(text: string): UnitRun {
  const analysis = analyze(text, { skipUnits: true });
  const sink = new DiagnosticSink();
  const result = checkUnits(analysis.ast, analysis.symbols, sink);
  return { text, front: analysis.diagnostics.filter((d) => !d.code.startsWith('LW3')), units: sink.items, result, analysis };
}

/** Strips `⟦` and `⟧` from a source and returns the marked spans, in order. */
export function marked(src: string): { text: string; spans: Span[] } {
  const spans: Span[] = [];
  let text = '';
  let open = -1;
  for (const ch of src) {
    if (ch === '⟦') open = text.length;
    else if (ch === '⟧') {
      spans.push({ start: open, end: text.length });
      open = -1;
    } else text += ch;
  }
  return { text, spans };
}
