// One test per unit diagnostic, with its exact range (from ⟦markers⟧ in the source), and the
// SI values the checker records. Expected messages follow LANGUAGE.md §3.

import { describe, expect, it } from 'vitest';
import { marked, runUnits } from './helpers';
import type { Diagnostic } from '../../language/src/diagnostics';
import { formatDim } from '../../language/src/units/dimension';

function only(src: string, code: string): { d: Diagnostic; spans: { start: number; end: number }[]; text: string } {
  const { text, spans } = marked(src);
  const run = runUnits(text);
  expect(run.front.filter((d) => d.severity === 'error'), 'front end must be clean').toEqual([]);
  const mine = run.units.filter((d) => d.code === code);
  expect(run.units.map((d) => d.code)).toEqual([code]);
  expect(mine).toHaveLength(1);
  return { d: mine[0], spans, text };
}

const plant = (body: string) => `plant P {\n${body}\n}\n`;

describe('unit diagnostics, one per code, with exact ranges', () => {
  it('LW301 unknown unit: the bad name inside the brackets', () => {
    const { d, spans } = only(plant(`  param torque = 3 [⟦Nm⟧]`), 'LW301');
    expect(d.span).toEqual(spans[0]);
    expect(d.message).toBe("unknown unit 'Nm' (did you mean 'N*m'?)");
    expect(d.severity).toBe('error');
  });

  it('LW301 on a declared unit, part of a product', () => {
    const { d, spans } = only(plant(`  state x [N*⟦sec2⟧]\n  x' = 0 [N*s^2/s]`), 'LW301');
    expect(d.span).toEqual(spans[0]);
  });

  it('LW302 terms of a sum that differ: the right term', () => {
    const { d, spans } = only(plant(`  param a = 2 [m]\n  param b = 3 [s]\n  let c = a + ⟦b⟧`), 'LW302');
    expect(d.span).toEqual(spans[0]);
    expect(d.message).toBe("this term is s, but the other side of '+' is m");
  });

  it("LW303 state equation: the term that differs from unit(x)/s, both sides in user and SI units", () => {
    const { d, spans } = only(
      plant(`  param k = 2 [N*m/kg]\n  state rate [rad/s]\n  rate' = 3 [rad/s^2] + ⟦k⟧`),
      'LW303',
    );
    expect(d.span).toEqual(spans[0]);
    expect(d.message).toBe("rate' must be rad/s^2 (1/s^2); this term is N*m/kg (m^2/s^2)");
  });

  it('LW303 whole expression, with the fix that replaces the declared unit', () => {
    const { d, spans, text } = only(plant(`  state x [⟦m⟧]\n  input f [N]\n  x' = ⟦f⟧`), 'LW303');
    expect(d.span).toEqual(spans[1]);
    expect(d.message).toBe("x' must be m/s; this expression is N (kg*m/s^2)");
    expect(d.fixes).toEqual([{ title: "Change the unit of x to [N*s] (as its x' = ... gives)", edits: [{ span: spans[0], newText: 'N*s' }] }]);
    expect(text.slice(spans[0].start, spans[0].end)).toBe('m');
  });

  it('LW303 arrow source against the input it feeds', () => {
    const src = `${plant(`  input u [V]\n  state x [1]\n  x' = u / 1 [V*s]`)}loop L {\n  ⟦2 [A]⟧ -> P.u\n  simulate 1 [s]\n}\n`;
    const { d, spans } = only(src, 'LW303');
    expect(d.span).toEqual(spans[0]);
    expect(d.message).toBe('P.u must be V (kg*m^2/(s^3*A)); this expression is A');
  });

  it('LW303 transfer relation must be output/input, with s as 1/time', () => {
    const src = `controller C {\n  input e [rad]\n  output u [N*m]\n  u / e = 3 [N*m/rad] + ⟦2 [N*m/rad]*s⟧\n}\n`;
    const { d, spans } = only(src, 'LW303');
    expect(d.span).toEqual(spans[0]);
    expect(d.message).toBe('u / e must be N*m/rad (kg*m^2/s^2); this term is N*m/(rad*s) (kg*m^2/s^3)');
  });

  it('LW304 function needs a dimensionless argument: the argument', () => {
    const { d, spans } = only(plant(`  param x = 2 [m]\n  let y = sin(⟦x⟧)`), 'LW304');
    expect(d.span).toEqual(spans[0]);
    expect(d.message).toBe('sin needs a dimensionless argument (an angle); this is m');
  });

  it('LW305 exponent must be a dimensionless constant: the exponent', () => {
    const { d, spans } = only(plant(`  param x = 2 [m]\n  param e = 1 [s]\n  let y = x^⟦e⟧`), 'LW305');
    expect(d.span).toEqual(spans[0]);
  });

  it('LW306 Hz next to s: the Hz value, naming 2π', () => {
    const src = `controller C {\n  param w = 5 [Hz]\n  input e [1]\n  output u [1]\n  u / e = 1 / (1 + s/⟦w⟧)\n}\n`;
    const { d, spans } = only(src, 'LW306');
    expect(d.span).toEqual(spans[0]);
    expect(d.message).toContain('2π');
    expect(d.severity).toBe('warning');
  });

  it('LW306 Hz added to rad/s', () => {
    const { d, spans } = only(plant(`  param w = 3 [rad/s]\n  let v = w + ⟦2 [Hz]⟧`), 'LW306');
    expect(d.span).toEqual(spans[0]);
  });

  it('LW306 is not raised once the value is multiplied by 2*pi', () => {
    const run = runUnits(`controller C {\n  param w = 5 [Hz]\n  input e [1]\n  output u [1]\n  u / e = 1 / (1 + s/(2*pi*w))\n}\n`);
    expect(run.units).toEqual([]);
  });

  it('LW307 absolute degC added to an absolute temperature: the sum', () => {
    const { d, spans } = only(plant(`  state T [degC]\n  output y [degC] = ⟦T + 5 [degC]⟧\n  T' = 0 [K/s]`), 'LW307');
    expect(d.span).toEqual(spans[0]);
  });

  it('LW307 not raised for a difference in K', () => {
    const run = runUnits(plant(`  state T [degC]\n  output y [degC] = T + 5 [K]\n  T' = 0 [K/s]`));
    expect(run.units).toEqual([]);
  });

  it('LW308 bare number for a limit, with the fix inserting the unit', () => {
    const { d, spans } = only(plant(`  input u [N*m]\n  state x [1]\n  x' = u / 1 [N*m*s]\n  limit u within ⟦-4⟧ .. 4 [N*m]`), 'LW308');
    expect(d.span).toEqual(spans[0]);
    expect(d.fixes).toEqual([{ title: 'Add unit [N*m]', edits: [{ span: { start: spans[0].end, end: spans[0].end }, newText: ' [N*m]' }], preferred: true }]);
  });

  it('LW308 bare number read in SI where the declared unit is deg', () => {
    const { d, spans } = only(plant(`  state a [deg]\n  a' = 0 [deg/s]\n  operating point p { a = ⟦30⟧ }`), 'LW308');
    expect(d.span).toEqual(spans[0]);
    expect(d.fixes?.[0].edits[0]).toEqual({ span: { start: spans[0].end, end: spans[0].end }, newText: ' [deg]' });
  });

  it('LW308 bare 0 fits every unit', () => {
    const run = runUnits(plant(`  input u [N*m]\n  state x [m]\n  x' = 0\n  limit u within 0 .. 4 [N*m]`));
    expect(run.units).toEqual([]);
  });

  // A bare number is read in SI (LANGUAGE.md §3), so a bare 0 for a degC value is 0 K, absolute
  // zero: 0 degC = 273.15 K (SI Brochure, 9th ed., §2.3.4 [memory]).
  it('LW308 bare 0 for a degC value in an operating point: it would be 0 K', () => {
    const { d, spans } = only(plant(`  state T [degC]\n  input q [W]\n  T' = q / 1 [J/K]\n  operating point p { T = ⟦0⟧, q = 0 }`), 'LW308');
    expect(d.span).toEqual(spans[0]);
    expect(d.severity).toBe('warning');
    expect(d.message).toBe('a bare 0 is read in SI, as 0 K (absolute zero), but T at p is declared in degC: write [degC] if you mean 0 degC');
    expect(d.fixes).toEqual([{ title: 'Add unit [degC]', edits: [{ span: { start: spans[0].end, end: spans[0].end }, newText: ' [degC]' }], preferred: true }]);
  });

  it('LW308 bare 0 compared with, or chosen instead of, a degC value', () => {
    const cmp = only(plant(`  state T [degC]\n  input q [W]\n  output y [1] = if T > ⟦0⟧ then 1 else 0\n  T' = q / 1 [J/K]`), 'LW308');
    expect(cmp.d.span).toEqual(cmp.spans[0]);
    expect(cmp.d.message).toContain("'>' compares it with an absolute temperature");
    const branch = only(plant(`  state T [degC]\n  input q [W]\n  output y [degC] = if q > 0 then T else ⟦0⟧\n  T' = q / 1 [J/K]`), 'LW308');
    expect(branch.d.span).toEqual(branch.spans[0]);
    const clamp = only(plant(`  state T [degC]\n  input q [W]\n  output y [degC] = max(T, ⟦0⟧)\n  T' = q / 1 [J/K]`), 'LW308');
    expect(clamp.d.span).toEqual(clamp.spans[0]);
  });

  it('LW308 not raised for a bare 0 added to a degC value, or for kelvin', () => {
    // adding 0 changes nothing in any unit; 0 K is what a bare 0 means for a kelvin value
    expect(runUnits(plant(`  state T [degC]\n  input q [W]\n  output y [degC] = T - 0\n  T' = q / 1 [J/K]`)).units).toEqual([]);
    expect(runUnits(plant(`  state T [K]\n  input q [W]\n  T' = q / 1 [J/K]\n  operating point p { T = 0, q = 0 }`)).units).toEqual([]);
  });

  it('LW309 matrix of the wrong size: names the matrix, its size and the expected size', () => {
    const src = plant(`  state a [m]\n  state b [m/s]\n  input f [N]\n  output y [m]\n  linear { A = ⟦[[0, 1], [0, 0], [1, 1]]⟧, B = [[0], [1]], C = [[1, 0]], D = [[0]] }`);
    const { d, spans } = only(src, 'LW309');
    expect(d.span).toEqual(spans[0]);
    expect(d.message).toBe('A is 3×2; it must be 2×2 (2 states by 2 states: a, b)');
  });

  it('linear entries: a dimensioned entry must have its ratio; plain numbers are SI', () => {
    const src = plant(`  state a [m]\n  state b [m/s]\n  input f [N]\n  output y [m]\n  linear { A = [[0, 1], [0, -2 [1/s]]], B = [[0], [⟦3 [m]⟧]], C = [[1, 0]], D = [[0]] }`);
    const { d, spans } = only(src, 'LW302');
    expect(d.span).toEqual(spans[0]);
    expect(d.message).toBe('entry (2, 1) of B must be m/(s^2*N) (1/kg) (or a plain number in SI); this is m');
  });

  it('LW310 a comparison of different dimensions: the right side', () => {
    const src = `${plant(`  state x [m]\n  x' = 0 [m/s]\n  output y [m] = x`)}loop L {\n  simulate 1 [s]\n  expect settling(P.y, 2 [%]) < ⟦3 [m]⟧\n}\n`;
    const { d, spans } = only(src, 'LW310');
    expect(d.span).toEqual(spans[0]);
    expect(d.message).toBe('cannot compare s with m');
  });

  it('LW310 an if condition that is not a comparison', () => {
    const { d, spans } = only(plant(`  param x = 2 [m]\n  let y = if ⟦x⟧ then 1 [m] else 2 [m]`), 'LW310');
    expect(d.span).toEqual(spans[0]);
  });
});

