// Renders docs/diagnostics.md from the code table (language/src/check/codes.ts) and the examples.

import { CODES } from '../../language/src/check/codes';
import { EXAMPLES } from './diagnostic-examples';

const RANGES: Array<[string, string]> = [
  ['LW1', 'Syntax'],
  ['LW2', 'Names and structure'],
  ['LW3', 'Units and dimensions'],
  ['LW4', 'Wiring and loops'],
  ['LW5', 'Model: realization, limits, sampling'],
  ['LW6', 'Linear analysis: operating points'],
  ['LW7', 'Runs'],
];

export function renderDiagnosticsDoc(): string {
  const out: string[] = [
    '# Diagnostics',
    '',
    'Every diagnostic Loopwright reports has a stable code. The editor shows the code with the',
    'message; `loopwright check` prints `path:line:col: severity CODE message`. Codes are never',
    'renumbered; new ones are added. The severity below is the default.',
    '',
    '- **error**: the file cannot be run or exported until it is fixed;',
    '- **warning**: the file runs, but something is probably not what was meant;',
    '- **info**: a note, usually with a quick fix.',
    '',
    'Checks of the model (algebraic loops, realizations) and of operating points run once the',
    'front end (syntax, names, units, wiring) reports no error. Run-time codes (LW7xx) belong to a',
    'run: they appear in its result and in `loopwright simulate` or `sweep` output.',
    '',
    '| code | severity | title |',
    '|---|---|---|',
    ...[...CODES.values()].map((c) => `| [${c.code}](#${c.code.toLowerCase()}) | ${c.severity} | ${c.title.replace(/\|/g, '\\|')} |`),
    '',
  ];
  for (const [prefix, title] of RANGES) {
    const codes = [...CODES.values()].filter((c) => c.code.startsWith(prefix));
    if (!codes.length) continue;
    out.push(`## ${title}`, '');
    for (const c of codes) {
      const ex = EXAMPLES[c.code];
      out.push(`### ${c.code}`, '', `**${c.title}** — ${c.severity}`, '');
      if (ex) {
        out.push(ex.kind === 'file' ? '```loop' : '```text', ex.body, '```', '', ex.note, '');
      } else {
        out.push('(no example yet)', '');
      }
    }
  }
  return out.join('\n');
}
