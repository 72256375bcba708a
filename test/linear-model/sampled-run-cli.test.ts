// Sampled controllers' discrete matrices, the linear run of `compare linear`, the AD evaluator's
// derivatives, and `loopwright linearize`.

import { describe, expect, test } from 'vitest';
import { readFileSync } from 'node:fs';
import { analyze } from '../../language/src/analysis';
import { linearizeSystem } from '../../language/src/linear/linearize';
import { evalDual, seed, type AdEnv } from '../../language/src/linear/ad';
import { linearRun, linearRunner } from '../../language/src/linear/linear-run';
import { loopLinear } from '../../language/src/linear/loop-linear';
import { compileAnalysis } from '../../language/src/model/compile';
import { simulate } from '../../language/src/sim/run';
import { runCli } from '../../language/src/cli/run';
import type { Expr } from '../../language/src/syntax/ast';
import { analysed, sample } from './helpers';

const LAG = (method: string) => `
controller Smooth {
  param tau = 1 [s]
  input e [V]
  output y [V]
  y / e = 1/(tau*s + 1)
  sample every 0.1 [s] by ${method}
}
`;

describe('discrete matrices of a sampled first-order lag 1/(τs+1), τ = 1 s, T = 0.1 s (REFERENCES.md, Discretization)', () => {
  test('zero-order hold: Ad = e^(−T/τ), Cd·Bd = 1 − e^(−T/τ) (realization-invariant form of Bd)', () => {
    const lin = linearizeSystem(analysed(LAG('hold')), 'Smooth');
    const d = lin.discrete!;
    expect(d.method).toBe('zoh');
    expect(d.period).toBe(0.1);
    expect(d.A[0][0]).toBeCloseTo(0.9048374180359595, 15);
    expect(d.C[0][0] * d.B[0][0]).toBeCloseTo(0.09516258196404043, 15);
    expect(d.poles[0].re).toBeCloseTo(Math.exp(-0.1), 15);
    expect(d.verdict).toBe('stable');
  });

  test('Tustin: pole (2τ − T)/(2τ + T) of T(z+1)/((2τ+T)z + (T−2τ))', () => {
    const d = linearizeSystem(analysed(LAG('tustin')), 'Smooth').discrete!;
    expect(d.method).toBe('tustin');
    expect(d.A[0][0]).toBeCloseTo((2 - 0.1) / (2 + 0.1), 14);
    // DC gain Cd (I − Ad)⁻¹ Bd + Dd = 1
    expect((d.C[0][0] * d.B[0][0]) / (1 - d.A[0][0]) + d.D[0][0]).toBeCloseTo(1, 14);
  });
});

describe('forward-mode AD over expressions (derivative rules: common practice)', () => {
  const parseExpr = (src: string): Expr => {
    const an = analyze(`plant Q {\n param c = 2\n state x [1]\n x' = ${src}\n}\n`);
    const sym = an.symbols.systems.get('Q')!;
    return sym.derivs.get('x')!.value;
  };
  const cases: [string, (x: number) => number, (x: number) => number][] = [
    ['sin(x)*exp(x)', (x) => Math.sin(x) * Math.exp(x), (x) => Math.exp(x) * (Math.sin(x) + Math.cos(x))],
    ['x^3 - 2*x', (x) => x ** 3 - 2 * x, (x) => 3 * x * x - 2],
    ['sqrt(x)/(1 + x)', (x) => Math.sqrt(x) / (1 + x), (x) => (1 - x) / (2 * Math.sqrt(x) * (1 + x) ** 2)],
    ['atan2(x, 1 - x)', (x) => Math.atan2(x, 1 - x), (x) => 1 / (x * x + (1 - x) ** 2)],
    ['log(x) + tanh(x)', (x) => Math.log(x) + Math.tanh(x), (x) => 1 / x + 1 - Math.tanh(x) ** 2],
    ['clamp(x, 0, 0.5)', (x) => Math.min(0.5, Math.max(0, x)), (x) => (x >= 0 && x <= 0.5 ? 1 : 0)],
    ['lookup(x, [0, 1, 2], [0, 3, 4])', (x) => (x < 1 ? 3 * x : 3 + (x - 1)), (x) => (x < 1 ? 3 : 1)],
    ['x^x', (x) => x ** x, (x) => x ** x * (Math.log(x) + 1)],
  ];
  for (const [src, f, df] of cases) {
    test(src, () => {
      const e = parseExpr(src);
      for (const x of [0.3, 0.7, 1.4]) {
        const env: AdEnv = { k: 1, name: (n) => (n.kind === 'name' && n.name === 'x' ? seed(x, 1, 0) : undefined) };
        const d = evalDual(e, env);
        expect(d.v).toBeCloseTo(f(x), 13);
        expect(d.d[0]).toBeCloseTo(df(x), 12);
      }
    });
  }
});