describe('what the checker records', () => {
  it('SI values of quantities and declared units', () => {
    const run = runUnits(plant(`  param a = 6 [deg]\n  param b = 2 [kN]\n  state t [degC] = 20 [degC]\n  t' = 0 [K/s]`));
    expect(run.units).toEqual([]);
    const si = [...run.result.quantities.values()].map((q) => q.si);
    // 6 deg = 0.10472 rad (LANGUAGE.md §3); 20 degC = 293.15 K (SI Brochure, 9th ed., §2.3.4 [memory])
    expect(si[0]).toBeCloseTo(0.10471975511965977, 15);
    expect(si[1]).toBe(2000);
    expect(si[2]).toBeCloseTo(293.15, 12);
    expect([...run.result.declared.values()].map((u) => u.text)).toEqual(['degC']);
  });

  it('inferred units for hints, in the user units', () => {
    const run = runUnits(plant(`  param arm = 0.6 [m]\n  param load = 0.9 [kg]\n  let inertia = load * arm^2\n  param g = 9.8 [m/s^2]\n  let w = sqrt(g/arm)`));
    const texts = [...run.result.inferred.values()].map((v) => v.text);
    expect(texts).toEqual(['m', 'kg', 'kg*m^2', 'm/s^2', '1/s']);
    expect(formatDim([...run.result.inferred.values()][2].dim)).toBe('kg*m^2');
  });

  it('an unknown dimension produces no further errors', () => {
    const run = runUnits(plant(`  param a = 2 [Nm]\n  param b = 3 [s]\n  let c = a + b\n  let d = sin(c) + c^c`));
    expect(run.units.map((d) => d.code)).toEqual(['LW301']);
  });
});
