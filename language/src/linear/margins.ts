// Stability margins of a single-input single-output open loop L(s) under negative feedback,
// closed loop 1 + k·L(s) = 0 with nominal k = 1 (common practice for all definitions below).
//
//  gain crossover ωc: |L(jωc)| = 1;  phase margin PM = 180° + ∠L(jωc), wrapped to (−180°, 180°];
//  delay margin: the smallest extra delay that destabilises, (PM mod 360°)·π/180 / ωc, over all
//    gain crossovers (Infinity without one; null when the closed loop is not stable);
//  phase crossover ωp: ∠L(jωp) = −180° (mod 360°), i.e. L(jωp) real negative, including ω = 0 and
//    ω = ∞ (L(∞) = D) when L is real negative there. Each gives a critical gain k = 1/|L(jωp)|:
//    only there can closed-loop poles cross the imaginary axis as k varies.
//  upper gain margin: the smallest critical gain above 1 (Infinity if none);
//  lower gain margin: the largest critical gain below 1 (0 if none): the factor below which the
//    loop destabilises, as for loops that are unstable open-loop;
//  both only when the closed loop is stable at k = 1 (else null); `stableGains` lists every
//    interval of k > 0 with a stable closed loop, each decided by a Nyquist count (nyquist.ts);
//  sensitivity peak Ms = max over ω of |1/(1 + L(jω))|.
//
// Frequencies come from a log grid spanning three decades beyond the smallest and largest nonzero
// pole and zero magnitudes (200 points per decade), refined by bisection wherever the phase
// steps by more than 10° or |L| by more than 20 %, then each crossing is solved by Brent's
// method in ln ω (on ln|L| for gain crossovers, on the continuous phase for phase crossovers),
// so the figures are not limited by the grid. Several crossovers: the reported margins are the
// smallest; all crossings are listed. Noise floor: far above its poles a realization's |L| is
// tiny and its phase is rounding noise, so samples with |L| below 1e-12 of the largest |L| on the
// grid are not refined and yield no phase crossover (their critical gain would exceed 1e12);
// refinement stops after 50 × the base grid.
//
// API
//   margins(L: StateSpace | TransferFn, opts?) → MarginReport

import { brentRoot, goldenMax } from './brent';
import { cAbs, cAdd, cArg, cDiv, type Complex } from './complex';
import { atOmega, logspace, naturalRange, transferOf, type TransferFn } from './freqresp';
import { checkStateSpace, ssDims, type StateSpace } from './lti';
import { nyquistPath, windingNumber, type NyquistPath } from './nyquist';
import { polesOf } from './poles';
import { zerosOf } from './zeros';

export interface MarginOptions {
  /** Open-loop poles of a callback L (a StateSpace's come from A). Default: none. */
  poles?: Complex[];
  /** Open-loop zeros of a callback L, only to place the frequency grid. */
  zeros?: Complex[];
  /** Frequency span of the grid, rad/s; default from the pole and zero magnitudes. */
  omegaRange?: [number, number];
  pointsPerDecade?: number;
  /** Input-output path of a StateSpace (default 0, 0). */
  output?: number;
  input?: number;
  /** Real part below which a pole counts as on the imaginary axis, relative (default 1e-9). */
  axisTolerance?: number;
}

export interface GainCrossing {
  omega: number;
  phaseDeg: number;
  phaseMargin: number;
  /** Extra delay (s) that brings this crossing to −180°. */
  delay: number;
}

export interface PhaseCrossing {
  omega: number;
  magnitude: number;
  /** Critical gain factor 1/|L| and in dB. */
  gain: number;
  gainDb: number;
}

