// Stability margins of a loop broken at each plant input that a controller drives (one SISO loop
// transfer per input, loop-linear.ts `breakAt`, negative-feedback sign), computed by margins.ts:
// gain margin (ratio and dB) where the phase crosses −180°, phase margin where |L| = 1, delay
// margin, sensitivity peak, and for loops that are unstable open-loop (an arm held upright) the
// Nyquist count and the lower gain margin too. With several crossings the smallest margin is
// reported and the others listed.
//
// JSON-able: a margin that is infinite (no crossing) is null, and so is every margin when the
// closed loop is unstable (see `stable`).
//
// API
//   loopMargins(lin) → LoopMargin[]

import type { MarginReport } from './margins';
import { margins } from './margins';
import { breakAt, drivenInputs, type LoopLinear } from './loop-linear';

export interface LoopMargin {
  /** The broken input: `Boom.drive`. */
  input: string;
  /** Gain margin as a factor and in dB; null when infinite or the closed loop is unstable. */
  gain: number | null;
  gainDb: number | null;
  /** Where the phase crosses −180°, rad/s. */
  gainMarginFrequency: number | null;
  /** Phase margin in degrees and where |L| = 1, rad/s. */
  phase: number | null;
  phaseMarginFrequency: number | null;
  /** Delay margin, s. */
  delay: number | null;
  sensitivityPeak: number | null;
  sensitivityPeakFrequency: number | null;
  /** The factor below which the loop destabilises (open-loop unstable loops). */
  lowerGain?: number;
  lowerGainDb?: number;
  lowerGainFrequency?: number | null;
  stable: boolean;
  openLoopUnstablePoles: number;
  encirclements: number;
  /** Every crossing when there are several. */
  others?: { gainCrossings: { frequency: number; phase: number }[]; phaseCrossings: { frequency: number | null; gain: number | null }[] };
  problem?: string;
}

const fin = (v: number | null | undefined): number | null => (v === null || v === undefined || !Number.isFinite(v) ? null : v);

function entry(input: string, m: MarginReport): LoopMargin {
  const out: LoopMargin = {
    input,
    gain: fin(m.gainMargin),
    gainDb: fin(m.gainMarginDb),
    gainMarginFrequency: fin(m.gainMarginOmega),
    phase: fin(m.phaseMargin),
    phaseMarginFrequency: fin(m.phaseMarginOmega),
    delay: fin(m.delayMargin),
    sensitivityPeak: fin(m.sensitivityPeak),
    sensitivityPeakFrequency: fin(m.sensitivityPeakOmega),
    stable: m.closedLoop.stable,
    openLoopUnstablePoles: m.closedLoop.openLoopRhp,
    encirclements: m.closedLoop.encirclements,
  };
  if (!m.ok) out.problem = m.problem;
  if (m.lowerGainMargin !== null && m.lowerGainMargin > 0) {
    out.lowerGain = m.lowerGainMargin;
    out.lowerGainDb = m.lowerGainMarginDb ?? undefined;
    out.lowerGainFrequency = fin(m.lowerGainMarginOmega);
  }
  if (m.gainCrossings.length > 1 || m.phaseCrossings.length > 1) {
    out.others = {
      gainCrossings: m.gainCrossings.map((c) => ({ frequency: c.omega, phase: c.phaseMargin })),
      phaseCrossings: m.phaseCrossings.map((c) => ({ frequency: fin(c.omega), gain: fin(c.gain) })),
    };
  }
  return out;
}

export function loopMargins(lin: LoopLinear): LoopMargin[] {
  if (!lin.ok) return [];
  return drivenInputs(lin).map((j) => entry(lin.inputs[j]?.qualified ?? `input ${j}`, margins(breakAt(lin, j))));
}
