// A, B, C, D of one compiled system instance at a point, from the model compiler's exact
// Jacobians (symbolic differentiation of the expression graph, model/system.ts): A = ∂f/∂x,
// B = ∂f/∂u, C = ∂g/∂x, D = ∂g/∂u. Limits are clamps there: slope 1 inside, 0 outside.
//
// Also the hidden states that hold a point: a plant's operating point gives its declared states;
// the states of its transfer relations, pid laws and linear blocks take the values that make their
// own derivatives zero (Newton with the exact Jacobian and minimum-norm least-squares steps, so an
// integrator that nothing pins keeps its start value).
//
// API
//   systemJacobians(sys, x, u, p?) → StateSpace           (row-major number[][] matrices)
//   toMat(F, r, c) → Mat;  fromMat(M) → Float64Array
//   completeHidden(sys, x, u, p?) → { x, residual }        hidden states solved at (x, u)
//   methodOf(sys) → DiscretizeMethod | undefined           a sampled controller's method ('hold' is zoh)

import { Matrix, pseudoInverse } from 'ml-matrix';
import type { CompiledSystem } from '../model/types';
import type { Mat } from './dense';
import type { DiscretizeMethod } from './discretize';
import type { StateSpace } from './lti';

export function toMat(F: ArrayLike<number>, r: number, c: number): Mat {
  return Array.from({ length: r }, (_, i) => Array.from({ length: c }, (_, j) => F[i * c + j]));
}

export function fromMat(M: Mat): Float64Array {
  const r = M.length, c = r ? M[0].length : 0;
  const out = new Float64Array(r * c);
  for (let i = 0; i < r; i++) for (let j = 0; j < c; j++) out[i * c + j] = M[i][j];
  return out;
}

export function systemJacobians(sys: CompiledSystem, x: Float64Array, u: Float64Array, p: Float64Array = sys.params): StateSpace {
  const nx = sys.states.length, nu = sys.inputs.length, ny = sys.outputs.length;
  const A = new Float64Array(nx * nx), B = new Float64Array(nx * nu), C = new Float64Array(ny * nx), D = new Float64Array(ny * nu);
  sys.dfdx(x, u, p, A);
  sys.dfdu(x, u, p, B);
  sys.dgdx(x, u, p, C);
  sys.dgdu(x, u, p, D);
  return { A: toMat(A, nx, nx), B: toMat(B, nx, nu), C: toMat(C, ny, nx), D: toMat(D, ny, nu) };
}

/** The hidden states (after the declared ones) that make their derivatives zero at (x, u). */
export function completeHidden(sys: CompiledSystem, x: Float64Array, u: Float64Array, p: Float64Array = sys.params): { x: Float64Array; residual: number } {
  const nx = sys.states.length, nd = sys.declaredStates;
  const out = Float64Array.from(x);
  const hidden = Array.from({ length: nx - nd }, (_, i) => nd + i);
  const dx = new Float64Array(nx), J = new Float64Array(nx * nx);
  const res = (): number[] => {
    sys.f(out, u, p, dx);
    return hidden.map((i) => dx[i]);
  };
  if (!hidden.length) return { x: out, residual: 0 };
  let r = res();
  for (let it = 0; it < 20 && r.some((v) => v !== 0); it++) {
    sys.dfdx(out, u, p, J);
    const Jh = new Matrix(hidden.map((i) => hidden.map((j) => J[i * nx + j])));
    const step = pseudoInverse(Jh).mmul(Matrix.columnVector(r)).to1DArray();
    if (!step.every(Number.isFinite)) break;
    const before = Math.hypot(...r);
    hidden.forEach((i, k) => (out[i] -= step[k]));
    r = res();
    if (!(Math.hypot(...r) < before)) break;
  }
  return { x: out, residual: Math.hypot(...r) };
}

export function methodOf(sys: CompiledSystem): DiscretizeMethod | undefined {
  const m = sys.sample?.method;
  if (!m) return undefined;
  return m === 'hold' ? 'zoh' : m;
}