export interface MarginReport {
  ok: boolean;
  problem?: string;
  phaseMargin: number | null;
  phaseMarginOmega: number | null;
  delayMargin: number | null;
  gainMargin: number | null;
  gainMarginDb: number | null;
  gainMarginOmega: number | null;
  lowerGainMargin: number | null;
  lowerGainMarginDb: number | null;
  lowerGainMarginOmega: number | null;
  gainCrossings: GainCrossing[];
  phaseCrossings: PhaseCrossing[];
  sensitivityPeak: number;
  sensitivityPeakOmega: number;
  /** Nyquist count at k = 1. */
  closedLoop: { stable: boolean; openLoopRhp: number; encirclements: number; closedLoopRhp: number };
  /** Intervals (lo, hi) of gain factors k > 0 for which the closed loop is stable. */
  stableGains: [number, number][];
}

const dB = (x: number): number => 20 * Math.log10(x);
const deg = (z: Complex): number => (cArg(z) * 180) / Math.PI;
/** Angle in degrees taken to (−180, 180]. */
const wrap180 = (a: number): number => a - 360 * Math.ceil((a - 180) / 360);

function failed(problem: string): MarginReport {
  return {
    ok: false, problem, phaseMargin: null, phaseMarginOmega: null, delayMargin: null, gainMargin: null, gainMarginDb: null,
    gainMarginOmega: null, lowerGainMargin: null, lowerGainMarginDb: null, lowerGainMarginOmega: null, gainCrossings: [],
    phaseCrossings: [], sensitivityPeak: NaN, sensitivityPeakOmega: NaN,
    closedLoop: { stable: false, openLoopRhp: 0, encirclements: 0, closedLoopRhp: 0 }, stableGains: [],
  };
}

interface Setup { L: TransferFn; poles: Complex[]; zeros: Complex[]; D: number; tol: number }

function setup(sys: StateSpace | TransferFn, o: MarginOptions): Setup | string {
  if (typeof sys === 'function') {
    const poles = o.poles ?? [];
    const big = Math.max(1, ...poles.map(cAbs));
    const Dv = atOmega(sys, 1e12 * big);
    return { L: sys, poles, zeros: o.zeros ?? [], D: Number.isFinite(Dv.re) ? Dv.re : 0, tol: (o.axisTolerance ?? 1e-9) * big };
  }
  const bad = checkStateSpace(sys);
  if (bad) return bad;
  const out = o.output ?? 0, inp = o.input ?? 0;
  const { m, p } = ssDims(sys);
  if (!(out < p && inp < m)) return 'no such input-output path';
  const pr = polesOf(sys.A, { axisTolerance: o.axisTolerance });
  if (!pr.ok) return pr.problem ?? 'no poles';
  const zr = zerosOf(sys, out, inp);
  return { L: transferOf(sys, out, inp), poles: pr.poles, zeros: zr.zeros, D: sys.D[out][inp], tol: pr.tolerance };
}

interface Sample { w: number; v: Complex }

/** Log grid refined by bisection where the phase or magnitude steps too far. */
function sampleGrid(L: TransferFn, lo: number, hi: number, perDecade: number): { g: Sample[]; floor: number } {
  const pts = logspace(lo, hi, perDecade).map((w) => ({ w, v: atOmega(L, w) }));
  const peak = Math.max(1, ...pts.map((p) => cAbs(p.v)).filter(Number.isFinite));
  const floor = NOISE_FLOOR * peak;
  const budget = 50 * pts.length;
  const out: Sample[] = [pts[0]];
  const refine = (a: Sample, b: Sample, depth: number): void => {
    const ma = cAbs(a.v), mb = cAbs(b.v);
    const ok = !Number.isFinite(ma) || !Number.isFinite(mb)
      ? depth > 6
      : (ma < floor && mb < floor) || (Math.abs(deg(cDiv(b.v, a.v))) <= 10 && Math.abs(Math.log(mb / ma)) <= 0.2);
    if (ok || depth >= 24 || out.length > budget) { out.push(b); return; }
    const w = Math.sqrt(a.w * b.w), m = { w, v: atOmega(L, w) };
    refine(a, m, depth + 1);
    refine(m, b, depth + 1);
  };
  for (let i = 1; i < pts.length; i++) refine(pts[i - 1], pts[i], 0);
  return { g: out, floor };
}

const NOISE_FLOOR = 1e-12;

