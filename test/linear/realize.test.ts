// Realization (language/src/linear/realize.ts).
import { describe, expect, it } from 'vitest';
import { realizePid, realizeRational } from '../../language/src/linear/realize';
import { evalSiso } from '../../language/src/linear/lti';
import { polesOf } from '../../language/src/linear/poles';
import { ratEval } from '../../language/src/linear/rational';
import { cAdd, cDiv, cMul, type Complex } from '../../language/src/linear/complex';
import { expectComplexClose } from './helpers';

const points: Complex[] = [{ re: 0, im: 1 }, { re: -0.5, im: 3 }, { re: 2, im: -1 }, { re: 10, im: 0 }, { re: 0, im: 100 }];

describe('controllable canonical realization', () => {
  it('(s+3)/(s²+3s+2): A = [[0,1],[−2,−3]], C = [3,1], poles −1, −2 (REFERENCES.md)', () => {
    const G = { num: [1, 3], den: [1, 3, 2] };
    const r = realizeRational(G);
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.ss.A).toEqual([[0, 1], [-2, -3]]);
    expect(r.ss.B).toEqual([[0], [1]]);
    expect(r.ss.C).toEqual([[3, 1]]);
    expect(r.ss.D).toEqual([[0]]);
    const p = polesOf(r.ss.A).poles.map((q) => q.re);
    expect(p[0]).toBeCloseTo(-1, 14);
    expect(p[1]).toBeCloseTo(-2, 14);
    for (const s of points) expectComplexClose(evalSiso(r.ss, s), ratEval(G, s), 1e-14);
  });

  it('biproper and non-monic: (2s² + 1)/(4s² + 2s + 8) keeps D = 1/2 and the value [derived]', () => {
    const G = { num: [2, 0, 1], den: [4, 2, 8] };
    const r = realizeRational(G);
    if (!r.ok) throw new Error('expected ok');
    expect(r.ss.D).toEqual([[0.5]]);
    for (const s of points) expectComplexClose(evalSiso(r.ss, s), ratEval(G, s), 1e-14);
  });

  it('a constant gets no states; an improper relation is reported', () => {
    const k = realizeRational({ num: [3], den: [2] });
    expect(k.ok && k.ss.D).toEqual([[1.5]]);
    expect(k.ok && k.order).toBe(0);
    const bad = realizeRational({ num: [1, 0, 0], den: [1, 1] });
    expect(bad.ok).toBe(false);
    if (!bad.ok) { expect(bad.problem).toBe('improper'); expect(bad.relativeDegree).toBe(-1); }
    const z = realizeRational({ num: [1], den: [0] });
    expect(!z.ok && z.problem).toBe('zero-denominator');
  });
});

describe('PID realization', () => {
  const pid = (s: Complex, kp: number, ki: number, kd: number, N: number): Complex => {
    // kp + ki/s + kd·s/(1 + s/N), evaluated directly (definition).
    let v: Complex = { re: kp, im: 0 };
    if (ki) v = cAdd(v, cDiv({ re: ki, im: 0 }, s));
    if (kd) v = cAdd(v, cDiv(cMul({ re: kd, im: 0 }, s), { re: 1 + s.re / N, im: s.im / N }));
    return v;
  };

  it('full PID with filtered derivative: transfer matches, states [integral, filter]', () => {
    const r = realizePid({ kp: 2, ki: 0.7, kd: 0.3, rolloff: 25 });
    if (!r.ok) throw new Error(r.message);
    expect(r.states).toEqual(['integral', 'filter']);
    expect(r.ss.A).toEqual([[0, 0], [0, -25]]);
    for (const s of points) expectComplexClose(evalSiso(r.ss, s), pid(s, 2, 0.7, 0.3, 25), 1e-14);
  });

  it('PI and P only; kd without rolloff is improper', () => {
    const pi = realizePid({ kp: 1, ki: 3 });
    if (!pi.ok) throw new Error(pi.message);
    expect(pi.states).toEqual(['integral']);
    for (const s of points) expectComplexClose(evalSiso(pi.ss, s), pid(s, 1, 3, 0, 1), 1e-15);
    const p = realizePid({ kp: 4 });
    expect(p.ok && p.order).toBe(0);
    expect(realizePid({ kp: 1, kd: 1 })).toMatchObject({ ok: false, problem: 'improper' });
    expect(realizePid({ kd: 1, rolloff: Infinity })).toMatchObject({ ok: false, problem: 'improper' });
    expect(realizePid({ kd: 1, rolloff: -3 })).toMatchObject({ ok: false, problem: 'bad-rolloff' });
    expect(realizePid({ kp: NaN })).toMatchObject({ ok: false, problem: 'non-finite' });
  });
});
