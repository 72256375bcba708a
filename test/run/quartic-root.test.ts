// Where a signal changes sign inside a step, its IAE is cut at the root of the quartic through
// the step's five samples (sim/run.ts). The root is found by Newton's method on the quartic in
// powers of θ; checked here against the Lagrange form of the same quartic (the definition) and
// against the Illinois method on it (locateRoot, used for the limit events), for random samples.

import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { locateRoot } from '../../language/src/sim/events';
import { GL3_NODES } from '../../language/src/sim/metrics';
import { quartic, quarticRoot } from '../../language/src/sim/run';

const NODES = [0, GL3_NODES[0], GL3_NODES[1], GL3_NODES[2], 1];
const sample = fc.double({ min: -10, max: 10, noNaN: true }).filter((v) => Math.abs(v) > 1e-6);

describe('the root of the quartic through a step\'s five samples', () => {
  it('lies in the bracket, is a root of the Lagrange form, and agrees with the Illinois method', () => {
    fc.assert(
      fc.property(fc.array(sample, { minLength: 5, maxLength: 5 }), fc.integer({ min: 0, max: 3 }), (ys, k) => {
        if (ys[k] * ys[k + 1] >= 0) ys[k + 1] = -ys[k + 1] || -1;
        const th = quarticRoot(ys, k);
        expect(th).toBeGreaterThanOrEqual(NODES[k]);
        expect(th).toBeLessThanOrEqual(NODES[k + 1]);
        const scale = Math.max(...ys.map(Math.abs));
        const sign = ys[k] > 0 ? 1 : -1;
        const ref = locateRoot((t) => sign * quartic(ys, t), NODES[k], Math.abs(ys[k]), NODES[k + 1], -Math.abs(ys[k + 1]));
        expect(Math.abs(quartic(ys, th))).toBeLessThan(1e-9 * scale);
        // with one root in the bracket both methods find it; with three they may find different ones
        if (countSignChanges(ys, k) === 1) expect(Math.abs(th - ref)).toBeLessThan(1e-9);
      }),
      { numRuns: 5000 },
    );
  });

  it('is the exact root for a straight line (samples of y = θ − 0.3)', () => {
    const ys = NODES.map((t) => t - 0.3);
    expect(quarticRoot(ys, 1)).toBeCloseTo(0.3, 12);
  });
});

/** Sign changes of the quartic between nodes k and k+1, on a fine scan. */
function countSignChanges(ys: number[], k: number): number {
  let n = 0, prev = quartic(ys, NODES[k]);
  for (let i = 1; i <= 400; i++) {
    const v = quartic(ys, NODES[k] + ((NODES[k + 1] - NODES[k]) * i) / 400);
    if (v * prev < 0) n++;
    if (v !== 0) prev = v;
  }
  return n;
}