const finite = (z: Complex): boolean => Number.isFinite(z.re) && Number.isFinite(z.im) && cAbs(z) > 0;

function gainCrossings(L: TransferFn, g: Sample[]): GainCrossing[] {
  const out: GainCrossing[] = [];
  const h = (u: number): number => Math.log(cAbs(atOmega(L, Math.exp(u))));
  for (let i = 1; i < g.length; i++) {
    const a = g[i - 1], b = g[i];
    if (!finite(a.v) || !finite(b.v)) continue;
    const ha = Math.log(cAbs(a.v)), hb = Math.log(cAbs(b.v));
    if (ha < 0 === hb < 0) continue; // ln|L| = 0 counts as above: each crossing lands in one interval
    const u = brentRoot(h, Math.log(a.w), Math.log(b.w));
    if (u === null) continue;
    const w = Math.exp(u), ph = deg(atOmega(L, w)), pm = wrap180(180 + ph);
    out.push({ omega: w, phaseDeg: ph, phaseMargin: pm, delay: ((((pm % 360) + 360) % 360) * Math.PI) / 180 / w });
  }
  return out;
}

function phaseCrossings(L: TransferFn, g: Sample[], D: number, floor: number): PhaseCrossing[] {
  const out: PhaseCrossing[] = [];
  const add = (w: number, z: Complex): void => {
    const m = cAbs(z);
    out.push({ omega: w, magnitude: m, gain: 1 / m, gainDb: -dB(m) });
  };
  const L0 = atOmega(L, 0);
  if (finite(L0) && L0.re < 0 && Math.abs(L0.im) <= 1e-12 * cAbs(L0)) add(0, L0);
  // Continuous phase along the grid (restarted after a non-finite sample), so that each crossing
  // of −180° + 360°·k falls in exactly one interval, by the half-open rule h < 0 versus h ≥ 0.
  let pa = NaN;
  for (let i = 1; i < g.length; i++) {
    const a = g[i - 1], b = g[i];
    if (!finite(a.v) || !finite(b.v) || (cAbs(a.v) < floor && cAbs(b.v) < floor)) { pa = NaN; continue; }
    if (!Number.isFinite(pa)) pa = deg(a.v);
    const base = pa;
    const phase = (z: Complex): number => base + deg(cDiv(z, a.v));
    const pb = phase(b.v);
    pa = pb;
    const lo = Math.min(base, pb), hi = Math.max(base, pb);
    for (let k = Math.ceil((lo + 180) / 360); -180 + 360 * k <= hi; k++) {
      const target = -180 + 360 * k;
      if (base - target < 0 === pb - target < 0) continue;
      const u = brentRoot((x) => phase(atOmega(L, Math.exp(x))) - target, Math.log(a.w), Math.log(b.w));
      if (u === null) continue;
      const w = Math.exp(u), z = atOmega(L, w);
      // A phase jump at a zero or pole on the axis is not a crossing: require L real negative.
      if (finite(z) && z.re < 0 && Math.abs(z.im) <= 1e-6 * cAbs(z) && cAbs(z) >= floor) add(w, z);
    }
  }
  if (D < 0) add(Infinity, { re: D, im: 0 });
  return out;
}

function sensitivityPeak(L: TransferFn, g: Sample[]): { peak: number; omega: number } {
  const S = (w: number): number => 1 / cAbs(cAdd({ re: 1, im: 0 }, atOmega(L, w)));
  const Sg = g.map((p) => 1 / cAbs(cAdd({ re: 1, im: 0 }, p.v)));
  let best = 0;
  for (let i = 1; i < g.length; i++) if (!(Sg[best] >= Sg[i])) best = i;
  const lo = g[Math.max(0, best - 1)].w, hi = g[Math.min(g.length - 1, best + 1)].w;
  const w = Math.exp(goldenMax((x) => S(Math.exp(x)), Math.log(lo), Math.log(hi)));
  const [peak, omega] = S(w) >= Sg[best] ? [S(w), w] : [Sg[best], g[best].w];
  const S0 = S(0);
  return Number.isFinite(S0) && S0 > peak ? { peak: S0, omega: 0 } : { peak, omega };
}

