// The equilibrium test of one operating point (equilibrium.ts turns it into diagnostics). Each
// declared state derivative is evaluated there and judged against the terms that make it up
// (LANGUAGE.md §5): for x' = a − b + c the residual r = a − b + c is negligible when |r| ≤ 1e-9·(|a| + |b| + |c|) + floor.
//
// "The terms that make it up" are measured through products and quotients too, so that
// x' = (q_in − k·sqrt(h))/area is judged by (|q_in| + |k·sqrt(h)|)/|area| and not by its own
// value: the magnitude of an expression is
//   sum or difference  mag(a) + mag(b)          product  mag(a)·mag(b)
//   quotient           mag(a)/|b|               unary ±  mag(operand)
//   anything else      its absolute value.
// This is the size of the rounding error the evaluation itself can make, scaled by 1e-9.
// The absolute floor is 1e-12 of the state's display unit per second, so that a state whose every
// term is exactly zero is an equilibrium and one that is off by a hair of its own unit is too.
//
// API
//   judgeState(model, i, x, u) → StateResidual
//   equilibriumAt(model, x, u) → StateResidual[]      one per declared state
//   RELATIVE_TOLERANCE, ABSOLUTE_FLOOR

import type { Expr } from '../syntax/ast';
import { additiveTerms } from './ad';
import type { EvalOptions, SystemModel } from './model-system';
import { diffToDisplay } from './model-system';

export const RELATIVE_TOLERANCE = 1e-9;
/** In display units of the state per second. */
export const ABSOLUTE_FLOOR = 1e-12;

export interface StateResidual {
  /** Declared state name. */
  state: string;
  index: number;
  /** Derivative at the point, SI per second. */
  residual: number;
  /** The same in the state's display unit per second. */
  display: number;
  /** Display unit of the residual: `rad/s`, `m/s`, `1/s`. */
  unit: string;
  /** Magnitude of the terms (SI), and the bound the residual was judged against. */
  magnitude: number;
  bound: number;
  /** Values of the top-level additive terms, with their signs (SI). */
  terms: number[];
  negligible: boolean;
  /** False when the derivative could not be evaluated (NaN somewhere). */
  evaluable: boolean;
}

/** Unit text of a derivative: the state's unit over seconds. */
export function perSecond(unit: string): string {
  if (unit === '') return '1/s';
  return /[*/]/.test(unit) ? `(${unit})/s` : `${unit}/s`;
}

/** Magnitude of an expression's constituent terms (see the header). */
function magnitude(model: SystemModel, e: Expr, x: ArrayLike<number>, u: ArrayLike<number>, opts: EvalOptions): number {
  const val = (q: Expr): number => model.evalAt(q, x, u, opts).v;
  const walk = (q: Expr): number => {
    if (q.kind === 'binary') {
      if (q.op === '+' || q.op === '-') return walk(q.left) + walk(q.right);
      if (q.op === '*') return walk(q.left) * walk(q.right);
      if (q.op === '/') return walk(q.left) / Math.abs(val(q.right));
    }
    if (q.kind === 'unary' && (q.op === '-' || q.op === '+')) return walk(q.operand);
    return Math.abs(val(q));
  };
  return walk(e);
}

export function judgeState(model: SystemModel, i: number, x: ArrayLike<number>, u: ArrayLike<number>, opts: EvalOptions = {}): StateResidual {
  const decl = model.states[i];
  const unit = model.stateUnits[i];
  const eq = model.sym.derivs.get(decl.name.name);
  const base = { state: decl.name.name, index: i, unit: perSecond(unit.text) };
  if (!eq) return { ...base, residual: NaN, display: NaN, magnitude: NaN, bound: NaN, terms: [], negligible: true, evaluable: false };
  const r = model.evaluate(x, u, opts).dx[i].v;
  const terms = additiveTerms(eq.value).map((t) => t.sign * model.evalAt(t.expr, x, u, opts).v);
  const mag = magnitude(model, eq.value, x, u, opts);
  const floor = ABSOLUTE_FLOOR * (Number.isFinite(unit.scale) ? unit.scale : 1);
  const bound = RELATIVE_TOLERANCE * mag + floor;
  const evaluable = Number.isFinite(r) && Number.isFinite(mag);
  return { ...base, residual: r, display: diffToDisplay(r, unit), magnitude: mag, bound, terms, negligible: !evaluable || Math.abs(r) <= bound, evaluable };
}

export function equilibriumAt(model: SystemModel, x: ArrayLike<number>, u: ArrayLike<number>, opts: EvalOptions = {}): StateResidual[] {
  return model.states.map((_, i) => judgeState(model, i, x, u, opts));
}
