// Units as the model compiler needs them: SI values of literals and the display conversion of
// declared units. Literals take their SI value from the unit checker's results when present and
// otherwise from the unit registry directly (the same parser, so the two always agree).

import type { QuantityExpr, UnitText } from '../syntax/ast';
import { parseUnit, toSI, type ParsedUnit } from '../units/registry';

/** SI = display * scale + offset (offset already in SI). */
export interface DisplayUnit {
  text: string;
  scale: number;
  offset: number;
  parsed?: ParsedUnit;
}

export const NO_UNIT: DisplayUnit = { text: '', scale: 1, offset: 0 };

const cache = new Map<string, DisplayUnit>();
const parsedCache = new Map<string, ReturnType<typeof parseUnit>>();

/** parseUnit, memoised (unit texts repeat across runs and sweeps). */
export function parseUnitCached(text: string): ReturnType<typeof parseUnit> {
  let r = parsedCache.get(text);
  if (!r) {
    r = parseUnit(text);
    if (parsedCache.size > 10000) parsedCache.clear();
    parsedCache.set(text, r);
  }
  return r;
}

export function displayUnit(u: UnitText | string | undefined): DisplayUnit {
  const text = typeof u === 'string' ? u : u?.text;
  if (text === undefined || text.trim() === '' || text.trim() === '1') return NO_UNIT;
  const hit = cache.get(text);
  if (hit) return hit;
  const r = parseUnitCached(text);
  const d: DisplayUnit = r.ok ? { text, scale: r.unit.scale, offset: r.unit.offset * r.unit.scale, parsed: r.unit } : { text, scale: 1, offset: 0 };
  cache.set(text, d);
  return d;
}

export function toDisplay(si: number, u: DisplayUnit): number {
  return (si - u.offset) / u.scale;
}

/** The unit checker's inferred units of declarations (signals, params, lets), when present. */
export interface InferredUnits {
  get(decl: object): { text: string } | undefined;
}

/**
 * The unit a loop signal is shown in: the one the unit checker inferred for its expression
 * (`step(1 [s], 5 [deg])` is in deg, `ramp(0 [s], 2 [rpm/s])` in rpm). Without the checker's
 * results the signal is shown in SI with no unit name.
 */
export function signalUnitText(decl: object, inferred?: InferredUnits): string {
  return inferred?.get(decl)?.text ?? '';
}

/** Unit-checker results the compiler can use when present. */
export interface QuantityTable {
  get(q: QuantityExpr): { si: number } | undefined;
}

export function quantitySI(q: QuantityExpr, table?: QuantityTable): number {
  const hit = table?.get(q);
  if (hit && Number.isFinite(hit.si)) return hit.si;
  const r = parseUnitCached(q.unit.text);
  return r.ok ? toSI(q.value, r.unit) : NaN;
}

/** Net exponent of cycle-counting units (Hz) in a literal's unit: 1 for `2 [Hz]`. */
export function cyclesOf(q: QuantityExpr): number {
  const r = parseUnitCached(q.unit.text);
  return r.ok ? r.unit.cycle : 0;
}

/** Is a literal's unit a pure number (`%`, `1`, or none), as opposed to one with a dimension or an angle? */
export function isPureNumberUnit(text: string): boolean {
  const r = parseUnitCached(text);
  if (!r.ok) return false;
  return r.unit.dim.every((d) => d === 0) && r.unit.angle === 0 && r.unit.cycle === 0;
}
