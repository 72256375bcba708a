// Routh–Hurwitz array (language/src/linear/routh.ts), each case checked against the eigenvalue
// verdict of the companion matrix (polyRoots) as an independent count.
import { describe, expect, it } from 'vitest';
import { routh } from '../../language/src/linear/routh';
import { polyRoots } from '../../language/src/linear/poly';

function rootCounts(p: number[]): { rhp: number; axis: number } {
  const r = polyRoots(p).roots;
  return { rhp: r.filter((z) => z.re > 1e-9).length, axis: r.filter((z) => Math.abs(z.re) <= 1e-9).length };
}

describe('Routh–Hurwitz (Routh 1877; values from REFERENCES.md)', () => {
  it('s³ − 2s² − 5s + 6: first column 1, −2, −2, 6; two RHP roots (3 and 1)', () => {
    const r = routh([1, -2, -5, 6]);
    expect(r.firstColumn).toEqual([1, -2, -2, 6]);
    expect(r.rhp).toBe(2);
    expect(r.verdict).toBe('unstable');
    expect(rootCounts([1, -2, -5, 6]).rhp).toBe(2);
  });

  it('s⁴ + 24s³ + 196s² + 624s + 640: first column 1, 24, 170, 9072/17, 640; stable', () => {
    const r = routh([1, 24, 196, 624, 640]);
    const want = [1, 24, 170, 9072 / 17, 640];
    r.firstColumn.forEach((v, i) => expect(v).toBeCloseTo(want[i], 11));
    expect(r.rhp).toBe(0);
    expect(r.verdict).toBe('stable');
    expect(rootCounts([1, 24, 196, 624, 640]).rhp).toBe(0);
  });

  it('s⁴ + 2s³ + 3s² + 4s + 5: first column 1, 2, 1, −6, 5; two RHP roots', () => {
    const r = routh([1, 2, 3, 4, 5]);
    expect(r.firstColumn).toEqual([1, 2, 1, -6, 5]);
    expect(r.rhp).toBe(2);
    expect(rootCounts([1, 2, 3, 4, 5]).rhp).toBe(2);
  });

  it('zero in the first column (ε method): s⁴ + s³ + 2s² + 2s + 3 has two RHP roots [eigenvalue check]', () => {
    const r = routh([1, 1, 2, 2, 3]);
    expect(r.epsilonRows).toEqual([2]);
    expect(r.rhp).toBe(2);
    expect(rootCounts([1, 1, 2, 2, 3]).rhp).toBe(2);
  });

  it('zero row (auxiliary polynomial): (s² − 1)(s² + 25)(s + 2) = s⁵ + 2s⁴ + 24s³ + 48s² − 25s − 50 [derived]', () => {
    const p = [1, 2, 24, 48, -25, -50];
    const r = routh(p);
    expect(r.auxiliary).toHaveLength(1);
    expect(r.auxiliary[0].poly).toEqual([2, 0, 48, 0, -50]);
    expect(r.rhp).toBe(1);
    expect(r.axis).toBe(2);
    expect(r.lhp).toBe(2);
    expect(rootCounts(p)).toEqual({ rhp: 1, axis: 2 });
  });

  it('marginal: (s² + 5)(s + 6) = s³ + 6s² + 5s + 30 has ±j√5 on the axis [derived]', () => {
    const r = routh([1, 6, 5, 30]);
    expect(r.rhp).toBe(0);
    expect(r.axis).toBe(2);
    expect(r.verdict).toBe('marginal');
  });

  it('roots at the origin, sign normalisation and odd input', () => {
    const r = routh([-1, -3, -2, 0]); // −s(s + 1)(s + 2)
    expect(r.axis).toBe(1);
    expect(r.verdict).toBe('marginal');
    expect(routh([0, 0]).problem).toBe('zero-polynomial');
    expect(routh([1, NaN]).problem).toBe('non-finite');
    expect(routh([7]).verdict).toBe('stable');
  });
});
