// Nyquist encirclement count by the argument principle.
//
// Convention: the Nyquist contour runs up the imaginary axis from −j∞ to +j∞ and closes through
// the right half plane, i.e. clockwise around it. Poles of L on the imaginary axis (integrators,
// undamped modes) are stepped round on small semicircles to the right, s = jω₀ + r·e^{jθ},
// θ from −π/2 to π/2, so they count as left-half-plane poles. With P open-loop poles strictly in
// the right half plane and W the number of counter-clockwise turns of L(s) around the point q
// along that contour, the closed loop 1 + k·L with k = −1/q has Z = P − W poles in the right half
// plane (common practice: Z = N + P with N = −W clockwise encirclements).
//
// L is real-rational, so L(−jω) = conj L(jω): the path over negative frequencies turns the same
// angle as the one over positive frequencies. The winding is therefore 2 × (angle along
// 0⁺ → +j∞, including the semicircles at jω₀ > 0) plus, with a pole at the origin, the angle along
// the semicircle round the origin. The arc at infinity adds nothing for a proper L (it maps to
// the single point D). Each piece is sampled adaptively: a step is halved until L − q turns by
// less than π/8 and moves by less than a quarter of its distance from q. Where |L| is below
// 1e-9·|q| the step cannot turn L − q noticeably and is not refined (far above the poles a
// realization's L is tiny and its phase is rounding noise). At most 200 000 extra evaluations per
// count; beyond that `converged` is false.
//
// API
//   nyquistPath(opts) → NyquistPath;  windingNumber(L, q, path) → { turns, exact, minDistance }

import { cAbs, cAdd, cArg, cDiv, cSub, type Complex } from './complex';
import type { TransferFn } from './freqresp';

/** One piece of the contour: s(t) for t in [0, 1]; `twice` pieces are counted for both halves. */
interface Piece {
  at: (t: number) => Complex;
  samples: number;
  twice: boolean;
}

export interface NyquistPath {
  pieces: Piece[];
  /** L at each piece's base samples, kept per transfer function so that several points q share them. */
  cache: WeakMap<TransferFn, Complex[][]>;
}

export interface PathOptions {
  /** Frequencies ω₀ ≥ 0 of the open-loop poles on the imaginary axis (each listed once). */
  axisPoles: number[];
  /** Highest frequency of the sampled axis, rad/s (beyond it L is taken as its limit D). */
  omegaMax: number;
  /** A frequency scale of the system (e.g. the smallest nonzero pole or zero magnitude). */
  scale: number;
}

const RADIUS = 1e-6;

export function nyquistPath(o: PathOptions): NyquistPath {
  const poles = [...new Set(o.axisPoles.map((w) => Math.abs(w)))].sort((a, b) => a - b);
  const pieces: Piece[] = [];
  const origin = poles.length > 0 && poles[0] === 0;
  const r0 = RADIUS * (o.scale > 0 && Number.isFinite(o.scale) ? o.scale : 1);
  let w = 0;
  if (origin) {
    pieces.push({ at: (t) => ({ re: r0 * Math.cos(Math.PI * (t - 0.5)), im: r0 * Math.sin(Math.PI * (t - 0.5)) }), samples: 64, twice: false });
    w = r0;
  }
  const axis = (a: number, b: number): void => {
    if (!(b > a)) return;
    if (a === 0) {
      // From 0 to b: a short linear step then log spacing.
      const a1 = Math.min(b, r0);
      pieces.push({ at: (t) => ({ re: 0, im: a1 * t }), samples: 4, twice: true });
      a = a1;
      if (!(b > a)) return;
    }
    const la = Math.log(a), lb = Math.log(b);
    pieces.push({ at: (t) => ({ re: 0, im: Math.exp(la + (lb - la) * t) }), samples: Math.max(16, Math.ceil((lb - la) * 20)), twice: true });
  };
  for (const p of poles) {
    if (p === 0) continue;
    const r = RADIUS * p;
    axis(w, p - r);
    pieces.push({ at: (t) => ({ re: r * Math.cos(Math.PI * (t - 0.5)), im: p + r * Math.sin(Math.PI * (t - 0.5)) }), samples: 64, twice: true });
    w = p + r;
  }
  axis(w, Math.max(o.omegaMax, w * 10));
  return { pieces, cache: new WeakMap() };
}

export interface Winding {
  /** Counter-clockwise turns of L − q along the whole contour (rounded). */
  turns: number;
  /** The unrounded value; far from an integer means the contour passed (near) q. */
  exact: number;
  /** Smallest |L(s) − q| met on the contour. */
  minDistance: number;
  /** False when the refinement budget ran out (the count may then be wrong). */
  converged: boolean;
}

const MAX_DEPTH = 40;
const BUDGET = 200_000;
const NEGLIGIBLE = 1e-9;

export function windingNumber(L: TransferFn, q: Complex, path: NyquistPath): Winding {
  let total = 0, minDistance = Infinity, spent = 0;
  const qAbs = cAbs(q);
  let base = path.cache.get(L);
  if (!base) {
    base = path.pieces.map((piece) => Array.from({ length: piece.samples + 1 }, (_, i) => L(piece.at(i / piece.samples))));
    path.cache.set(L, base);
  }
  for (const [pi, piece] of path.pieces.entries()) {
    let angle = 0;
    const f = (t: number): Complex => cSub(L(piece.at(t)), q);
    const fb = (i: number): Complex => cSub(base[pi][i], q);
    const walk = (t0: number, f0: Complex, t1: number, f1: Complex, depth: number): void => {
      const d = cArg(cDiv(f1, f0));
      const near = Math.min(cAbs(f0), cAbs(f1));
      const tiny = cAbs(cAdd(f0, q)) < NEGLIGIBLE * qAbs && cAbs(cAdd(f1, q)) < NEGLIGIBLE * qAbs;
      const ok = tiny || (Math.abs(d) < Math.PI / 8 && cAbs(cSub(f1, f0)) < 0.25 * near);
      if (ok || depth >= MAX_DEPTH || spent >= BUDGET || !Number.isFinite(d)) { if (Number.isFinite(d)) angle += d; return; }
      spent++;
      const tm = 0.5 * (t0 + t1), fm = f(tm);
      minDistance = Math.min(minDistance, cAbs(fm));
      walk(t0, f0, tm, fm, depth + 1);
      walk(tm, fm, t1, f1, depth + 1);
    };
    let tPrev = 0, fPrev = fb(0);
    minDistance = Math.min(minDistance, cAbs(fPrev));
    for (let i = 1; i <= piece.samples; i++) {
      const t = i / piece.samples, ft = fb(i);
      minDistance = Math.min(minDistance, cAbs(ft));
      walk(tPrev, fPrev, t, ft, 0);
      tPrev = t; fPrev = ft;
    }
    total += piece.twice ? 2 * angle : angle;
  }
  const exact = total / (2 * Math.PI);
  return { turns: Math.round(exact) + 0, exact, minDistance, converged: spent < BUDGET };
}
