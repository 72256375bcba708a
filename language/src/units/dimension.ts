// Dimension algebra over the seven SI base dimensions.
//
// A dimension is the vector of exponents over [m, kg, s, A, K, mol, cd]. Exponents are plain
// numbers: products add them, powers scale them, and `sqrt` halves them, so a dimension may carry
// fractional exponents (m^(1/2)). Two dimensions are equal when every exponent agrees within
// DIM_TOLERANCE, which absorbs the rounding of repeated halving and doubling; exponents that are
// meant to be fractions are always dyadic or small-denominator rationals, far apart compared
// with the tolerance.
//
// Angles (rad, deg) and cycles are dimensionless here, as in SI. The unit registry keeps a
// separate "flavour" for them so the checker can warn about Hz taken for rad/s.

export type Dim = readonly number[];

/** Index of each base dimension in a Dim. */
export const BASE = { m: 0, kg: 1, s: 2, A: 3, K: 4, mol: 5, cd: 6 } as const;
export const BASE_COUNT = 7;

/** Base symbols in Dim order. */
const SYMBOLS = ['m', 'kg', 's', 'A', 'K', 'mol', 'cd'] as const;
/** The order in which formatDim writes them: mass first, as engineers write kg*m^2/s^2. */
const DISPLAY_ORDER = [1, 0, 2, 3, 4, 5, 6];

export const DIM_TOLERANCE = 1e-9;

function make(values: number[]): Dim {
  return Object.freeze(values.map((v) => (Math.abs(v) < DIM_TOLERANCE ? 0 : v)));
}

export const DIMLESS: Dim = make([0, 0, 0, 0, 0, 0, 0]);

/** A dimension from named exponents: dimOf({ m: 1, s: -2 }). */
export function dimOf(exps: Partial<Record<keyof typeof BASE, number>>): Dim {
  const v = [0, 0, 0, 0, 0, 0, 0];
  for (const [k, e] of Object.entries(exps)) v[BASE[k as keyof typeof BASE]] = e ?? 0;
  return make(v);
}

export const TIME: Dim = dimOf({ s: 1 });
export const PER_TIME: Dim = dimOf({ s: -1 });
export const TEMPERATURE: Dim = dimOf({ K: 1 });

export function dimMul(a: Dim, b: Dim): Dim {
  return make(a.map((x, i) => x + (b[i] ?? 0)));
}

export function dimDiv(a: Dim, b: Dim): Dim {
  return make(a.map((x, i) => x - (b[i] ?? 0)));
}

export function dimPow(a: Dim, k: number): Dim {
  return make(a.map((x) => x * k));
}

export function dimEq(a: Dim, b: Dim): boolean {
  for (let i = 0; i < BASE_COUNT; i++) if (Math.abs((a[i] ?? 0) - (b[i] ?? 0)) > DIM_TOLERANCE) return false;
  return true;
}

export function isDimless(a: Dim): boolean {
  return dimEq(a, DIMLESS);
}

/** An exponent as text: 2, -1, 1/2, 3/4 (small denominators), else a decimal. */
export function formatExponent(e: number): string {
  if (Math.abs(e - Math.round(e)) < DIM_TOLERANCE) return String(Math.round(e));
  for (let d = 2; d <= 12; d++) {
    const n = e * d;
    if (Math.abs(n - Math.round(n)) < DIM_TOLERANCE * d) return `${Math.round(n)}/${d}`;
  }
  return String(Number(e.toPrecision(6)));
}

function factor(symbol: string, e: number): string {
  if (Math.abs(e - 1) < DIM_TOLERANCE) return symbol;
  const t = formatExponent(e);
  return t.includes('/') || t.includes('.') ? `${symbol}^(${t})` : `${symbol}^${t}`;
}

/**
 * Joins factors into unit text: `num1*num2/den` or `num/(den1*den2)`; `1/s` when only
 * denominators; `1` when empty. The result reads back through parseUnit with the same meaning
 * (a quotient of several factors is parenthesized because `/` is left-associative).
 */
export function joinFactors(factors: ReadonlyArray<{ name: string; power: number }>): string {
  const num: string[] = [];
  const den: string[] = [];
  for (const f of factors) {
    if (Math.abs(f.power) < DIM_TOLERANCE) continue;
    if (f.power > 0) num.push(factor(f.name, f.power));
    else den.push(factor(f.name, -f.power));
  }
  const top = num.length ? num.join('*') : '1';
  if (!den.length) return top;
  return den.length === 1 ? `${top}/${den[0]}` : `${top}/(${den.join('*')})`;
}

/** SI base form: 'm^2/s^2', 'kg*m^2/s^2', '1/s', '1', 'kg/(m*s^2)'. */
export function formatDim(d: Dim): string {
  return joinFactors(DISPLAY_ORDER.map((i) => ({ name: SYMBOLS[i], power: d[i] ?? 0 })));
}
