// Frequency response of a single-input single-output open loop L(jω), from a StateSpace or from a
// callback, on log-spaced grids, with a continuous (unwrapped) phase.
//
// API
//   type TransferFn = (s: Complex) => Complex          L(s) at a complex frequency; non-finite
//                                                       parts at a pole (margins also evaluate it
//                                                       just off the imaginary axis, to step round
//                                                       poles that lie on it)
//   transferOf(ss, out?, input?) → TransferFn           evaluates C (sI − A)⁻¹ B + D
//   logspace(lo, hi, perDecade) → number[]             both ends included
//   frequencyResponse(L, omegas) → FrequencyResponse  (at s = jω)   magnitude, dB, unwrapped phase in degrees
//   unwrapDegrees(phases) → number[]
//   naturalRange(magnitudes, decades?) → [lo, hi]       a span well beyond the given pole/zero
//                                                       magnitudes (default 3 decades each side)

import { cAbs, cArg, type Complex } from './complex';
import { sisoEvaluator, type StateSpace } from './lti';

export type TransferFn = (s: Complex) => Complex;

export function transferOf(ss: StateSpace, out = 0, input = 0): TransferFn {
  return sisoEvaluator(ss, out, input);
}

/** L(jω) */
export const atOmega = (L: TransferFn, omega: number): Complex => L({ re: 0, im: omega });

export function logspace(lo: number, hi: number, perDecade: number): number[] {
  if (!(lo > 0) || !(hi > lo) || !Number.isFinite(hi)) return [];
  const a = Math.log10(lo), b = Math.log10(hi);
  const n = Math.max(2, Math.ceil((b - a) * perDecade) + 1);
  return Array.from({ length: n }, (_, i) => 10 ** (a + ((b - a) * i) / (n - 1)));
}

/** Phases in degrees made continuous: each step is taken to the nearest equivalent angle. */
export function unwrapDegrees(phases: number[]): number[] {
  const out: number[] = [];
  let prev = NaN;
  for (const p of phases) {
    if (!Number.isFinite(p)) { out.push(NaN); continue; }
    if (!Number.isFinite(prev)) { out.push(p); prev = p; continue; }
    const q = p + 360 * Math.round((prev - p) / 360);
    out.push(q);
    prev = q;
  }
  return out;
}

export interface FrequencyResponse {
  omega: number[];
  value: Complex[];
  magnitude: number[];
  magnitudeDb: number[];
  /** Unwrapped phase in degrees, starting in (−360, 0] at the first finite point. */
  phaseDeg: number[];
}

export function frequencyResponse(L: TransferFn, omegas: number[]): FrequencyResponse {
  const value = omegas.map((w) => atOmega(L, w));
  const magnitude = value.map(cAbs);
  const raw = value.map((z) => (cAbs(z) > 0 ? (cArg(z) * 180) / Math.PI : NaN));
  const first = raw.find(Number.isFinite);
  const shift = first !== undefined && first > 0 ? -360 : 0;
  const phaseDeg = unwrapDegrees(raw).map((p) => p + shift);
  return { omega: omegas.slice(), value, magnitude, magnitudeDb: magnitude.map((m) => 20 * Math.log10(m)), phaseDeg };
}

export function naturalRange(magnitudes: number[], decades = 3): [number, number] {
  const m = magnitudes.filter((v) => Number.isFinite(v) && v > 0);
  if (m.length === 0) return [10 ** -decades, 10 ** decades];
  return [Math.min(...m) * 10 ** -decades, Math.max(...m) * 10 ** decades];
}
