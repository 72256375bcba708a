import { describe, expect, it } from 'vitest';
import { parseUnit, sameUnit, toSI, fromSI, type ParsedUnit } from '../../language/src/units/registry';
import { DIMLESS, dimDiv, dimEq, dimMul, dimOf, dimPow, formatDim, isDimless } from '../../language/src/units/dimension';

function unit(text: string): ParsedUnit {
  const r = parseUnit(text);
  if (!r.ok) throw new Error(`${text}: ${r.message}`);
  return r.unit;
}

function rel(a: number, b: number): number {
  return Math.abs(a - b) / Math.abs(b);
}

// NIST Special Publication 811 (2008), Appendix B: conversion factors.
describe('conversion factors (NIST SP 811, 2008, Appendix B)', () => {
  it('degree = pi/180 rad', () => {
    expect(rel(toSI(1, unit('deg')), Math.PI / 180)).toBeLessThan(1e-15);
    expect(unit('deg').flavour).toBe('angle');
    expect(isDimless(unit('deg').dim)).toBe(true);
  });
  it('revolution per minute = pi/30 rad/s', () => {
    expect(rel(toSI(1, unit('rpm')), Math.PI / 30)).toBeLessThan(1e-15);
    expect(dimEq(unit('rpm').dim, unit('rad/s').dim)).toBe(true);
  });
  it('pound-force = 4.4482216152605 N (exact)', () => {
    expect(rel(toSI(1, unit('lbf')), 4.4482216152605)).toBeLessThan(1e-15);
    expect(dimEq(unit('lbf').dim, unit('N').dim)).toBe(true);
  });
  it('psi = 6894.757293168361 Pa', () => {
    expect(rel(toSI(1, unit('psi')), 6894.757293168361)).toBeLessThan(1e-14);
    expect(dimEq(unit('psi').dim, unit('Pa').dim)).toBe(true);
  });
  it('bar = 1e5 Pa', () => {
    expect(rel(toSI(1, unit('bar')), 1e5)).toBeLessThan(1e-15);
  });
  it('inch = 0.0254 m', () => {
    expect(rel(toSI(1, unit('inch')), 0.0254)).toBeLessThan(1e-15);
  });
  it('horsepower (550 ft*lbf/s) = 745.69987158227022 W', () => {
    expect(rel(toSI(1, unit('hp')), 745.69987158227022)).toBeLessThan(1e-14);
    expect(sameUnit(unit('hp'), unit('W'))).toBe(false);
    expect(dimEq(unit('hp').dim, unit('W').dim)).toBe(true);
  });
  // SI prefixes and temperature offsets: SI Brochure, 9th ed. (2019), Table 7 and §2.3.4 [memory].
  it('SI prefixes', () => {
    expect(toSI(1, unit('ms'))).toBeCloseTo(1e-3, 15);
    expect(toSI(1, unit('kN'))).toBe(1000);
    expect(toSI(1, unit('mH'))).toBeCloseTo(1e-3, 15);
    expect(toSI(1, unit('kW'))).toBe(1000);
    expect(toSI(1, unit('mm'))).toBeCloseTo(1e-3, 15);
    expect(toSI(1, unit('kJ'))).toBe(1000);
    expect(toSI(1, unit('us'))).toBeCloseTo(1e-6, 18);
    expect(toSI(1, unit('µs'))).toBeCloseTo(1e-6, 18);
  });
  it('degC is kelvin with an offset of 273.15', () => {
    const c = unit('degC');
    expect(toSI(0, c)).toBeCloseTo(273.15, 12);
    expect(toSI(100, c)).toBeCloseTo(373.15, 12);
    expect(fromSI(273.15, c)).toBeCloseTo(0, 12);
    expect(c.flavour).toBe('absoluteTemperature');
    // a rate of temperature change has no offset
    expect(unit('degC/s').offset).toBe(0);
  });
  it('engineering units', () => {
    expect(toSI(1, unit('%'))).toBe(0.01);
    expect(toSI(1, unit('1'))).toBe(1);
    expect(toSI(1, unit('L'))).toBeCloseTo(1e-3, 15);
    expect(toSI(1, unit('min'))).toBe(60);
    expect(toSI(1, unit('h'))).toBe(3600);
    expect(dimEq(unit('ohm').dim, unit('V/A').dim)).toBe(true);
  });
});

