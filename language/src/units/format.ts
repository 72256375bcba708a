// Unit text for messages and hints, in the user's own units where they are known.
//
// The checker carries, beside each dimension, the factors of the units the user wrote
// (`N*m/rad` times `s` gives N, m, s, rad^-1). They cancel and combine by name only; no
// conversion happens here. `describe` shows them next to the SI base form when the two differ.

import { type Dim, DIM_TOLERANCE, dimEq, formatDim, isDimless, joinFactors } from './dimension';
import { parseUnit, siUnit, type ParsedUnit, type UnitFactor } from './registry';

export type Factors = readonly UnitFactor[];

export function mulFactors(a: Factors, b: Factors, sign: 1 | -1 = 1): UnitFactor[] {
  const out = a.map((f) => ({ ...f }));
  for (const f of b) {
    const same = out.find((g) => g.name === f.name);
    if (same) same.power += sign * f.power;
    else out.push({ name: f.name, power: sign * f.power });
  }
  return out.filter((f) => Math.abs(f.power) > DIM_TOLERANCE);
}

export function powFactors(a: Factors, k: number): UnitFactor[] {
  if (k === 0) return [];
  return a.map((f) => ({ name: f.name, power: f.power * k }));
}

/** True when every power is a whole number (the text then reads back as a unit). */
function integral(a: Factors): boolean {
  return a.every((f) => Math.abs(f.power - Math.round(f.power)) < DIM_TOLERANCE);
}

/** The user's unit text for factors, or the SI base form when the factors do not fit the dimension. */
export function factorsText(a: Factors, dim: Dim): string {
  if (a.length === 0) return isDimless(dim) ? '1' : formatDim(dim);
  return joinFactors(a);
}

/** `N*m/kg (m^2/s^2)`, `m/s^2`, `rad (1)`, `dimensionless`. */
export function describe(a: Factors, dim: Dim): string {
  const user = factorsText(a, dim);
  const si = formatDim(dim);
  if (user === si) return si === '1' ? 'dimensionless' : si;
  return `${user} (${si})`;
}

/**
 * A unit for a hint, in the user's own units: the factors as written (`kg*m^2`, `kN*mm`, `rpm`)
 * when they read back as a unit of the same dimension, else the SI base form.
 */
export function hintUnit(a: Factors, dim: Dim): ParsedUnit {
  if (a.length && integral(a)) {
    const r = parseUnit(joinFactors(a));
    if (r.ok && dimEq(r.unit.dim, dim)) return r.unit;
  }
  return siUnit(dim);
}
