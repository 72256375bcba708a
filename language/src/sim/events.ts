// Limit events: which limit switches within an accepted step, and where. A limit in mode FREE
// passes its pre-limit value through, so the step is smooth up to the corner; the event is the
// first time the pre-limit value crosses a bound, found on the step's dense output by the
// Illinois variant of regula falsi (Dowell & Jarratt 1971; common practice), and the run
// restarts there in the new mode. Mode HIGH / LOW ends when the pre-limit value comes back
// inside. Tiny violations below `hysteresis` are ignored so a restart exactly on a bound does
// not trigger again at once.

import { LimitMode } from '../model/types';

/** Value of the event function of limit k: positive while the mode stays valid. */
export function eventValue(mode: number, pre: number, lo: number, hi: number): number {
  if (mode === LimitMode.FREE) return Math.min(hi - pre, pre - lo);
  if (mode === LimitMode.HIGH) return pre - hi;
  if (mode === LimitMode.LOW) return lo - pre;
  return 1;
}

/** The mode a limit switches to when its event fires in `mode` with pre-limit value `pre`. */
export function nextMode(mode: number, pre: number, lo: number, hi: number): number {
  if (mode === LimitMode.FREE) return pre >= hi ? LimitMode.HIGH : pre <= lo ? LimitMode.LOW : Math.abs(pre - hi) < Math.abs(pre - lo) ? LimitMode.HIGH : LimitMode.LOW;
  return LimitMode.FREE;
}

/** Mode of a limit from its pre-limit value (at a start or after a discontinuity). */
export function modeFor(pre: number, lo: number, hi: number): number {
  if (pre > hi) return LimitMode.HIGH;
  if (pre < lo) return LimitMode.LOW;
  return LimitMode.FREE;
}

export function hysteresis(lo: number, hi: number): number {
  return 1e-10 * (1 + Math.abs(lo) + Math.abs(hi));
}

/**
 * Root of g on [a, b] with g(a) ≥ 0 > g(b), by the Illinois method; returns the time just past
 * the root (g < 0 or within the time tolerance), at most 80 iterations.
 */
export function locateRoot(g: (t: number) => number, a: number, ga: number, b: number, gb: number): number {
  const tolT = 1e-13 * Math.max(1, Math.abs(a), Math.abs(b));
  let side = 0;
  for (let it = 0; it < 80 && b - a > tolT; it++) {
    let c = (a * gb - b * ga) / (gb - ga);
    if (!(c > a && c < b)) c = 0.5 * (a + b);
    const gc = g(c);
    if (gc < 0) {
      b = c;
      gb = gc;
      if (side === -1) ga /= 2;
      side = -1;
    } else {
      a = c;
      ga = gc;
      if (side === 1) gb /= 2;
      side = 1;
    }
  }
  return b;
}
