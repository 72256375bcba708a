// The method coefficients against the order conditions they must satisfy.
//
// Runge–Kutta: Σ b_i Φ_i(τ) = 1/γ(τ) for every rooted tree τ up to the order (Butcher; Hairer,
// Nørsett & Wanner, Solving ODEs I, §II.2, Theorem 2.13 [memory]); for a continuous extension
// Σ b_i(θ) Φ_i(τ) = θ^|τ|/γ(τ) (HNW I §II.6 [memory]).
// Rosenbrock: the same with α_ij on vertices with several sons and β_ij = α_ij + γ_ij (diagonal
// included) on vertices with one son (Hairer & Wanner, Solving ODEs II, §IV.7, Table 7.1
// [memory]); stability function R(z) = 1 + z bᵀ(I − zB)⁻¹𝟙 with B = (β_ij) (HW II §IV.7
// [memory]); L-stability = A-stability and R(∞) = 0 (HW II §IV.3).
// The RODAS numbers are stored in the transformed form and converted back here:
// Γ = (I/γ − C)⁻¹, (α_ij) = A Γ, b = m Γ (HW II §IV.7, the relations after (7.25) [memory]).

import { describe, expect, test } from 'vitest';
import { DOPRI5 } from '../../language/src/sim/dopri5-tableau';
import { RODAS } from '../../language/src/sim/rosenbrock-tableau';

type Tree = Tree[];

const key = (t: Tree): string => '[' + t.map(key).sort().join('') + ']';

/** All rooted trees with 1..maxOrder vertices, by order (grown leaf by leaf, deduplicated). */
function treesUpTo(maxOrder: number): Tree[][] {
  const byOrder: Tree[][] = [[], [[]]];
  for (let p = 2; p <= maxOrder; p++) {
    const seen = new Map<string, Tree>();
    const grow = (t: Tree): Tree[] => [[...t, []], ...t.flatMap((c, i) => grow(c).map((g) => t.map((x, j) => (j === i ? g : x))))];
    for (const t of byOrder[p - 1]) for (const g of grow(t)) seen.set(key(g), g);
    byOrder.push([...seen.values()]);
  }
  return byOrder;
}
const order = (t: Tree): number => 1 + t.reduce((s, c) => s + order(c), 0);
const density = (t: Tree): number => order(t) * t.reduce((s, c) => s * density(c), 1);

type Mat = number[][];
const matVec = (m: Mat, v: number[]): number[] => m.map((row) => row.reduce((s, a, j) => s + a * v[j], 0));
const dot = (a: number[], b: number[]): number => a.reduce((s, x, i) => s + x * b[i], 0);

/** Elementary weights Φ_i(τ) of an explicit Runge–Kutta matrix. */
function phiRK(t: Tree, A: Mat): number[] {
  let v = A.map(() => 1);
  for (const c of t) {
    const w = matVec(A, phiRK(c, A));
    v = v.map((x, i) => x * w[i]);
  }
  return v;
}

/** Elementary weights of a Rosenbrock method: β on one-son vertices, α otherwise. */
function phiRos(t: Tree, alpha: Mat, beta: Mat): number[] {
  if (t.length === 1) return matVec(beta, phiRos(t[0], alpha, beta));
  let v = alpha.map(() => 1);
  for (const c of t) {
    const w = matVec(alpha, phiRos(c, alpha, beta));
    v = v.map((x, i) => x * w[i]);
  }
  return v;
}

const TREES = treesUpTo(5);

test('tree enumeration: 1, 1, 2, 4, 9 rooted trees of orders 1..5 (HNW I §II.2, Table 2.1 [memory])', () => {
  expect(TREES.slice(1).map((ts) => ts.length)).toEqual([1, 1, 2, 4, 9]);
});

