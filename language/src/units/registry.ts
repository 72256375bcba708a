// Unit text → scale, offset and dimension.
//
// The bracket syntax is parsed here, not by the library: names, `*`, `/` (left-associative, so
// `a/b*c` is (a/b)*c), integer powers `^2` `^-1` `^(-1)`, parentheses, the number `1` and `%`.
// Only single names (with their SI prefix) are looked up: first in the small table below, then
// in mathjs' unit catalogue, which is created with just the Unit class and its dependencies to keep the
// bundle small. Names are case-sensitive. Errors carry offsets relative to the unit text so the
// checker can underline exactly the bad part.

import { create, UnitDependencies } from 'mathjs';
import { DIMLESS, DIM_TOLERANCE, type Dim, dimEq, formatDim } from './dimension';

export type UnitFlavour = 'angle' | 'cycle' | 'absoluteTemperature' | null;

/** One factor of a unit as written (prefix included): `mm^2` is { name: 'mm', power: 2 }. */
export interface UnitFactor {
  name: string;
  power: number;
}

export interface ParsedUnit {
  text: string;
  /** SI value of one unit: value_SI = (value + offset) * scale. */
  scale: number;
  offset: number;
  dim: Dim;
  /**
   * 'angle' when the unit carries rad/deg (dimensionless in SI), 'cycle' for Hz-like units
   * (1/s counted in cycles) — for the Hz-vs-angular-frequency warning; 'absoluteTemperature'
   * for a lone offset unit (degC, degF); null otherwise.
   */
  flavour: UnitFlavour;
  /** Net exponent of angle units (rad, deg, rpm...): 1 for rad/s, -1 for N*m*s/rad. */
  angle: number;
  /** Net exponent of cycle-counting units (Hz). */
  cycle: number;
  /** The factors as written, like powers combined, in order of first appearance. */
  factors: UnitFactor[];
}

export type UnitParse = { ok: true; unit: ParsedUnit } | { ok: false; message: string; start: number; end: number };

// ---------- the library catalogue ----------

const math = create({ UnitDependencies });
const LibUnit = math.Unit;

/** mathjs dimension order: MASS, LENGTH, TIME, CURRENT, TEMPERATURE, LUMINOUS_INTENSITY, AMOUNT_OF_SUBSTANCE, ANGLE, BIT. */
function fromLibDims(d: number[]): { dim: number[]; angle: number; bit: number } {
  return { dim: [d[1], d[0], d[2], d[3], d[4], d[6], d[5]], angle: d[7] ?? 0, bit: d[8] ?? 0 };
}

interface NamedUnit {
  scale: number;
  offset: number;
  dim: number[];
  angle: number;
  cycle: number;
}

// Exact definitions (NIST SP 811, 2008, Appendix B): the pound-force is 4.4482216152605 N, the
// foot 0.3048 m, the inch 0.0254 m. mathjs rounds psi and hp slightly differently; these are
// built from the exact definitions instead.
const LBF = 4.4482216152605;
const FOOT = 0.3048;
const INCH = 0.0254;

const OWN: Record<string, NamedUnit> = {
  '%': { scale: 0.01, offset: 0, dim: [0, 0, 0, 0, 0, 0, 0], angle: 0, cycle: 0 },
  rpm: { scale: Math.PI / 30, offset: 0, dim: [0, 0, -1, 0, 0, 0, 0], angle: 1, cycle: 0 },
  rev: { scale: 2 * Math.PI, offset: 0, dim: [0, 0, 0, 0, 0, 0, 0], angle: 1, cycle: 0 },
  psi: { scale: LBF / (INCH * INCH), offset: 0, dim: [-1, 1, -2, 0, 0, 0, 0], angle: 0, cycle: 0 },
  hp: { scale: 550 * FOOT * LBF, offset: 0, dim: [2, 1, -3, 0, 0, 0, 0], angle: 0, cycle: 0 },
};

const ALIASES: Record<string, string> = { Ω: 'ohm', kΩ: 'kohm', MΩ: 'Mohm', mΩ: 'mohm' };

const cache = new Map<string, NamedUnit | string>();

/** Looks up one name (with prefix). Returns the unit, or an error message. */
function lookupName(name: string): NamedUnit | string {
  const hit = cache.get(name);
  if (hit !== undefined) return hit;
  const r = lookupUncached(name);
  cache.set(name, r);
  return r;
}

