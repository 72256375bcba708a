// Diagnostics are pushed (textDocument/publishDiagnostics), never pulled:
//   - on open, at once;
//   - after a change, once the document has been quiet for DEBOUNCE_MS (per document), so a
//     burst of keystrokes costs one analysis and one message;
//   - on close, an empty list clears them.
// A push is for one document version: if the document changed again while waiting, the newer
// change's timer does the work. Each push has two phases: the front end's diagnostics (syntax,
// names, units) at once, then — after yielding to the event loop, and only if the version is
// still current and the later layers found something — the full list with the model and linear
// diagnostics (algebraic loops, operating points), which need every loop compiled. Diagnostics from later layers (model, linear analysis) are
// added by `extraChecks` (memoised per analysis) before each push.

import type { Analysis } from '../../language/src/analysis';
import type { Diagnostic } from '../../language/src/diagnostics';
import type { DocState } from './documents';

export const DEBOUNCE_MS = 100;

/** Diagnostics of lazy layers (operating points, ...), memoised per analysis by the hook. */
export type ExtraCheck = (analysis: Analysis) => Diagnostic[];

/** Every diagnostic of the analysis, in document order, without exact duplicates. */
export function collectDiagnostics(state: DocState, extraChecks: ExtraCheck[] = []): Diagnostic[] {
  const all = [...state.analysis.sink.items];
  for (const check of extraChecks) {
    try {
      all.push(...check(state.analysis));
    } catch {
      // A failing later layer never hides the diagnostics the front end found.
    }
  }
  const seen = new Set<string>();
  const out: Diagnostic[] = [];
  for (const d of all) {
    const key = `${d.code}:${d.span.start}:${d.span.end}:${d.message}`;
    if (seen.has(key)) continue;
    seen.add(key);
    out.push(d);
  }
  return out.sort((a, b) => a.span.start - b.span.start || a.span.end - b.span.end);
}

/** Per-document debounce of diagnostics pushes. */
export class PushScheduler {
  private readonly timers = new Map<string, NodeJS.Timeout>();

  constructor(
    private readonly push: (uri: string) => void,
    private readonly delayMs = DEBOUNCE_MS,
  ) {}

  now(uri: string): void {
    this.cancel(uri);
    this.push(uri);
  }

  later(uri: string): void {
    this.cancel(uri);
    const timer = setTimeout(() => {
      this.timers.delete(uri);
      this.push(uri);
    }, this.delayMs);
    this.timers.set(uri, timer);
  }

  cancel(uri: string): void {
    const t = this.timers.get(uri);
    if (t) clearTimeout(t);
    this.timers.delete(uri);
  }
}