describe('Dormand–Prince 5(4)', () => {
  const s = DOPRI5.stages;
  const A: Mat = Array.from({ length: s }, (_, i) => Array.from({ length: s }, (_, j) => (j < i ? (DOPRI5.a[i][j] ?? 0) : 0)));
  const b = [...DOPRI5.b];
  const bHat = b.map((x, i) => x - DOPRI5.e[i]);

  test('row sums of A are the nodes c', () => {
    A.forEach((row, i) => expect(row.reduce((x, y) => x + y, 0)).toBeCloseTo(DOPRI5.c[i], 15));
  });

  test('FSAL: the last row of A is b', () => {
    A[s - 1].forEach((a, j) => expect(a).toBe(b[j]));
  });

  test('b satisfies all 17 conditions of order 5; the embedded weights all 8 of order 4 and not all of order 5', () => {
    for (let p = 1; p <= 5; p++) {
      for (const t of TREES[p]) {
        expect(Math.abs(dot(b, phiRK(t, A)) - 1 / density(t))).toBeLessThan(1e-15);
        const embedded = Math.abs(dot(bHat, phiRK(t, A)) - 1 / density(t));
        if (p <= 4) expect(embedded).toBeLessThan(1e-15);
      }
    }
    const worst5 = Math.max(...TREES[5].map((t) => Math.abs(dot(bHat, phiRK(t, A)) - 1 / density(t))));
    expect(worst5).toBeGreaterThan(1e-5); // a genuine 4th-order estimator
  });

  test('the dense output has order 4 at every θ and reproduces both ends', () => {
    const e1 = b.map((_, i) => (i === 0 ? 1 : 0));
    const e7 = b.map((_, i) => (i === s - 1 ? 1 : 0));
    // Weights on h·k_i of r1 + θ(r2 + (1−θ)(r3 + θ(r4 + (1−θ) r5))) minus y0.
    const bTheta = (th: number): number[] =>
      b.map((bi, i) => {
        const r2 = bi;
        const r3 = e1[i] - r2;
        const r4 = r2 - e7[i] - r3;
        const r5 = DOPRI5.d[i];
        return th * (r2 + (1 - th) * (r3 + th * (r4 + (1 - th) * r5)));
      });
    for (const th of [0.1, 0.25, 0.5, 0.73, 0.9]) {
      const bt = bTheta(th);
      for (let p = 1; p <= 4; p++) for (const t of TREES[p]) expect(Math.abs(dot(bt, phiRK(t, A)) - th ** p / density(t))).toBeLessThan(1e-15);
    }
    bTheta(0).forEach((w) => expect(w).toBe(0));
    bTheta(1).forEach((w, i) => expect(w).toBeCloseTo(b[i], 15));
  });
});