function stableAt(L: TransferFn, k: number, path: NyquistPath, P: number): { stable: boolean; W: number; Z: number } {
  const w = windingNumber(L, { re: -1 / k, im: 0 }, path);
  const Z = P - w.turns;
  return { stable: Z === 0, W: w.turns, Z };
}

export function margins(sys: StateSpace | TransferFn, o: MarginOptions = {}): MarginReport {
  const s = setup(sys, o);
  if (typeof s === 'string') return failed(s);
  const { L, poles, zeros, D, tol } = s;
  const mags = [...poles, ...zeros].map(cAbs);
  const [lo, hi] = o.omegaRange ?? naturalRange(mags, 3);
  if (!(lo > 0 && hi > lo && Number.isFinite(hi))) return failed('bad frequency range');
  const { g, floor } = sampleGrid(L, lo, hi, o.pointsPerDecade ?? 200);
  const gcs = gainCrossings(L, g).sort((a, b) => a.omega - b.omega);
  const pcs = phaseCrossings(L, g, D, floor).sort((a, b) => a.omega - b.omega);
  const P = poles.filter((p) => p.re > tol).length;
  const axisPoles = poles.filter((p) => Math.abs(p.re) <= tol && p.im >= 0).map((p) => p.im);
  const nz = mags.filter((m) => m > 0);
  const path = nyquistPath({ axisPoles, omegaMax: hi * 1e3, scale: nz.length ? Math.min(...nz) : 1 });
  const nominal = stableAt(L, 1, path, P);

  // Stable gain intervals between the sorted critical gains, each tested at an inner point.
  const crit = [...new Set(pcs.map((c) => c.gain).filter((k) => k > 0 && Number.isFinite(k)))].sort((a, b) => a - b);
  const edges = [0, ...crit, Infinity];
  const stableGains: [number, number][] = [];
  for (let i = 0; i + 1 < edges.length; i++) {
    const a = edges[i], b = edges[i + 1];
    const k = a === 0 ? (b === Infinity ? 1 : b / 2) : b === Infinity ? 2 * a : Math.sqrt(a * b);
    if (stableAt(L, k, path, P).stable) {
      const last = stableGains[stableGains.length - 1];
      if (last && last[1] === a) last[1] = b; else stableGains.push([a, b]);
    }
  }

  const pmBest = gcs.reduce<GainCrossing | null>((best, c) => (best === null || c.phaseMargin < best.phaseMargin ? c : best), null);
  const upper = pcs.filter((c) => c.gain > 1).reduce<PhaseCrossing | null>((b, c) => (b === null || c.gain < b.gain ? c : b), null);
  const lower = pcs.filter((c) => c.gain < 1).reduce<PhaseCrossing | null>((b, c) => (b === null || c.gain > b.gain ? c : b), null);
  const st = nominal.stable;
  const sp = sensitivityPeak(L, g);
  return {
    ok: true,
    phaseMargin: pmBest?.phaseMargin ?? null,
    phaseMarginOmega: pmBest?.omega ?? null,
    delayMargin: st ? (gcs.length ? Math.min(...gcs.map((c) => c.delay)) : Infinity) : null,
    gainMargin: st ? upper?.gain ?? Infinity : null,
    gainMarginDb: st ? (upper ? upper.gainDb : Infinity) : null,
    gainMarginOmega: st ? upper?.omega ?? null : null,
    lowerGainMargin: st ? lower?.gain ?? 0 : null,
    lowerGainMarginDb: st ? (lower ? lower.gainDb : -Infinity) : null,
    lowerGainMarginOmega: st ? lower?.omega ?? null : null,
    gainCrossings: gcs,
    phaseCrossings: pcs,
    sensitivityPeak: sp.peak,
    sensitivityPeakOmega: sp.omega,
    closedLoop: { stable: st, openLoopRhp: P, encirclements: nominal.W, closedLoopRhp: nominal.Z },
    stableGains,
  };
}