function lookupUncached(written: string): NamedUnit | string {
  let name = ALIASES[written] ?? written;
  if (OWN[name]) return OWN[name];
  // The micro sign (either code point) stands for the library's 'u' prefix.
  if (/^[µμ]./u.test(name)) name = 'u' + name.slice(1);
  if (/\d/.test(name)) {
    const m = /^(\D+)(\d+)$/.exec(name);
    return m ? `unknown unit '${written}' (powers are written with ^: did you mean '${m[1]}^${m[2]}'?)` : `unknown unit '${written}'`;
  }
  let parsed;
  try {
    if (!LibUnit.isValuelessUnit(name)) return unknownMessage(written);
    parsed = LibUnit.parse(name);
  } catch {
    return unknownMessage(written);
  }
  const units = parsed.units as unknown as Array<{ prefix: { name: string; value: unknown }; unit: { name: string; value: unknown; offset: unknown }; power: number }>;
  if (units.length !== 1 || units[0].power !== 1) return unknownMessage(written);
  const u = units[0];
  const offset = Number(u.unit.offset ?? 0);
  if (offset !== 0 && u.prefix.name !== '') return `'${written}': ${u.unit.name} takes no prefix`;
  const { dim, angle, bit } = fromLibDims(parsed.dimensions as number[]);
  if (bit !== 0) return `'${written}' measures information, which has no physical dimension`;
  const scale = Number(u.prefix.value) * Number(u.unit.value);
  if (!Number.isFinite(scale) || scale <= 0) return unknownMessage(written);
  return { scale, offset, dim, angle, cycle: u.unit.name === 'Hz' ? 1 : 0 };
}

// ---------- suggestions ----------

/** Names engineers write most; suggestions are drawn from these. */
const COMMON = [
  'm', 'mm', 'cm', 'km', 'um', 'kg', 'g', 's', 'ms', 'us', 'ns', 'min', 'h',
  'N', 'kN', 'J', 'kJ', 'W', 'kW', 'MW', 'V', 'mV', 'kV', 'A', 'mA', 'ohm', 'kohm', 'H', 'mH', 'F', 'uF',
  'C', 'T', 'Wb', 'S', 'Pa', 'kPa', 'MPa', 'bar', 'mbar', 'psi', 'K', 'degC', 'degF', 'mol', 'cd',
  'rad', 'deg', 'rpm', 'rev', 'Hz', 'kHz', 'L', 'mL', 'lbf', 'hp', 'inch', 'ft', '%',
];
/** Unprefixed pieces for splitting run-together names like 'Nm' or 'Nms'. */
const ATOMS = ['N', 'm', 's', 'kg', 'g', 'A', 'V', 'W', 'J', 'rad', 'K', 'Pa', 'Hz', 'ohm', 'H', 'F', 'C', 'mol', 'L', 'h', 'min', 'deg', 'T', 'Wb'];

function splitInto(name: string, pieces: readonly string[], depth: number): string[] | undefined {
  if (name === '') return [];
  if (depth === 0) return undefined;
  for (const p of [...pieces].sort((a, b) => b.length - a.length)) {
    if (!name.startsWith(p)) continue;
    const rest = splitInto(name.slice(p.length), pieces, depth - 1);
    if (rest) return [p, ...rest];
  }
  return undefined;
}

function suggest(name: string): string | undefined {
  const folded = COMMON.filter((c) => c.toLowerCase() === name.toLowerCase());
  if (folded.length === 1) return folded[0];
  const aliases: Record<string, string> = { sec: 's', secs: 's', hr: 'h', hrs: 'h', Ohm: 'ohm', ohms: 'ohm', celsius: 'degC', degree: 'deg', degrees: 'deg', radian: 'rad', radians: 'rad', percent: '%', pct: '%' };
  if (aliases[name]) return aliases[name];
  const parts = splitInto(name, ATOMS, 4) ?? splitInto(name, COMMON, 3);
  if (parts && parts.length > 1) return parts.join('*');
  return undefined;
}

function unknownMessage(name: string): string {
  const s = suggest(name);
  if (!s) return `unknown unit '${name}'`;
  if (s.toLowerCase() === name.toLowerCase()) return `unknown unit '${name}' (names are case-sensitive: did you mean '${s}'?)`;
  return `unknown unit '${name}' (did you mean '${s}'?)`;
}

// ---------- the bracket syntax ----------

type Tok =
  | { k: 'name'; text: string; start: number; end: number }
  | { k: 'num'; text: string; start: number; end: number }
  | { k: 'op'; text: '*' | '/' | '^' | '(' | ')' | '-' | '+'; start: number; end: number }
  | { k: 'end'; text: ''; start: number; end: number };

class UnitError {
  constructor(
    readonly message: string,
    readonly start: number,
    readonly end: number,
  ) {}
}

