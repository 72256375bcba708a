// Frequency response (language/src/linear/freqresp.ts) and eigenvalues at extreme scales (eig.ts).
import { describe, expect, it } from 'vitest';
import { frequencyResponse, logspace, transferOf, unwrapDegrees } from '../../language/src/linear/freqresp';
import { realizeRational } from '../../language/src/linear/realize';
import { eigenvalues } from '../../language/src/linear/eig';

describe('frequency response', () => {
  it('1/(s+1)³: |L| = (1+ω²)^{−3/2}, phase −3·atan ω, unwrapped past −180° [derived]', () => {
    const r = realizeRational({ num: [1], den: [1, 3, 3, 1] });
    if (!r.ok) throw new Error(r.message);
    const w = logspace(1e-2, 1e2, 50);
    const f = frequencyResponse(transferOf(r.ss), w);
    f.omega.forEach((om, i) => {
      expect(f.magnitude[i]).toBeCloseTo((1 + om * om) ** -1.5, 14);
      expect(f.phaseDeg[i]).toBeCloseTo((-3 * Math.atan(om) * 180) / Math.PI, 10);
    });
    expect(f.phaseDeg[f.phaseDeg.length - 1]).toBeLessThan(-260);
  });

  it('logspace ends and unwrapping of a jump', () => {
    const w = logspace(1, 1000, 10);
    expect(w[0]).toBe(1);
    expect(w[w.length - 1]).toBeCloseTo(1000, 10);
    expect(logspace(0, 1, 10)).toEqual([]);
    expect(unwrapDegrees([170, -175, -160])).toEqual([170, 185, 200]);
  });
});

describe('eigenvalues at extreme scales', () => {
  it('scaling by a power of two keeps huge and tiny matrices exact [derived: eigenvalues scale with A]', () => {
    for (const k of [1e-300, 1e-150, 1e150, 1e300]) {
      const e = eigenvalues([[0, k], [-k, 0]]); // ±jk
      expect(e.ok).toBe(true);
      const im = e.values.map((z) => z.im).sort((a, b) => a - b);
      expect(im[0] / -k).toBeCloseTo(1, 14);
      expect(im[1] / k).toBeCloseTo(1, 14);
    }
  });
});
