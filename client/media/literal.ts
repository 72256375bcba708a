// Number literals of knob edits and the slider's value mapping. Pure functions: the knob panel
// (knobs.ts) and the tests use them.
//
// A knob's slider is logarithmic around the value it was anchored at: DECADES each way
// (anchor/10 .. anchor·10 by default), SLIDER_STEPS positions in all, the anchor in the middle.
// Negative anchors mirror (−10·|a| .. −|a|/10, left to right); a zero anchor gets a linear range
// of ±1 in the param's unit.

export const SLIDER_STEPS = 240;
export const DECADES = 1;

const NUMBER = /^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?$/;

/** The number a user typed, or null when it is not a plain decimal literal. */
export function parseNumberText(text: string): number | null {
  const t = text.trim();
  if (!NUMBER.test(t)) return null;
  const v = Number(t);
  return Number.isFinite(v) ? v : null;
}

export interface LiteralStyle {
  /** Significant digits as written (`14` → 2, `0.020` → 2, `9.80665` → 6). */
  sig: number;
  /** Digits after the point as written. */
  decimals: number;
  /** Exponent letter when the literal was written with one. */
  exponent: 'e' | 'E' | null;
  /** The exponent was written with an explicit '+'. */
  plus: boolean;
}

export function literalStyle(text: string): LiteralStyle {
  const m = /^[+-]?(\d*)(?:\.(\d*))?(?:([eE])([+-]?)\d+)?$/.exec(text.trim());
  if (!m) return { sig: 0, decimals: 0, exponent: null, plus: false };
  const digits = `${m[1]}${m[2] ?? ''}`.replace(/^0+/, '');
  return { sig: digits.length, decimals: (m[2] ?? '').length, exponent: (m[3] as 'e' | 'E' | undefined) ?? null, plus: m[4] === '+' };
}

function noNegativeZero(s: string): string {
  return /^-0(?:\.0*)?(?:[eE].*)?$/.test(s) ? s.slice(1) : s;
}

/**
 * `value` written in the style of `like`: as many significant digits as `like` has, at least 3
 * (`14` → `15.2`, `2.2` → `2.45`, `0.02` → `0.0215`), in exponent form when `like` used one. With
 * `linear` (the slider of a zero value) the count that is kept is the decimals, at least 3.
 */
export function formatLike(like: string, value: number, linear = false): string {
  if (!Number.isFinite(value)) throw new Error(`cannot write ${value} as a literal`);
  const st = literalStyle(like);
  const sig = Math.min(17, Math.max(3, st.sig));
  if (st.exponent) {
    const s = value.toExponential(sig - 1).replace('e', st.exponent);
    return noNegativeZero(st.plus ? s : s.replace(/([eE])\+/, '$1'));
  }
  if (linear) return noNegativeZero(value.toFixed(Math.min(20, Math.max(3, st.decimals))));
  if (value === 0) return '0';
  const rounded = Number(value.toPrecision(sig));
  const mag = Math.floor(Math.log10(Math.abs(rounded)));
  return noNegativeZero(rounded.toFixed(Math.min(20, Math.max(0, sig - 1 - mag))));
}

/** Slider position (0..steps) → value, for a slider anchored at `anchor`. */
export function positionToValue(anchor: number, position: number, steps = SLIDER_STEPS, decades = DECADES): number {
  const u = (2 * position) / steps - 1;
  if (anchor === 0) return u;
  const a = Math.abs(anchor);
  return anchor > 0 ? a * 10 ** (decades * u) : -a * 10 ** (-decades * u);
}

/** Value → nearest slider position, clamped to the slider's ends. */
export function valueToPosition(anchor: number, value: number, steps = SLIDER_STEPS, decades = DECADES): number {
  let u: number;
  if (anchor === 0) u = value;
  else if (value === 0 || Math.sign(value) !== Math.sign(anchor)) u = anchor > 0 ? -1 : 1;
  else u = (anchor > 0 ? 1 : -1) * Math.log10(Math.abs(value) / Math.abs(anchor)) / decades;
  const p = Math.round(((Math.max(-1, Math.min(1, u)) + 1) * steps) / 2);
  return Math.max(0, Math.min(steps, p));
}

/** The slider's ends, left and right. */
export function knobRange(anchor: number, decades = DECADES): { lo: number; hi: number } {
  return { lo: positionToValue(anchor, 0, 2, decades), hi: positionToValue(anchor, 2, 2, decades) };
}

/**
 * The text after the number in the document, rebuilt from the unit: the knob's span covers number
 * and unit, so its length tells which of the spellings the document uses. Null when none fits.
 */
export function unitSuffix(unit: string, numberLength: number, spanLength: number): string | null {
  const rest = spanLength - numberLength;
  if (unit === '') return rest === 0 ? '' : null;
  for (const s of [` [${unit}]`, `[${unit}]`, `  [${unit}]`, `\t[${unit}]`]) if (s.length === rest) return s;
  return null;
}
