// Property tests: the unit parser and the checker never throw, whatever the input, and the
// dimension algebra behaves as a group (a*b/b has the dimension of a).

import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { parseUnit } from '../../language/src/units/registry';
import { dimDiv, dimEq, dimMul, dimPow, type Dim } from '../../language/src/units/dimension';
import { runUnits } from './helpers';

const NAMES = ['m', 'mm', 'kg', 'g', 's', 'ms', 'min', 'h', 'N', 'kN', 'J', 'W', 'kW', 'V', 'A', 'ohm', 'H', 'mH', 'F', 'Pa', 'bar', 'psi', 'K', 'rad', 'deg', 'rpm', 'Hz', 'L', '%', 'lbf', 'hp', 'inch', 'mol', 'cd'];

const unitText: fc.Arbitrary<string> = fc.letrec<{ u: string }>((tie) => ({
  u: fc.oneof(
    { depthSize: 'small', withCrossShrink: true },
    fc.constantFrom(...NAMES),
    fc.tuple(tie('u'), fc.constantFrom('*', '/'), tie('u')).map(([a, op, b]) => `${a}${op}${b}`),
    fc.tuple(fc.constantFrom(...NAMES), fc.integer({ min: -3, max: 3 }).filter((k) => k !== 0)).map(([a, k]) => `${a}^${k}`),
    tie('u').map((a) => `(${a})`),
    tie('u').map((a) => `1/(${a})`),
  ),
})).u;

describe('parseUnit never throws', () => {
  it('on arbitrary text, and error ranges stay inside the text', () => {
    fc.assert(
      fc.property(fc.oneof(fc.string(), fc.string({ unit: fc.constantFrom(...'mkgsNV*/^()-+1 2.%°µΩ_aZ'.split('')) })), (t) => {
        const r = parseUnit(t);
        if (!r.ok) {
          expect(r.start).toBeGreaterThanOrEqual(0);
          expect(r.end).toBeGreaterThanOrEqual(r.start);
          expect(r.end).toBeLessThanOrEqual(t.length);
          expect(r.message.length).toBeGreaterThan(0);
        } else {
          expect(Number.isFinite(r.unit.scale)).toBe(true);
        }
      }),
      { numRuns: 2000 },
    );
  });

  it('on well-formed unit text, which always parses', () => {
    fc.assert(
      fc.property(unitText, (t) => {
        const r = parseUnit(t);
        expect(r.ok).toBe(true);
      }),
      { numRuns: 500 },
    );
  });

  it('dimension of (a)*(b)/(b) equals that of a; of (a)^2 that of a*a', () => {
    fc.assert(
      fc.property(unitText, unitText, (a, b) => {
        const ua = parseUnit(a);
        const r = parseUnit(`(${a})*(${b})/(${b})`);
        const sq = parseUnit(`(${a})*(${a})`);
        if (!ua.ok || !r.ok || !sq.ok) throw new Error('parse failed');
        expect(dimEq(r.unit.dim, ua.unit.dim)).toBe(true);
        expect(dimEq(sq.unit.dim, dimPow(ua.unit.dim, 2))).toBe(true);
        expect(r.unit.scale / ua.unit.scale).toBeCloseTo(1, 9);
      }),
      { numRuns: 300 },
    );
  });
});

describe('dimension algebra', () => {
  const dim = fc.array(fc.integer({ min: -4, max: 4 }), { minLength: 7, maxLength: 7 }) as fc.Arbitrary<Dim>;
  it('a*b/b = a; sqrt(a)^2 = a', () => {
    fc.assert(
      fc.property(dim, dim, (a, b) => {
        expect(dimEq(dimDiv(dimMul(a, b), b), a)).toBe(true);
        expect(dimEq(dimPow(dimPow(a, 0.5), 2), a)).toBe(true);
      }),
    );
  });
});

// Random expressions over the names of a small plant, written as text.
const expr: fc.Arbitrary<string> = fc.letrec<{ e: string }>((tie) => ({
  e: fc.oneof(
    { depthSize: 'small', withCrossShrink: true },
    fc.constantFrom('x', 'v', 'u', 'k', 'w', 'pi', 'q', 'nope', "x'"),
    fc.double({ min: -1e3, max: 1e3, noNaN: true }).map((n) => String(Math.abs(n))),
    fc.tuple(fc.integer({ min: 0, max: 99 }), unitText).map(([n, u]) => `${n} [${u}]`),
    fc.constantFrom('2 [Nm]', '1 [', '3 [m/]', '5 [Hz]', '20 [degC]'),
    fc.tuple(tie('e'), fc.constantFrom('+', '-', '*', '/', '^', '<', '==', 'and', 'or'), tie('e')).map(([a, op, b]) => `(${a} ${op} ${b})`),
    fc.tuple(fc.constantFrom('sin', 'sqrt', 'abs', 'min', 'max', 'clamp', 'atan2', 'lookup', 'exp', 'sign', 'bogus'), fc.array(tie('e'), { maxLength: 3 })).map(([f, a]) => `${f}(${a.join(', ')})`),
    fc.tuple(tie('e'), tie('e'), tie('e')).map(([c, a, b]) => `(if ${c} then ${a} else ${b})`),
    fc.array(tie('e'), { maxLength: 3 }).map((a) => `[${a.join(', ')}]`),
    tie('e').map((a) => `-${a}`),
    tie('e').map((a) => `not ${a}`),
  ),
})).e;

describe('the checker never throws', () => {
  it('on random expressions in every place of a plant, a controller and a loop', () => {
    fc.assert(
      fc.property(expr, expr, expr, (a, b, c) => {
        const text = `plant P {
  param k = ${a}
  param w = 3 [rad/s]
  let q = ${b}
  state x [m]
  state v [m/s]
  input u [N]
  output y [m] = ${c}
  limit u within ${a} .. ${b}
  x' = ${a}
  v' = ${b}
  operating point o { x = ${c}, u = ${a} }
}
controller C {
  input e [m]
  output f [N]
  f / e = ${a} * s / (${b} + s)
  pid g from e { kp = ${c} }
  linear { A = [[${a}]], D = [[${b}, ${c}]] }
}
loop L {
  signal r = ${a}
  r -> P.u
  start P.x = ${b}
  simulate ${c} { tolerance = ${a} }
  expect ${a} < ${b}
}
`;
        const run = runUnits(text);
        expect(run.units.filter((d) => d.code === 'LW311')).toEqual([]);
        for (const d of run.units) {
          expect(d.span.start).toBeGreaterThanOrEqual(0);
          expect(d.span.end).toBeLessThanOrEqual(text.length);
        }
      }),
      { numRuns: 120 },
    );
  });

  it('a*b/b has the dimension of a, through the checker', () => {
    fc.assert(
      fc.property(unitText, unitText, (ua, ub) => {
        const run = runUnits(`plant P {\n  param a = 2 [${ua}]\n  param b = 3 [${ub}]\n  let c = a*b/b\n}\n`);
        expect(run.units).toEqual([]);
        const inferred = [...run.result.inferred.values()];
        expect(inferred).toHaveLength(3);
        expect(dimEq(inferred[2].dim, inferred[0].dim)).toBe(true);
      }),
      { numRuns: 200 },
    );
  });
});
