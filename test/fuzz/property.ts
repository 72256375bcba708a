// The fuzz property shared by the short run in `npm test` and the long one in `npm run fuzz`:
// analyze never throws, always returns well-formed diagnostics inside the text, and finishes
// each case in well under a second (the timing is recorded by the long run, asserted nowhere).

import { analyze } from '../../language/src/analysis';

export interface CaseOutcome {
  ms: number;
  problem?: string;
}

export function checkDocument(text: string): CaseOutcome {
  const t0 = performance.now();
  let a;
  try {
    a = analyze(text);
  } catch (err) {
    return { ms: performance.now() - t0, problem: `analyze threw: ${(err as Error).stack}` };
  }
  const ms = performance.now() - t0;
  for (const d of a.diagnostics) {
    if (!(d.span.start >= 0 && d.span.end >= d.span.start && d.span.end <= text.length)) {
      return { ms, problem: `diagnostic ${d.code} has span ${JSON.stringify(d.span)} outside a text of ${text.length}` };
    }
    if (!/^LW\d{3}$/.test(d.code) || !d.message) return { ms, problem: `malformed diagnostic ${JSON.stringify(d)}` };
  }
  if (a.diagnostics.some((d) => d.message.includes('internal error'))) {
    return { ms, problem: `internal error: ${a.diagnostics.find((d) => d.message.includes('internal error'))!.message}` };
  }
  return { ms };
}