describe('unit syntax', () => {
  it('products, quotients, powers and parentheses', () => {
    expect(formatDim(unit('N*m*s/rad').dim)).toBe('kg*m^2/s');
    expect(formatDim(unit('V/(rad/s)').dim)).toBe('kg*m^2/(s^2*A)');
    expect(formatDim(unit('1/s').dim)).toBe('1/s');
    expect(formatDim(unit('s^-1').dim)).toBe('1/s');
    expect(formatDim(unit('s^(-1)').dim)).toBe('1/s');
    expect(formatDim(unit('m/s^2').dim)).toBe('m/s^2');
    expect(formatDim(unit('1').dim)).toBe('1');
  });
  it('quotients are left-associative: a/b*c is (a/b)*c', () => {
    expect(formatDim(unit('m/s*s').dim)).toBe('m');
    expect(formatDim(unit('m/(s*s)').dim)).toBe('m/s^2');
  });
  it('sameUnit compares scale and dimension', () => {
    expect(sameUnit(unit('N*m'), unit('kg*m^2/s^2'))).toBe(true);
    expect(sameUnit(unit('N*m'), unit('J'))).toBe(true);
    expect(sameUnit(unit('kN*m'), unit('J'))).toBe(false);
    expect(sameUnit(unit('degC'), unit('K'))).toBe(false);
  });
  it('flavours', () => {
    expect(unit('Hz').flavour).toBe('cycle');
    expect(unit('kHz').flavour).toBe('cycle');
    expect(unit('rad/s').flavour).toBe('angle');
    expect(unit('N*m').flavour).toBe(null);
  });
  it('formatDim reads back through parseUnit', () => {
    for (const t of ['kg*m^2/s^2', 'kg/(m*s^2)', '1/s', 'm', 'kg*m^2/(s^3*A^2)']) {
      expect(formatDim(unit(formatDim(unit(t).dim)).dim)).toBe(formatDim(unit(t).dim));
    }
  });
});

describe('unit errors name the bad part', () => {
  const cases: Array<[string, string, number, number]> = [
    ['N*Nm', "unknown unit 'Nm' (did you mean 'N*m'?)", 2, 4],
    ['Nms', "unknown unit 'Nms' (did you mean 'N*m*s'?)", 0, 3],
    ['hz', "unknown unit 'hz' (names are case-sensitive: did you mean 'Hz'?)", 0, 2],
    ['mm2', "unknown unit 'mm2' (powers are written with ^: did you mean 'mm^2'?)", 0, 3],
    ['m/', "expected a unit after '/'", 1, 2],
    ['(m/s', "'(' is not closed", 0, 1],
    ['m)', "unexpected ')': no '(' to close", 1, 2],
    ['N m', "expected '*' or '/' between 'N' and 'm'", 0, 3],
    ['m^0.5', "powers must be whole numbers, not '0.5'", 2, 5],
    ['2*m', "only 1 may stand as a number in a unit, not '2'", 0, 1],
    ['kdegC', "'kdegC': degC takes no prefix", 0, 5],
    ['', 'empty unit', 0, 0],
    ['°C', "write 'degC' for degrees Celsius", 0, 2],
  ];
  for (const [text, message, start, end] of cases) {
    it(JSON.stringify(text), () => {
      expect(parseUnit(text)).toEqual({ ok: false, message, start, end });
    });
  }
});

describe('dimension algebra', () => {
  it('multiplies, divides and raises', () => {
    const v = dimOf({ m: 1, s: -1 });
    expect(formatDim(dimMul(v, v))).toBe('m^2/s^2');
    expect(formatDim(dimDiv(DIMLESS, dimOf({ s: 1 })))).toBe('1/s');
    expect(formatDim(dimPow(dimOf({ m: 2 }), 0.5))).toBe('m');
    expect(formatDim(dimPow(dimOf({ m: 1 }), 0.5))).toBe('m^(1/2)');
    expect(dimEq(dimPow(dimPow(dimOf({ m: 3 }), 1 / 3), 3), dimOf({ m: 3 }))).toBe(true);
    expect(formatDim(dimOf({ kg: 1, m: 2, s: -2 }))).toBe('kg*m^2/s^2');
    expect(formatDim(DIMLESS)).toBe('1');
  });
});
