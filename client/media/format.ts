// Number and unit text for tables, the readout and axis labels.

/** Four significant digits, exponent form for very large or small magnitudes; '—' for none. */
export function fmt(v: number | null | undefined, digits = 4): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '—';
  if (v === 0) return '0';
  const a = Math.abs(v);
  if (a >= 1e5 || a < 1e-3) return v.toExponential(digits - 1).replace(/\.?0+e/, 'e');
  const s = v.toPrecision(digits);
  return s.includes('.') ? s.replace(/\.?0+$/, '') : s;
}

/** `value unit`, or just the value for dimensionless quantities. */
export function withUnit(v: number | null | undefined, unit: string): string {
  const s = fmt(v);
  return unit && s !== '—' ? `${s} ${unit}` : s;
}

/** `name [unit]`, or just the name for dimensionless signals. */
export function labelWithUnit(name: string, unit: string): string {
  return unit ? `${name} [${unit}]` : name;
}
