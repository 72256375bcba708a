// Synthetic live-tuning reports: the response of fixtures.ts plus knobs and poles. The knob spans
// are taken from DOCUMENT, a small loop file written for these tests, so that a test can apply
// the page's edits to it the way the host would and read the result. The poles are chosen to
// cover the cases of the map: a complex pair −2 ± 3j, a real pole −5, a right-half-plane pole
// +0.5, and plant poles 0 and −0.8; PoleInfo fields are the closed forms (ζ = −re/|p|, ωn = |p|,
// τ = 1/|re|).

import type { LoopRunReport, ParamKnob, PoleInfo } from '../../language/src/protocol';
import { grid, makeRun, signals } from './fixtures';

export const DOCUMENT = `system Boom
  param arm  = 0.6 [m]
  param drag = 0.02 [N*m*s/rad]
end

controller Steady
  param kp   = 14 [N*m/rad]
  param kd   = 2.2 [N*m*s/rad]
  param bias = 0
end

loop BoomHold
  param ref = -0.35 [rad]
end
`;

/** [name, system, owner, unit] */
const KNOBS: Array<[string, string, ParamKnob['owner'], string]> = [
  ['Boom.arm', 'Boom', 'plant', 'm'],
  ['Boom.drag', 'Boom', 'plant', 'N*m*s/rad'],
  ['Steady.kp', 'Steady', 'controller', 'N*m/rad'],
  ['Steady.kd', 'Steady', 'controller', 'N*m*s/rad'],
  ['Steady.bias', 'Steady', 'controller', ''],
  ['BoomHold.ref', 'BoomHold', 'loop', 'rad'],
];

/** Knobs read from `doc` as a server would: the literal after `param <name> = `, to the line end. */
export function knobsOf(doc: string = DOCUMENT): ParamKnob[] {
  return KNOBS.map(([name, system, owner, unit]) => {
    const header = new RegExp(`^(system|controller|loop) ${system}$`, 'm').exec(doc);
    if (!header) throw new Error(`no ${system} in the document`);
    const line = new RegExp(`^  param ${name.split('.')[1]} *= (.*)$`, 'm').exec(doc.slice(header.index));
    if (!line) throw new Error(`no ${name} in the document`);
    const start = header.index + line.index + line[0].length - line[1].length;
    const text = line[1].split(' ')[0];
    return { name, system, owner, value: Number(text), unit, span: { start, end: start + line[1].length }, text };
  });
}

export function pole(re: number, im = 0): PoleInfo {
  const natural = Math.hypot(re, im);
  return { re, im, damping: natural === 0 ? 1 : -re / natural, natural, timeConstant: re === 0 ? null : 1 / Math.abs(re) };
}

export const CLOSED: Array<[number, number]> = [[-2, 3], [-2, -3], [-5, 0], [0.5, 0]];
export const OPEN: Array<[number, number]> = [[0, 0], [-0.8, 0]];

export function tunedReport(o: { zeta?: number; closed?: Array<[number, number]>; open?: Array<[number, number]>; doc?: string; loop?: string; n?: number } = {}): LoopRunReport {
  const t = grid(6, o.n ?? 400);
  return {
    file: '/work/samples/boom.loop',
    loop: o.loop ?? 'BoomHold',
    signals: signals(),
    runs: [makeRun('nonlinear', 'nonlinear', { zeta: o.zeta ?? 0.35, omega: 3 }, t)],
    poles: { closed: (o.closed ?? CLOSED).map(([re, im]) => pole(re, im)), open: (o.open ?? OPEN).map(([re, im]) => pole(re, im)) },
    params: knobsOf(o.doc ?? DOCUMENT),
    warnings: [],
  };
}

/** Applies editParam edits to a document in order, as the host does. */
export function applyEdits(doc: string, edits: Array<{ span: { start: number; end: number }; newText: string }>): string {
  for (const e of edits) doc = doc.slice(0, e.span.start) + e.newText + doc.slice(e.span.end);
  return doc;
}
