// The fuzz property shared by the short run in `npm test` and the long one in `npm run fuzz`:
// analyze never throws, always returns well-formed diagnostics inside the text, and finishes
// each case in well under a second (the timing is recorded by the long run, asserted nowhere).

import { analyze } from '../../language/src/analysis';
import { format } from '../../language/src/format/format';

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
  const f = checkFormat(text, a);
  if (f) return { ms, problem: f };
  return { ms };
}

/** Declared names (kind and name), for comparing two analyses. */
function declarations(a: ReturnType<typeof analyze>): string[] {
  return a.symbols.refs.filter((r) => r.decl).map((r) => `${r.target.kind}:${r.name}`).sort();
}

function codes(a: ReturnType<typeof analyze>): string[] {
  return a.diagnostics.map((d) => d.code).sort();
}

/**
 * The formatter may refuse a file (it does with syntax errors); when it formats one, the result
 * must be a fixed point (formatting it again changes nothing) and mean the same (same declared
 * names, same diagnostic codes).
 */
function checkFormat(text: string, a: ReturnType<typeof analyze>): string | undefined {
  let once;
  try {
    once = format(text);
  } catch (err) {
    return `format threw: ${(err as Error).stack}`;
  }
  if (!once.ok) return undefined;
  let twice;
  try {
    twice = format(once.text);
  } catch (err) {
    return `format threw on its own output: ${(err as Error).stack}`;
  }
  if (!twice.ok || twice.text !== once.text) return `format is not idempotent:\n--- once ---\n${once.text}\n--- twice ---\n${twice.ok ? twice.text : twice.reason}`;
  const b = analyze(once.text);
  const [d1, d2] = [declarations(a).join(' '), declarations(b).join(' ')];
  if (d1 !== d2) return `format changed the declarations: ${d1} → ${d2}`;
  const [c1, c2] = [codes(a).join(' '), codes(b).join(' ')];
  if (c1 !== c2) return `format changed the diagnostics: ${c1} → ${c2}`;
  return undefined;
}
