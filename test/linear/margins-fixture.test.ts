// Margins cross-checked against numpy figures computed by polynomial root finding
// (test/reference/linear/make_margins.py writes margins.json): every gain and phase crossover.
import { describe, expect, it } from 'vitest';
import { margins } from '../../language/src/linear/margins';
import { realizeRational } from '../../language/src/linear/realize';
import fixture from '../reference/linear/margins.json';

describe('margins against numpy polynomial roots (fixture)', () => {
  for (const c of fixture.cases) {
    it(c.name, () => {
      const r = realizeRational({ num: c.num, den: c.den });
      if (!r.ok) throw new Error(r.message);
      const m = margins(r.ss);
      expect(m.ok).toBe(true);
      expect(m.gainCrossings.map((g) => g.omega)).toHaveLength(c.gainCrossings.length);
      c.gainCrossings.forEach((g, i) => {
        expect(Math.abs(m.gainCrossings[i].omega - g.omega) / g.omega).toBeLessThan(1e-9);
        expect(Math.abs(m.gainCrossings[i].phaseMargin - g.phaseMargin)).toBeLessThan(1e-7);
      });
      const finitePc = m.phaseCrossings.filter((p) => p.omega > 0 && Number.isFinite(p.omega));
      expect(finitePc).toHaveLength(c.phaseCrossings.length);
      c.phaseCrossings.forEach((p, i) => {
        expect(Math.abs(finitePc[i].omega - p.omega) / p.omega).toBeLessThan(1e-9);
        expect(Math.abs(finitePc[i].gain - p.gain) / p.gain).toBeLessThan(1e-8);
      });
    });
  }
});
