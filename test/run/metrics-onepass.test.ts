// The run driver computes a signal's metrics in one pass over its merged samples
// (displayMetricsOf), and an expect the change of its signal in one pass too (changeFast); the
// metrics module also has them one definition at a time, as LANGUAGE.md §4.3 words them
// (displayMetrics: convert to display values, then change, peak, rise, overshoot and settling
// each on their own). They must agree exactly, for any samples: with ties, negative and mixed
// signs, signals that end where they start, units with an offset (degC) or a scale (mm), and
// samples that are not finite.

import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { changeFast, changeOf, displayMetrics, displayMetricsOf } from '../../language/src/sim/metrics';

const value = fc.oneof(
  { weight: 8, arbitrary: fc.double({ min: -1e3, max: 1e3, noNaN: true }) },
  { weight: 2, arbitrary: fc.constantFrom(0, -0, 1, -1, 0.5) },
  { weight: 1, arbitrary: fc.constantFrom(Infinity, -Infinity, NaN) },
);
const unit = fc.constantFrom({ scale: 1, offset: 0 }, { scale: 1, offset: 273.15 }, { scale: 1e-3, offset: 0 }, { scale: 0.017453292519943295, offset: 0 });

describe('one-pass metrics (displayMetricsOf) against the metrics one at a time (displayMetrics)', () => {
  it('agree exactly on random samples', () => {
    fc.assert(
      fc.property(fc.array(value, { minLength: 1, maxLength: 40 }), unit, fc.double({ min: 0, max: 10, noNaN: true }), (ys, tr, iae) => {
        const t = ys.map((_, i) => i * 0.1);
        // the driver's rows are longer than the run's samples: only the first n count
        const y = Float64Array.from([...ys, 7, -7]);
        const one = displayMetricsOf(t, y, ys.length, tr, iae);
        const ref = displayMetrics({ t, y: ys }, tr, iae);
        expect(one).toEqual(ref);
      }),
      { numRuns: 3000 },
    );
  });

  it('the change of a signal in one pass (changeFast, for expects) is changeOf exactly', () => {
    fc.assert(
      fc.property(fc.array(value, { minLength: 0, maxLength: 40 }), (ys) => {
        const s = { t: ys.map((_, i) => i), y: ys };
        expect(changeFast(s)).toEqual(changeOf(s));
      }),
      { numRuns: 3000 },
    );
  });

  it('agree on a step response that ends where it started (no change: no rise, overshoot or settling)', () => {
    const t = [0, 1, 2, 3];
    const ys = [2, 5, -1, 2];
    expect(displayMetricsOf(t, Float64Array.from(ys), 4, { scale: 1, offset: 0 }, 1)).toEqual(displayMetrics({ t, y: ys }, { scale: 1, offset: 0 }, 1));
    expect(displayMetricsOf(t, Float64Array.from(ys), 4, { scale: 1, offset: 0 }, 1)).toMatchObject({ peak: 5, rise: null, overshoot: null, settling: null });
  });
});