describe('linear run of compare linear', () => {
  test('close to the nonlinear run for a small step on the tank, on the same grid', () => {
    const text = sample('tank.loop').replace('step(20 [s], 0.1 [m])', 'step(20 [s], 0.001 [m])').replace('start Tank.level = 1.0 [m]', 'start Tank.level = 1.2 [m]');
    const a = analysed(text);
    const c = compileAnalysis(a).loop!;
    const runs = simulate(c, { mode: 'compare', linear: linearRunner(a) });
    const [nl, li] = runs;
    expect(li.kind).toBe('linear');
    expect(li.label).toBe('linear');
    expect(li.t).toEqual(nl.t);
    const y1 = nl.signals['Tank.level'], y2 = li.signals['Tank.level'];
    const err = Math.max(...y1.map((v, i) => Math.abs(v - y2[i])));
    expect(err).toBeLessThan(2e-3 * Math.max(...y1.map((v) => Math.abs(v - 1.2))) + 1e-4);
  });

  test('a step input is followed exactly: the response of x\' = −x + r to a unit step at 0.35 s is 1 − e^−(t−0.35) (derived)', () => {
    const text = `
plant Lag {
  state x [V]
  input r [V]
  output y [V] = x
  x' = (r - x) / 1 [s]
  operating point rest { x = 0 [V], r = 0 [V] }
}
controller Pass {
  input a [V]
  output b [V] = a
}
loop Feed {
  signal w = step(0.35 [s], 1 [V])
  w -> Pass.a
  Pass.b -> Lag.r
  simulate 2 [s] { points = 21 }
}
`;
    const lin = loopLinear(analysed(text));
    const t = Array.from({ length: 21 }, (_, i) => i / 10);
    const run = linearRun(lin, { t });
    run.signals['Lag.y'].forEach((v, i) => expect(v).toBeCloseTo(t[i] < 0.35 ? 0 : 1 - Math.exp(-(t[i] - 0.35)), 13));
  });
});

describe('loopwright linearize', () => {
  const io = () => {
    const out: string[] = [], err: string[] = [];
    return { out, err, io: { out: (s: string) => out.push(s), err: (s: string) => err.push(s), readFile: (p: string) => readFileSync(p, 'utf8'), writeFile() {}, isTTY: false, cwd: '.' } };
  };
  const boom = new URL('../../samples/boom.loop', import.meta.url).pathname;

  test('--system prints labelled matrices, poles and the verdict', async () => {
    const r = io();
    expect(await runCli(['linearize', boom, '--system', 'Boom', '--point', 'upright'], r.io)).toBe(0);
    const text = r.out.join('\n');
    expect(text).toContain('tilt [rad]');
    expect(text).toContain('rate [rad/s]');
    expect(text).toMatch(/verdict: unstable \(1 pole in the right half-plane\)/);
  });

  test('--loop --json gives the facade data with margins', async () => {
    const r = io();
    expect(await runCli(['linearize', boom, '--loop', 'Upright', '--json'], r.io)).toBe(0);
    const j = JSON.parse(r.out.join('\n'));
    expect(j.verdict).toBe('stable');
    expect(j.margins[0].input).toBe('Boom.drive');
    expect(j.margins[0].gain).toBeNull();
    expect(j.poles).toHaveLength(3);
  });

  test('usage errors exit 2; a model with errors exits 1', async () => {
    expect(await runCli(['linearize', boom], io().io)).toBe(2);
    expect(await runCli(['linearize', boom, '--system', 'Nope'], io().io)).toBe(2);
    expect(await runCli(['linearize', boom, '--loop', 'Upright', '--point', 'x'], io().io)).toBe(2);
    expect(await runCli(['linearize', '/nonexistent.loop', '--loop', 'Upright'], io().io)).toBe(2);
    const bad = { ...io().io, readFile: () => 'plant P {\n state x [m]\n x\' = y\n}\n' };
    expect(await runCli(['linearize', 'p.loop', '--system', 'P'], bad)).toBe(1);
  });
});
