// The model compiler: exact Jacobians from symbolic differentiation, realizations of transfer
// relations, the closed-loop layout of LANGUAGE.md §5, generated code built only from mangled
// names, and the model diagnostics.

import { describe, expect, it } from 'vitest';
import { analyze } from '../../language/src/analysis';
import { compileAnalysis } from '../../language/src/model/compile';
import { Graph, evaluate } from '../../language/src/model/graph';
import { compile, sample } from '../run/helpers';

describe('symbolic derivatives of the graph (calculus; common practice)', () => {
  const cases: Array<[string, (g: Graph, x: number) => number, (x: number) => number, number]> = [
    ['sin', (g, x) => g.fn('sin', x), Math.cos, 0.7],
    ['exp·x', (g, x) => g.mul(g.fn('exp', x), x), (x) => Math.exp(x) * (1 + x), 0.3],
    ['x^3', (g, x) => g.op('pow', [x, g.c(3)]), (x) => 3 * x * x, 1.7],
    ['atan2(x, 2)', (g, x) => g.fn('atan2', x, g.c(2)), (x) => 2 / (x * x + 4), 0.9],
    ['sqrt(x)/x', (g, x) => g.div(g.fn('sqrt', x), x), (x) => -0.5 * Math.pow(x, -1.5), 2.5],
    ['tanh', (g, x) => g.fn('tanh', x), (x) => 1 - Math.tanh(x) ** 2, -0.4],
    ['log10', (g, x) => g.fn('log10', x), (x) => 1 / (x * Math.LN10), 3],
    ['x^x', (g, x) => g.op('pow', [x, x]), (x) => Math.pow(x, x) * (Math.log(x) + 1), 1.3],
  ];
  for (const [name, build, exact, at] of cases) {
    it(name, () => {
      const g = new Graph();
      const x = g.leaf('x', 0);
      const f = build(g, x);
      const [d] = g.derivative([f], new Map([[x, g.ONE]]));
      const [v] = evaluate(g, [d], { x: [at] });
      expect(v).toBeCloseTo(exact(at), 13);
    });
  }
  it('a lookup table has the slope of its segment', () => {
    const g = new Graph();
    const x = g.leaf('x', 0);
    const f = g.op('lookup', [x, g.c(0), g.c(1), g.c(3), g.c(0), g.c(2), g.c(3)], 3);
    const [d] = g.derivative([f], new Map([[x, g.ONE]]));
    expect(evaluate(g, [f, d], { x: [0.5] })).toEqual([1, 2]);
    expect(evaluate(g, [f, d], { x: [2] })).toEqual([2.5, 0.5]);
    expect(evaluate(g, [f, d], { x: [5] })).toEqual([3, 0]);
  });
});