function tokenize(text: string): Tok[] {
  const out: Tok[] = [];
  let i = 0;
  while (i < text.length) {
    const c = text[i];
    if (c === ' ' || c === '\t') {
      i++;
      continue;
    }
    if (c === '*' || c === '·' || c === '/' || c === '^' || c === '(' || c === ')' || c === '-' || c === '+') {
      out.push({ k: 'op', text: c === '·' ? '*' : c, start: i, end: i + 1 });
      i++;
      continue;
    }
    if (c === '%') {
      out.push({ k: 'name', text: '%', start: i, end: i + 1 });
      i++;
      continue;
    }
    const num = /^(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?/.exec(text.slice(i));
    if (num) {
      out.push({ k: 'num', text: num[0], start: i, end: i + num[0].length });
      i += num[0].length;
      continue;
    }
    const name = /^[\p{L}_][\p{L}\p{N}_]*/u.exec(text.slice(i));
    if (name) {
      out.push({ k: 'name', text: name[0], start: i, end: i + name[0].length });
      i += name[0].length;
      continue;
    }
    const cp = String.fromCodePoint(text.codePointAt(i)!);
    if (cp === '°') {
      const celsius = text[i + 1] === 'C';
      throw new UnitError(celsius ? "write 'degC' for degrees Celsius" : "write 'deg' for degrees", i, i + (celsius ? 2 : 1));
    }
    throw new UnitError(`unexpected '${cp}' in a unit`, i, i + cp.length);
  }
  out.push({ k: 'end', text: '', start: text.length, end: text.length });
  return out;
}

interface Acc {
  scale: number;
  dim: number[];
  angle: number;
  cycle: number;
  factors: UnitFactor[];
  /** The lone offset unit, when the whole thing is one (degC, degF). */
  offset?: number;
}

function accOne(): Acc {
  return { scale: 1, dim: [0, 0, 0, 0, 0, 0, 0], angle: 0, cycle: 0, factors: [] };
}

function combine(a: Acc, b: Acc, sign: 1 | -1): Acc {
  const factors = a.factors.map((f) => ({ ...f }));
  for (const f of b.factors) {
    const same = factors.find((g) => g.name === f.name);
    if (same) same.power += sign * f.power;
    else factors.push({ name: f.name, power: sign * f.power });
  }
  return {
    scale: sign === 1 ? a.scale * b.scale : a.scale / b.scale,
    dim: a.dim.map((x, i) => x + sign * b.dim[i]),
    angle: a.angle + sign * b.angle,
    cycle: a.cycle + sign * b.cycle,
    factors: factors.filter((f) => Math.abs(f.power) > DIM_TOLERANCE),
  };
}

function power(a: Acc, k: number): Acc {
  return {
    scale: a.scale ** k,
    dim: a.dim.map((x) => x * k),
    angle: a.angle * k,
    cycle: a.cycle * k,
    factors: k === 0 ? [] : a.factors.map((f) => ({ name: f.name, power: f.power * k })),
    offset: k === 1 ? a.offset : undefined,
  };
}

class Parser {
  private i = 0;
  constructor(private readonly toks: Tok[]) {}

  private get tok(): Tok {
    return this.toks[this.i];
  }

  parseAll(): Acc {
    const r = this.product();
    const t = this.tok;
    if (t.k === 'end') return r;
    if (t.k === 'op' && t.text === ')') throw new UnitError("unexpected ')': no '(' to close", t.start, t.end);
    const prev = this.toks[this.i - 1];
    throw new UnitError(`expected '*' or '/' between '${prev.text}' and '${t.text}'`, prev.start, t.end);
  }

  private product(): Acc {
    let acc = this.power();
    for (;;) {
      const t = this.tok;
      if (t.k === 'op' && (t.text === '*' || t.text === '/')) {
        this.i++;
        const rhs = this.power(t.text);
        acc = combine(acc, rhs, t.text === '*' ? 1 : -1);
        acc.offset = undefined;
        continue;
      }
      return acc;
    }
  }

  private power(after?: string): Acc {
    const base = this.atom(after);
    const t = this.tok;
    if (!(t.k === 'op' && t.text === '^')) return base;
    this.i++;
    const k = this.exponent(t);
    return power(base, k);
  }

  private exponent(caret: Tok): number {
    let paren = false;
    if (this.tok.k === 'op' && this.tok.text === '(') {
      paren = true;
      this.i++;
    }
    let sign = 1;
    const signTok = this.tok;
    if (signTok.k === 'op' && (signTok.text === '-' || signTok.text === '+')) {
      sign = signTok.text === '-' ? -1 : 1;
      this.i++;
    }
    const n = this.tok;
    if (n.k !== 'num') throw new UnitError("expected a whole number after '^'", caret.start, Math.max(caret.end, n.k === 'end' ? caret.end : n.end));
    if (!/^\d+$/.test(n.text)) throw new UnitError(`powers must be whole numbers, not '${n.text}'`, n.start, n.end);
    this.i++;
    if (paren) {
      const c = this.tok;
      if (!(c.k === 'op' && c.text === ')')) throw new UnitError("expected ')' after the power", c.start, c.end);
      this.i++;
    }
    return sign * Number(n.text);
  }

  private atom(after?: string): Acc {
    const t = this.tok;
    if (t.k === 'name') {
      this.i++;
      const u = lookupName(t.text);
      if (typeof u === 'string') throw new UnitError(u, t.start, t.end);
      const acc: Acc = { scale: u.scale, dim: [...u.dim], angle: u.angle, cycle: u.cycle, factors: [{ name: t.text, power: 1 }] };
      if (u.offset !== 0) acc.offset = u.offset;
      return acc;
    }
    if (t.k === 'num') {
      this.i++;
      if (Number(t.text) !== 1) throw new UnitError(`only 1 may stand as a number in a unit, not '${t.text}'`, t.start, t.end);
      return accOne();
    }
    if (t.k === 'op' && t.text === '(') {
      this.i++;
      const inner = this.product();
      const c = this.tok;
      if (!(c.k === 'op' && c.text === ')')) throw new UnitError("'(' is not closed", t.start, t.end);
      this.i++;
      inner.offset = undefined;
      return inner;
    }
    if (t.k === 'end') {
      if (after) {
        const prev = this.toks[this.i - 1];
        throw new UnitError(`expected a unit after '${after}'`, prev.start, prev.end);
      }
      throw new UnitError('empty unit', t.start, t.end);
    }
    if (t.k === 'op' && t.text === '-') throw new UnitError("a minus sign belongs to the number, outside the brackets", t.start, t.end);
    throw new UnitError(`expected a unit name, found '${t.text}'`, t.start, t.end);
  }
}

/**
 * Results of parseUnit by text. A document writes the same few units many times (`[m]`, `[N]`,
 * `[m/s]`), and reading one is far dearer than a lookup. The results are shared, so callers treat
 * them as read-only (they all do); the cache is emptied when it grows past a bound so that a
 * long-lived server editing many files keeps a small footprint.
 */
const parsed = new Map<string, UnitParse>();
const PARSED_LIMIT = 4096;

export function parseUnit(text: string): UnitParse {
  let r = parsed.get(text);
  if (r === undefined) {
    if (parsed.size >= PARSED_LIMIT) parsed.clear();
    r = readUnit(text);
    parsed.set(text, r);
  }
  return r;
}

function readUnit(text: string): UnitParse {
  try {
    const acc = new Parser(tokenize(text)).parseAll();
    const dim = Object.freeze(acc.dim.map((x) => (Math.abs(x) < DIM_TOLERANCE ? 0 : x)));
    const offset = acc.offset ?? 0;
    let flavour: UnitFlavour = null;
    if (offset !== 0) flavour = 'absoluteTemperature';
    else if (Math.abs(acc.cycle) > DIM_TOLERANCE && Math.abs(acc.angle) < DIM_TOLERANCE) flavour = 'cycle';
    else if (Math.abs(acc.angle) > DIM_TOLERANCE) flavour = 'angle';
    return {
      ok: true,
      unit: { text, scale: acc.scale, offset, dim, flavour, angle: acc.angle + 0, cycle: acc.cycle + 0, factors: acc.factors },
    };
  } catch (e) {
    if (e instanceof UnitError) return { ok: false, message: e.message, start: e.start, end: e.end };
    // Anything unexpected from the library still becomes a diagnostic over the whole text.
    return { ok: false, message: `cannot read unit '${text}'`, start: 0, end: text.length };
  }
}

export function toSI(value: number, u: ParsedUnit): number {
  return (value + u.offset) * u.scale;
}

export function fromSI(si: number, u: ParsedUnit): number {
  return si / u.scale - u.offset;
}

/** Same dimension, scale and offset: `N*m` and `kg*m^2/s^2` are the same unit. */
export function sameUnit(a: ParsedUnit, b: ParsedUnit): boolean {
  return dimEq(a.dim, b.dim) && Math.abs(a.scale - b.scale) <= 1e-12 * Math.max(Math.abs(a.scale), Math.abs(b.scale)) && a.offset === b.offset;
}

/** The coherent SI unit of a dimension (scale 1), as a ParsedUnit. */
export function siUnit(dim: Dim): ParsedUnit {
  const names = ['m', 'kg', 's', 'A', 'K', 'mol', 'cd'];
  const factors = [1, 0, 2, 3, 4, 5, 6].filter((i) => Math.abs(dim[i] ?? 0) > DIM_TOLERANCE).map((i) => ({ name: names[i], power: dim[i] }));
  return { text: formatDim(dim), scale: 1, offset: 0, dim, flavour: null, angle: 0, cycle: 0, factors };
}

export const DIMLESS_UNIT: ParsedUnit = { text: '1', scale: 1, offset: 0, dim: DIMLESS, flavour: null, angle: 0, cycle: 0, factors: [] };
