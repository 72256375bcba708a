// Trim: find the inputs (and, when asked, some states) that make an operating point an
// equilibrium. Newton's method on the declared state derivatives F(z) = 0 in the free unknowns z,
// with the exact Jacobian from forward-mode AD (ad.ts), the minimum-norm least-squares step
// (pseudo-inverse by SVD, so more or fewer unknowns than equations are both fine) and a halving
// line search on ‖F‖ that also backs off steps leaving the domain (NaN, e.g. sqrt of a negative
// level). It converges when every state passes the equilibrium test of equilibrium.ts.
//
// Limits are ignored while searching (a clamped input has slope 0 and would stall Newton); a
// result outside an input's limit is reported in `outsideLimits`: no input within the limit
// holds that point.
//
// API
//   trim(model, start: { x, u }, opts?) → TrimResult

import { Matrix, pseudoInverse } from 'ml-matrix';
import { equilibriumAt, type StateResidual } from './model-residual';
import type { SystemModel } from './model-system';

export interface TrimOptions {
  /** Inputs Newton may change, by name (default: every input). */
  inputs?: string[];
  /** States Newton may change, by name (default: none). */
  states?: string[];
  maxIterations?: number;
}

export interface TrimResult {
  ok: boolean;
  x: number[];
  u: number[];
  residuals: StateResidual[];
  iterations: number;
  /** Names of free inputs that ended outside their limit. */
  outsideLimits: string[];
  message?: string;
}

const norm = (v: number[]): number => Math.hypot(...v);

export function trim(model: SystemModel, start: { x: ArrayLike<number>; u: ArrayLike<number> }, opts: TrimOptions = {}): TrimResult {
  const nx = model.states.length, nu = model.inputs.length;
  const x = Array.from(start.x), u = Array.from(start.u);
  const inputNames = model.inputs.map((d) => d.name.name), stateNames = model.states.map((d) => d.name.name);
  const freeU = (opts.inputs ?? inputNames).map((n) => inputNames.indexOf(n)).filter((i) => i >= 0);
  const freeX = (opts.states ?? []).map((n) => stateNames.indexOf(n)).filter((i) => i >= 0);
  // Column of each unknown in the AD gradient (x first, then u).
  const cols = [...freeX, ...freeU.map((i) => nx + i)];
  const evalOpts = { ignoreLimits: true } as const;
  const F = (xx: number[], uu: number[]): number[] => model.evaluate(xx, uu, evalOpts).dx.map((d) => d.v);
  const done = (xx: number[], uu: number[]): StateResidual[] => equilibriumAt(model, xx, uu, evalOpts);
  const result = (ok: boolean, iterations: number, message?: string): TrimResult => {
    const outsideLimits = model.limits
      .filter((l) => l.on === 'input' && freeU.includes(l.index) && !(u[l.index] >= l.lo && u[l.index] <= l.hi))
      .map((l) => l.name);
    return { ok: ok && outsideLimits.length === 0, x, u, residuals: done(x, u), iterations, outsideLimits, message };
  };
  if (cols.length === 0 || nx === 0) return result(done(x, u).every((r) => r.negligible && r.evaluable), 0, 'nothing to adjust');
  const maxIt = opts.maxIterations ?? 50;
  for (let it = 0; it < maxIt; it++) {
    const res = done(x, u);
    if (res.every((r) => r.evaluable && r.negligible)) return result(true, it);
    const ev = model.evaluate(x, u, { ...evalOpts, seedXU: true });
    const f = ev.dx.map((d) => d.v);
    if (!f.every(Number.isFinite)) return result(false, it, 'the state equations cannot be evaluated at this point');
    const J = new Matrix(ev.dx.map((d) => cols.map((c) => d.d[c])));
    const step = pseudoInverse(J).mmul(Matrix.columnVector(f)).to1DArray();
    if (!step.every(Number.isFinite) || step.every((s) => s === 0)) return result(false, it, 'no input changes these state derivatives');
    const f0 = norm(f);
    let lambda = 1;
    let accepted = false;
    for (let half = 0; half < 40; half++) {
      const xt = x.slice(), ut = u.slice();
      cols.forEach((c, j) => {
        if (c < nx) xt[c] -= lambda * step[j];
        else ut[c - nx] -= lambda * step[j];
      });
      const ft = F(xt, ut);
      if (ft.every(Number.isFinite) && norm(ft) < f0) {
        x.splice(0, nx, ...xt);
        u.splice(0, nu, ...ut);
        accepted = true;
        break;
      }
      lambda /= 2;
    }
    if (!accepted) {
      const ok = done(x, u).every((r) => r.evaluable && r.negligible);
      return result(ok, it, ok ? undefined : 'Newton made no progress: no equilibrium with these inputs near this point');
    }
  }
  const ok = done(x, u).every((r) => r.evaluable && r.negligible);
  return result(ok, maxIt, ok ? undefined : 'Newton did not converge');
}
