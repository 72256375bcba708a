// `loopwright check FILE...`: one line per diagnostic, exit 1 on any error.

import { analyze } from '../analysis';
import { diagnosticLine, locate, type LocatedDiagnostic } from './format';
import { EXIT_FAIL, EXIT_OK, EXIT_USAGE, parseArgs, type CliCommand } from './types';
import { readSource } from './source';
import { compileAnalysis } from '../model/compile';
import type { Diagnostic } from '../diagnostics';
import { stabilityDiagnostics } from '../linear/stability';

/** A system shared by two loops is compiled twice; report each of its findings once. */
function dedupe(ds: Diagnostic[]): Diagnostic[] {
  const seen = new Set<string>();
  return ds.filter((d) => {
    const k = `${d.code}:${d.span.start}:${d.span.end}:${d.message}`;
    if (seen.has(k)) return false;
    seen.add(k);
    return true;
  });
}

export const command: CliCommand = {
  name: 'check',
  summary: 'check files for syntax, name, unit and wiring errors, and loops unstable about their operating point',
  usage: `loopwright check FILE... [--json]

Prints one line per diagnostic:  path:line:col: severity CODE message
  --json   print an array of {file, line, column, endLine, endColumn, severity, code, message}
           (1-based lines and columns; severity is error, warning or info)
Exit status: 0 no errors (warnings allowed), 1 an error was found, 2 usage error or unreadable file.`,
  async run(args, io) {
    const p = parseArgs(args, { booleans: ['json'] });
    if (p.positional.length === 0) {
      io.err('loopwright check: no file given (usage: loopwright check FILE... [--json])');
      return EXIT_USAGE;
    }
    const all: LocatedDiagnostic[] = [];
    for (const file of p.positional) {
      const src = readSource(file, io, 'check');
      if (src === undefined) return EXIT_USAGE;
      const a = analyze(src);
      // model-level checks (algebraic loops, improper relations) come from compiling each loop;
      // compiling adds its diagnostics to the analysis
      for (const loop of a.symbols.loops.keys()) compileAnalysis(a, loop);
      // LW604 (a loop unstable about its operating point) as the editor shows it
      all.push(...locate(file, src, dedupe([...a.diagnostics, ...stabilityDiagnostics(a)])));
    }
    if (p.flags.has('json')) io.out(JSON.stringify(all, null, 2));
    else for (const d of all) io.out(diagnosticLine(d));
    return all.some((d) => d.severity === 'error') ? EXIT_FAIL : EXIT_OK;
  },
};
