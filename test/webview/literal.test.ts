// Knob literals and the slider mapping (client/media/literal.ts), and the report checks of the
// tuning fields (validate.ts).
import { describe, expect, test } from 'vitest';
import { formatLike, knobRange, literalStyle, parseNumberText, positionToValue, SLIDER_STEPS, unitSuffix, valueToPosition } from '../../client/media/literal';
import { validateReport } from '../../client/media/validate';
import { parseState } from '../../client/media/messages';
import { tunedReport } from './tuning-fixtures';

describe('knob literals', () => {
  test('keep the significant digits as typed, at least three', () => {
    expect(formatLike('14', 15.21)).toBe('15.2');
    expect(formatLike('2.2', 2.4521)).toBe('2.45');
    expect(formatLike('0.02', 0.021467)).toBe('0.0215');
    expect(formatLike('9.80665', 9.912345)).toBe('9.91235');
    expect(formatLike('0.020', 0.0312)).toBe('0.0312');
    expect(formatLike('14', 139.96)).toBe('140');
    expect(formatLike('14', 1.4004)).toBe('1.40');
    expect(formatLike('2.2', 9.9996)).toBe('10.0');
    expect(formatLike('12345', 23456.7)).toBe('23457');
    expect(formatLike('-0.35', -0.41234)).toBe('-0.412');
  });

  test('exponent form stays exponent form; zero values count decimals', () => {
    expect(formatLike('2e-3', 0.0021544)).toBe('2.15e-3');
    expect(formatLike('1.5E+6', 2345678)).toBe('2.35E+6');
    expect(formatLike('0', 0.34567, true)).toBe('0.346');
    expect(formatLike('0.0000', 0.34567, true)).toBe('0.3457');
    expect(formatLike('0', -0.0001, true)).toBe('0.000');
    expect(literalStyle('0.020')).toEqual({ sig: 2, decimals: 3, exponent: null, plus: false });
  });

  test('typed numbers: plain decimal literals only', () => {
    expect(parseNumberText(' 16.5 ')).toBe(16.5);
    expect(parseNumberText('-.5e2')).toBe(-50);
    for (const bad of ['', 'abc', '1,5', '0x10', '1e', '15 [N*m/rad]', 'Infinity', '1e999']) expect(parseNumberText(bad), bad).toBeNull();
  });

  test('the slider is a decade each way, logarithmic; negative mirrors; zero is linear ±1', () => {
    const mid = SLIDER_STEPS / 2;
    expect(positionToValue(14, mid)).toBeCloseTo(14, 12);
    expect(positionToValue(14, 0)).toBeCloseTo(1.4, 12);
    expect(positionToValue(14, SLIDER_STEPS)).toBeCloseTo(140, 12);
    // Equal steps are equal ratios.
    const r1 = positionToValue(14, mid + 10) / positionToValue(14, mid);
    const r2 = positionToValue(14, mid + 20) / positionToValue(14, mid + 10);
    expect(r1).toBeCloseTo(r2, 12);
    expect(r1).toBeCloseTo(10 ** (20 / SLIDER_STEPS), 12);
    expect(knobRange(-0.35)).toEqual({ lo: -3.5, hi: expect.closeTo(-0.035, 12) });
    expect(positionToValue(-0.35, mid + 24)).toBeCloseTo(-0.35 / 10 ** 0.2, 12);
    expect(knobRange(0)).toEqual({ lo: -1, hi: 1 });
    expect(positionToValue(0, mid + 60)).toBeCloseTo(0.5, 12);
    for (const a of [14, -0.35, 0, 2e-3]) {
      for (const p of [0, 7, mid, 200, SLIDER_STEPS]) expect(valueToPosition(a, positionToValue(a, p))).toBe(p);
    }
    expect(valueToPosition(14, 1e6)).toBe(SLIDER_STEPS);
    expect(valueToPosition(14, -3)).toBe(0);
  });

  test('the unit as written is rebuilt from the span length, or not at all', () => {
    expect(unitSuffix('N*m/rad', 2, '14 [N*m/rad]'.length)).toBe(' [N*m/rad]');
    expect(unitSuffix('N*m/rad', 2, '14[N*m/rad]'.length)).toBe('[N*m/rad]');
    expect(unitSuffix('', 1, 1)).toBe('');
    expect(unitSuffix('N*m/rad', 2, '14 [ N*m/rad ]'.length)).toBeNull();
  });
});

describe('tuning fields of a report', () => {
  test('poles and params are checked field by field', () => {
    expect(validateReport(tunedReport()).ok).toBe(true);
    const bad = (edit: (r: any) => void) => {
      const r = tunedReport() as any;
      edit(r);
      const v = validateReport(r);
      return v.ok ? 'ok' : v.error;
    };
    expect(bad((r) => (r.poles.closed[1].im = 'x'))).toBe('poles.closed[1].im must be a finite number, got string "x"');
    expect(bad((r) => delete r.poles.open)).toBe('poles.open must be an array, got nothing');
    expect(bad((r) => (r.poles.open[0].timeConstant = null))).toBe('ok');
    expect(bad((r) => (r.params[2].owner = 'sensor'))).toBe("params[2].owner must be one of 'plant', 'controller', 'loop', got string \"sensor\"");
    expect(bad((r) => (r.params[0].span = { start: 5, end: 2 }))).toBe('params[0].span must be whole offsets with 0 <= start <= end');
    expect(bad((r) => (r.params[0].span.end = r.params[0].span.start + 1))).toBe('params[0].span is shorter than its text "0.6"');
  });

  test('a saved pin is restored only when it is well formed', () => {
    const report = tunedReport({ n: 5 });
    const pinned = { loop: 'x', runs: [{ label: 'nonlinear', kind: 'nonlinear', t: [0, 1], signals: { a: [1, null] } }] };
    expect(parseState({ report, zoom: null, hidden: { signals: [], runs: [] }, pinned, showPlant: true })).toEqual({ report, zoom: null, hidden: { signals: [], runs: [] }, pinned, showPlant: true });
    const broken = { ...pinned, runs: [{ ...pinned.runs[0], signals: { a: [1] } }] };
    expect(parseState({ report, zoom: null, hidden: {}, pinned: broken })?.pinned).toBeUndefined();
  });
});
