// Every sample of samples/units/ checks clean through analyze() and the unit checker: one
// scenario per family (mechanical, electrical, thermal, hydraulic), plus the tour files with
// deliberate unit mistakes, which must draw exactly the diagnostics their comments announce.

import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { runUnits } from './helpers';
import { analyze } from '../../language/src/analysis';

const root = join(__dirname, '..', '..', 'samples');

describe('unit family samples check clean', () => {
  const dir = join(root, 'units');
  const files = readdirSync(dir).filter((f) => f.endsWith('.loop'));
  it('there is one per family', () => {
    expect(files.sort()).toEqual(['electrical.loop', 'hydraulic.loop', 'mechanical.loop', 'thermal.loop']);
  });
  for (const f of files) {
    it(f, () => {
      const text = readFileSync(join(dir, f), 'utf8');
      expect(analyze(text).diagnostics.filter((d) => d.severity !== 'info')).toEqual([]);
      const run = runUnits(text);
      expect(run.front.filter((d) => d.severity !== 'info')).toEqual([]);
      expect(run.units).toEqual([]);
      // every quantity literal has a finite SI value
      for (const q of run.result.quantities.values()) expect(Number.isFinite(q.si)).toBe(true);
    });
  }
});

describe('tour files with unit mistakes', () => {
  const cases: Record<string, string[]> = {
    'units-hertz.loop': ['LW306'],
    'units-degrees.loop': ['LW308', 'LW307', 'LW308', 'LW308'],
    'units-mismatch.loop': ['LW303', 'LW303', 'LW310'],
  };
  for (const [f, codes] of Object.entries(cases)) {
    it(f, () => {
      const text = readFileSync(join(root, 'tour', f), 'utf8');
      const run = runUnits(text);
      expect(run.front.filter((d) => d.severity === 'error')).toEqual([]);
      expect(run.units.map((d) => d.code)).toEqual(codes);
      // each diagnostic of a line marked "mistake" sits on that line
      const mistakes = text.split('\n').filter((l) => l.includes('mistake')).length;
      if (f !== 'units-hertz.loop') expect(run.units.length).toBe(mistakes);
      for (const d of run.units) {
        const line = text.slice(text.lastIndexOf('\n', d.span.start) + 1, text.indexOf('\n', d.span.start));
        if (f !== 'units-hertz.loop') expect(line).toContain('mistake');
      }
    });
  }
});