describe('RODAS 4(3)', () => {
  const s = RODAS.stages;
  const g = RODAS.gamma;
  const lower = (rows: readonly (readonly number[])[]): Mat => Array.from({ length: s }, (_, i) => Array.from({ length: s }, (_, j) => (j < i ? (rows[i][j] ?? 0) : 0)));
  const Am = lower(RODAS.a);
  const Cm = lower(RODAS.c);
  // Γ⁻¹ = I/γ − C is lower triangular: invert by forward substitution, column by column.
  const Ginv: Mat = Cm.map((row, i) => row.map((c, j) => (i === j ? 1 / g : -c)));
  const G: Mat = Array.from({ length: s }, () => new Array<number>(s).fill(0));
  for (let col = 0; col < s; col++) {
    for (let i = 0; i < s; i++) {
      let acc = i === col ? 1 : 0;
      for (let k = 0; k < i; k++) acc -= Ginv[i][k] * G[k][col];
      G[i][col] = acc / Ginv[i][i];
    }
  }
  const mul = (a: Mat, bm: Mat): Mat => a.map((row) => bm[0].map((_, j) => row.reduce((acc, x, k) => acc + x * bm[k][j], 0)));
  const vecMat = (v: readonly number[], m: Mat): number[] => m[0].map((_, j) => v.reduce((acc, x, k) => acc + x * m[k][j], 0));
  const alpha = mul(Am, G);
  const beta: Mat = alpha.map((row, i) => row.map((x, j) => x + G[i][j]));
  const b = vecMat(RODAS.m, G);
  const bHat = vecMat(RODAS.mHat, G);

  test('diagonal of Γ is γ; row sums give the stage times α_i and the time-derivative weights γ_i', () => {
    for (let i = 0; i < s; i++) {
      expect(G[i][i]).toBeCloseTo(g, 14);
      expect(alpha[i].reduce((x, y) => x + y, 0)).toBeCloseTo(RODAS.alpha[i], 13);
      expect(G[i].reduce((x, y) => x + y, 0)).toBeCloseTo(RODAS.gammaSum[i], 13);
    }
  });

  test('order 4 for the solution, order 3 and not 4 for the embedded method', () => {
    for (let p = 1; p <= 4; p++) {
      for (const t of TREES[p]) {
        expect(Math.abs(dot(b, phiRos(t, alpha, beta)) - 1 / density(t))).toBeLessThan(1e-13);
        if (p <= 3) expect(Math.abs(dot(bHat, phiRos(t, alpha, beta)) - 1 / density(t))).toBeLessThan(1e-13);
      }
    }
    const worst4 = Math.max(...TREES[4].map((t) => Math.abs(dot(bHat, phiRos(t, alpha, beta)) - 1 / density(t))));
    expect(worst4).toBeGreaterThan(1e-3);
  });

  test('stiffly accurate: b is the last row of B, the embedded weights the row before', () => {
    for (let j = 0; j < s; j++) {
      expect(Math.abs(b[j] - beta[s - 1][j])).toBeLessThan(1e-13);
      expect(Math.abs(bHat[j] - beta[s - 2][j])).toBeLessThan(1e-13);
    }
  });

  test('the dense output has order 3 at every s', () => {
    const d2 = [...RODAS.d2, 0];
    const d3 = [...RODAS.d3, 0];
    for (const th of [0.1, 0.25, 0.5, 0.73, 0.9]) {
      const w = RODAS.m.map((mi, i) => th * mi + th * (1 - th) * d2[i] + th * th * (1 - th) * d3[i]);
      const bt = vecMat(w, G);
      for (let p = 1; p <= 3; p++) for (const t of TREES[p]) expect(Math.abs(dot(bt, phiRos(t, alpha, beta)) - th ** p / density(t))).toBeLessThan(1e-13);
    }
  });

  /** |R(z)| for complex z = x + iy, by complex forward substitution with the lower triangular I − zB. */
  function stability(x: number, y: number, weights: number[]): number {
    const re: number[] = [];
    const im: number[] = [];
    for (let i = 0; i < s; i++) {
      // (I − zB) v = 𝟙 → v_i = (1 + z Σ_{j<i} β_ij v_j) / (1 − z β_ii)
      let sr = 0;
      let si = 0;
      for (let j = 0; j < i; j++) {
        sr += beta[i][j] * re[j];
        si += beta[i][j] * im[j];
      }
      const nr = 1 + (x * sr - y * si);
      const ni = x * si + y * sr;
      const dr = 1 - x * beta[i][i];
      const di = -y * beta[i][i];
      const den = dr * dr + di * di;
      re.push((nr * dr + ni * di) / den);
      im.push((ni * dr - nr * di) / den);
    }
    let wr = 0;
    let wi = 0;
    for (let i = 0; i < s; i++) {
      wr += weights[i] * re[i];
      wi += weights[i] * im[i];
    }
    return Math.hypot(1 + (x * wr - y * wi), x * wi + y * wr);
  }

  test('L-stable: |R| ≤ 1 on the imaginary axis and in the left half-plane, R(z) → 0 as z → −∞', () => {
    for (let e = -3; e <= 8; e += 0.05) {
      expect(stability(0, 10 ** e, b)).toBeLessThanOrEqual(1 + 1e-12);
      expect(stability(-(10 ** e), 0, b)).toBeLessThanOrEqual(1 + 1e-12);
    }
    for (let xr = -50; xr <= 0; xr += 0.5) for (let yi = 0; yi <= 50; yi += 0.5) expect(stability(xr, yi, b)).toBeLessThanOrEqual(1 + 1e-12);
    expect(stability(-1e12, 0, b)).toBeLessThan(1e-9);
    expect(stability(-1e12, 0, bHat)).toBeLessThan(1e-9);
  });
});