describe('the boom loop of LANGUAGE.md §1', () => {
  const c = compile(sample('boom.loop'));

  it('joint state: plant states, then the controller\'s hidden realization state', () => {
    expect(c.states.map((s) => s.qualified)).toEqual(['Boom.tilt', 'Boom.rate', 'Steady.drive/err#1']);
    expect(Array.from(c.start)).toEqual([0.5, 0, 0]);
    expect(c.evaluationOrder[0]).toBe('Boom');
  });

  it('the transfer relation kp + kd·s/(1 + s/wf) is realized with D = kp + kd·wf (controllable canonical form)', () => {
    const steady = c.instances[1].system;
    const part = steady.linearParts[0];
    const m = part.matrices(steady.params);
    // (kp + kd s/(1+s/wf)) = D + (kp·wf − D·wf)/(s + wf), D = kp + kd·wf
    expect(m.A[0]).toBe(-25);
    expect(m.D[0]).toBeCloseTo(14 + 2.2 * 25, 12);
    expect(m.C[0]).toBeCloseTo(14 * 25 - (14 + 2.2 * 25) * 25, 10);
  });

  it('the closed-loop Jacobian is the exact one (hand-derived)', () => {
    const x = new Float64Array([0.01, 0.2, 0.001]);
    const J = new Float64Array(9);
    c.jac(0, x, J);
    const arm = 0.6, load = 0.9, drag = 0.02, g = 9.80665, I = load * arm * arm;
    const D = 14 + 2.2 * 25, C = 14 * 25 - D * 25;
    // drive = C·z + D·(0 − tilt) within ±4: not saturated at this x
    expect(Math.abs(C * x[2] - D * x[0])).toBeLessThan(4);
    expect(J[3]).toBeCloseTo((g / arm) * Math.cos(x[0]) - D / I, 10);
    expect(J[4]).toBeCloseTo(-drag / I, 12);
    expect(J[5]).toBeCloseTo(C / I, 10);
    expect(Array.from(J.slice(0, 3))).toEqual([0, 1, 0]);
    expect(Array.from(J.slice(6, 9))).toEqual([-1, 0, -25]);
  });

  it('saturated, the drive no longer depends on the states (slope 0 outside the limit)', () => {
    const J = new Float64Array(9);
    c.jac(0, new Float64Array([0.5, 0, 0]), J);
    expect(J[3]).toBeCloseTo((9.80665 / 0.6) * Math.cos(0.5), 12);
    expect(J[5]).toBe(0);
  });

  it('system functions: f, g and their exact Jacobians at the operating point', () => {
    const boom = c.instances[0].system;
    const x = new Float64Array([0, 0]), u = new Float64Array([0]);
    const A = new Float64Array(4), B = new Float64Array(2), Cm = new Float64Array(2), Dm = new Float64Array(1);
    boom.dfdx(x, u, boom.params, A);
    boom.dfdu(x, u, boom.params, B);
    boom.dgdx(x, u, boom.params, Cm);
    boom.dgdu(x, u, boom.params, Dm);
    const I = 0.9 * 0.36;
    expect(Array.from(A)).toEqual([0, 1, 9.80665 / 0.6, -0.02 / I]);
    expect(B[1]).toBeCloseTo(1 / I, 14);
    expect(Array.from(Cm)).toEqual([1, 0]);
    expect(Dm[0]).toBe(0);
    expect(boom.points[0].name).toBe('upright');
    expect(boom.feedthrough).toEqual([[false]]);
  });

  it('generated code uses mangled names only and reads params from the vector', () => {
    for (const word of ['tilt', 'rate', 'Boom', 'Steady', 'inertia', 'arm']) expect(c.source).not.toMatch(new RegExp(`\\b${word}\\b`));
    const p = c.makeParams(new Map([['Boom.arm', 0.7]]));
    expect(p.ok).toBe(true);
    const dx = new Float64Array(3);
    c.evaluator(p.ok ? p.p : undefined).rhs(0, new Float64Array([0.1, 0, 0]), dx);
    // same code, new params: rate' = (g/arm)·sin(0.1) − 4/(load·arm²) (saturated low? drive = −D·0.1 = −6.9 → −4)
    expect(dx[1]).toBeCloseTo((9.80665 / 0.7) * Math.sin(0.1) - 4 / (0.9 * 0.49), 12);
  });
});

describe('realization and model diagnostics', () => {
  const diag = (text: string) => {
    const a = analyze(text);
    const r = compileAnalysis(a);
    return { r, codes: [...a.diagnostics, ...r.diagnostics].map((d) => d.code) };
  };
  const wrap = (body: string, extra = '') => `controller K { input e [1]
    output y [1]
    ${body} }
    loop L { signal r = 1
      r -> K.e
      ${extra}
      simulate 1 [s] }`;

  it('(s+3)/(s²+3s+2): A = [[0, 1], [−2, −3]], C = [3, 1], poles −1, −2 (REFERENCES.md, Realization)', () => {
    const c = compile(wrap('y / e = (s*1 [s] + 3)/((s*1 [s])^2 + 3*s*1 [s] + 2)'));
    const m = c.instances[0].system.linearParts[0].matrices(c.instances[0].system.params);
    expect(Array.from(m.A)).toEqual([0, 1, -2, -3]);
    expect(Array.from(m.C)).toEqual([3, 1]);
    expect(Array.from(m.B)).toEqual([0, 1]);
  });

  it('LW501 for an improper relation', () => {
    expect(diag(wrap('y / e = s*s*1 [s^2]/(1 + s*1 [s])')).codes).toContain('LW501');
  });
  it('LW502 for s inside a function', () => {
    expect(diag(wrap('y / e = sin(s*1 [s])')).codes).toContain('LW502');
  });
  it('LW504 for a PID derivative without a roll-off', () => {
    expect(diag(wrap('pid y from e { kp = 1, kd = 1 [s] }')).codes).toContain('LW504');
  });
  it('LW507 for anti-windup without a limit on the output', () => {
    expect(diag(wrap('pid y from e { kp = 1, ki = 1 [1/s], antiwindup = 1 [s] }')).codes).toContain('LW507');
  });
  it('LW404 on every arrow of an algebraic loop, with related information naming the others', () => {
    const text = `controller A { input a [1]
      output b [1] = 2*a }
      controller B { input c [1]
      output d [1] = c + 1 }
      loop L { A.b -> B.c
        B.d -> A.a
        simulate 1 [s] }`;
    // found structurally as the text is analysed (check/wiring.ts), so the compiler refuses the loop
    const a = analyze(text);
    const r = compileAnalysis(a);
    const loops = [...a.diagnostics, ...r.diagnostics].filter((d) => d.code === 'LW404');
    expect(loops).toHaveLength(2);
    for (const d of loops) {
      expect(d.related).toHaveLength(1);
      expect(d.related![0].message).toMatch(/algebraic loop/);
    }
    expect(r.loop).toBeUndefined();
  });
});
