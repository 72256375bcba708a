// docs/diagnostics.md lists every code of language/src/check/codes.ts with its severity, title
// and an example; file examples must report their code when analysed. When the table changes,
// regenerate the page with:  LOOPWRIGHT_WRITE_DOCS=1 npx vitest run test/docs

import { readFileSync, writeFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { analyze } from '../../language/src/analysis';
import { CODES } from '../../language/src/check/codes';
import { checkOperatingPoints } from '../../language/src/linear/equilibrium';
import { checkLoopStability } from '../../language/src/linear/stability';
import { compileAnalysis } from '../../language/src/model/compile';
import { EXAMPLES } from './diagnostic-examples';
import { renderDiagnosticsDoc } from './render-diagnostics';

const DOC = 'docs/diagnostics.md';

describe('docs/diagnostics.md', () => {
  if (process.env.LOOPWRIGHT_WRITE_DOCS === '1') writeFileSync(DOC, renderDiagnosticsDoc());

  it('has an example for every code and none for a code that does not exist', () => {
    expect(Object.keys(EXAMPLES).filter((c) => !CODES.has(c))).toEqual([]);
    expect([...CODES.keys()].filter((c) => !EXAMPLES[c])).toEqual([]);
  });

  it('lists every code with its severity and title, exactly as the table says', () => {
    const doc = readFileSync(DOC, 'utf8');
    for (const c of CODES.values()) {
      expect(doc, c.code).toContain(`| [${c.code}](#${c.code.toLowerCase()}) | ${c.severity} | ${c.title.replace(/\|/g, '\\|')} |`);
      expect(doc, c.code).toContain(`### ${c.code}\n\n**${c.title}** — ${c.severity}`);
    }
    const listed = [...doc.matchAll(/^### (LW\d+)$/gm)].map((m) => m[1]);
    expect(listed).toEqual([...CODES.keys()]);
    expect(doc).toBe(renderDiagnosticsDoc());
  });

  for (const [code, ex] of Object.entries(EXAMPLES)) {
    if (ex.kind !== 'file') continue;
    it(`the example of ${code} reports ${code}`, () => {
      const a = analyze(ex.body);
      const codes = new Set(a.diagnostics.map((d) => d.code));
      for (const d of compileAnalysis(a).diagnostics) codes.add(d.code);
      for (const d of [...checkOperatingPoints(a), ...checkLoopStability(a)]) codes.add(d.code);
      expect([...codes]).toContain(code);
      expect(CODES.get(code)!.severity).toBe([...a.sink.items, ...checkOperatingPoints(a), ...checkLoopStability(a)].find((d) => d.code === code)?.severity ?? CODES.get(code)!.severity);
    });
  }
});
