// Synthetic run reports for the page tests. The curves are the closed-form unit-step response of
// a damped second-order system, y(t) = 1 − e^(−ζωt)·(cos ω_d t + ζ/√(1−ζ²)·sin ω_d t), its rate,
// and a clipped "drive" made from them; they only need to look like a loop response, the page
// computes nothing from them. Metrics are the closed-form ones of that response.

import type { LoopRunReport, RunResult, SignalInfo, SignalMetrics } from '../../language/src/protocol';

export interface Curve {
  zeta: number;
  omega: number;
}

export const SIGNALS: SignalInfo[] = [
  { name: 'Boom.tilt', unit: 'rad', scale: 1, offset: 0, kind: 'output', group: 'position', description: 'Boom angle from level' },
  { name: 'target', unit: 'rad', scale: 1, offset: 0, kind: 'input', group: 'position' },
  { name: 'Boom.rate', unit: 'rad/s', scale: 1, offset: 0, kind: 'state', group: 'rate' },
  { name: 'Steady.drive', unit: 'N*m', scale: 1, offset: 0, kind: 'controller', group: 'actuator', limit: { lo: -1.5, hi: 1.5 } },
];

export const DRIVE_GAIN = 4;

/** A fresh copy of the signal list (tests edit the reports they get). */
export function signals(): SignalInfo[] {
  return SIGNALS.map((s) => ({ ...s, limit: s.limit ? { ...s.limit } : undefined }));
}

export function grid(tEnd: number, n: number): number[] {
  return Array.from({ length: n }, (_, i) => (tEnd * i) / (n - 1));
}

export function step(c: Curve, t: number): { y: number; v: number } {
  const wd = c.omega * Math.sqrt(1 - c.zeta * c.zeta);
  const e = Math.exp(-c.zeta * c.omega * t);
  const y = 1 - e * (Math.cos(wd * t) + (c.zeta / Math.sqrt(1 - c.zeta * c.zeta)) * Math.sin(wd * t));
  const v = (c.omega / Math.sqrt(1 - c.zeta * c.zeta)) * e * Math.sin(wd * t);
  return { y, v };
}

function metricsOf(c: Curve, ys: number[]): SignalMetrics {
  const os = Math.exp((-Math.PI * c.zeta) / Math.sqrt(1 - c.zeta * c.zeta));
  return {
    initial: ys[0],
    final: ys[ys.length - 1],
    peak: Math.max(...ys),
    rise: (1.8 / c.omega) * (1 + 0.6 * c.zeta),
    overshoot: os,
    settling: 4 / (c.zeta * c.omega),
    iae: 0.7 / c.omega,
  };
}

/** Intervals where |drive| sits at the limit, from the samples. */
function atLimitIntervals(t: number[], u: number[], lim: number): Array<[number, number]> {
  const out: Array<[number, number]> = [];
  let start: number | null = null;
  for (let i = 0; i < t.length; i++) {
    const at = Math.abs(u[i]) >= lim;
    if (at && start === null) start = t[i];
    if (!at && start !== null) {
      out.push([start, t[i - 1]]);
      start = null;
    }
  }
  if (start !== null) out.push([start, t[t.length - 1]]);
  return out;
}

export function makeRun(label: string, kind: RunResult['kind'], c: Curve, t: number[], names: SignalInfo[] = SIGNALS): RunResult {
  const tilt: number[] = [];
  const rate: number[] = [];
  const drive: number[] = [];
  for (const x of t) {
    const { y, v } = step(c, x);
    tilt.push(y);
    rate.push(v);
    drive.push(Math.max(-1.5, Math.min(1.5, DRIVE_GAIN * (1 - y) - 0.8 * v)));
  }
  const all: Record<string, number[]> = { [names[0].name]: tilt, [names[1].name]: t.map(() => 1), [names[2].name]: rate, [names[3].name]: drive };
  const timeAtLimit = drive.filter((u) => Math.abs(u) >= 1.5).length / drive.length;
  return {
    label,
    kind,
    t,
    signals: all,
    atLimit: { [names[3].name]: atLimitIntervals(t, drive, 1.5) },
    metrics: {
      [names[0].name]: metricsOf(c, tilt),
      [names[3].name]: { ...metricsOf(c, drive), rise: null, overshoot: null, timeAtLimit },
    },
    expects: [
      { text: 'overshoot(Boom.tilt) < 20 %', span: { start: 10, end: 37 }, pass: c.zeta > 0.45, measured: 100 * Math.exp((-Math.PI * c.zeta) / Math.sqrt(1 - c.zeta ** 2)), measuredText: `${(100 * Math.exp((-Math.PI * c.zeta) / Math.sqrt(1 - c.zeta ** 2))).toFixed(1)} %` },
    ],
    recovered: c.zeta > 0.3,
    stats: { steps: 120, rejected: 3, evaluations: 730, jacobians: 0, ms: 4.2 },
  };
}

export function simulateReport(n = 400): LoopRunReport {
  const t = grid(6, n);
  return { file: '/work/samples/boom.loop', loop: 'BoomHold', signals: signals(), runs: [makeRun('nonlinear', 'nonlinear', { zeta: 0.35, omega: 3 }, t)], warnings: [] };
}

export function compareReport(n = 400): LoopRunReport {
  const t = grid(6, n);
  return {
    loop: 'BoomHold',
    signals: signals(),
    runs: [makeRun('nonlinear', 'nonlinear', { zeta: 0.35, omega: 3 }, t), makeRun('linear', 'linear', { zeta: 0.3, omega: 3.2 }, t)],
    warnings: ['the linearization ignores the drive limit'],
  };
}

export const SWEEP_ZETAS = [0.2, 0.35, 0.5, 0.7, 0.9];

export function sweepReport(n = 300): LoopRunReport {
  const t = grid(6, n);
  return {
    loop: 'BoomHold',
    signals: signals().slice(0, 3),
    runs: SWEEP_ZETAS.map((zeta) => ({
      ...makeRun(`zeta=${zeta}`, 'sweep', { zeta, omega: 3 }, t),
      sweep: { target: 'Boom.damping', value: zeta, unit: '', text: String(zeta) },
    })),
    warnings: [],
  };
}
