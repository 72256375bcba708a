// State-space evaluation (language/src/linear/lti.ts).
import { describe, expect, it } from 'vitest';
import { checkStateSpace, evalTransfer, gain, sisoEvaluator, ssDims } from '../../language/src/linear/lti';
import { cDiv, cMul, type Complex } from '../../language/src/linear/complex';
import { expectComplexClose } from './helpers';

// Two decoupled lags, 2 inputs, 2 outputs: G = [[1/(s+1), 0], [2/(s+1), 3/(s+2) + 0.5]] [derived].
const ss = {
  A: [[-1, 0], [0, -2]],
  B: [[1, 0], [0, 3]],
  C: [[1, 0], [2, 1]],
  D: [[0, 0], [0, 0.5]],
};

describe('evalTransfer', () => {
  it('matches the hand-derived 2×2 transfer matrix at complex frequencies', () => {
    for (const s of [{ re: 0, im: 1 }, { re: 3, im: -2 }, { re: -0.5, im: 10 }] as Complex[]) {
      const r = evalTransfer(ss, s);
      expect(r.ok).toBe(true);
      const inv1 = cDiv({ re: 1, im: 0 }, { re: s.re + 1, im: s.im });
      const inv2 = cDiv({ re: 1, im: 0 }, { re: s.re + 2, im: s.im });
      expectComplexClose(r.G[0][0], inv1, 1e-15);
      expectComplexClose(r.G[0][1], { re: 0, im: 0 }, 1e-15);
      expectComplexClose(r.G[1][0], cMul({ re: 2, im: 0 }, inv1), 1e-15);
      expectComplexClose(r.G[1][1], { re: 3 * inv2.re + 0.5, im: 3 * inv2.im }, 1e-15);
      // The fast evaluator agrees with the general path entry by entry.
      expectComplexClose(sisoEvaluator(ss, 1, 1)(s), r.G[1][1], 1e-15);
      expectComplexClose(sisoEvaluator(ss, 1, 0)(s), r.G[1][0], 1e-15);
    }
  });

  it('at a pole, for bad shapes and for state-less systems', () => {
    expect(evalTransfer(ss, { re: -1, im: 0 }).problem).toBe('pole');
    expect(Number.isNaN(sisoEvaluator(ss)({ re: -1, im: 0 }).re)).toBe(true);
    expect(evalTransfer({ A: [[1, 2]], B: [[1]], C: [[1]], D: [[0]] }, { re: 0, im: 1 }).problem).toBe('shape');
    expect(checkStateSpace({ A: [[Infinity]], B: [[1]], C: [[1]], D: [[0]] })).toMatch(/non-finite/);
    const k = gain(4);
    expect(ssDims(k)).toEqual({ n: 0, m: 1, p: 1 });
    expect(evalTransfer(k, { re: 0, im: 1 }).G).toEqual([[{ re: 4, im: 0 }]]);
    expect(sisoEvaluator(k)({ re: 0, im: 1 })).toEqual({ re: 4, im: 0 });
  });
});
