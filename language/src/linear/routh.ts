// Routh–Hurwitz array of a real polynomial (E. J. Routh, A Treatise on the Stability of a Given
// State of Motion, 1877; A. Hurwitz, Math. Ann. 46, 1895): the number of sign changes in the first
// column equals the number of roots in the open right half plane. Used as an independent check
// of the eigenvalue verdict.
//
// Rows: r0 = [a0, a2, a4, …], r1 = [a1, a3, …], r_i[j] = (r_{i−1}[0]·r_{i−2}[j+1] − r_{i−2}[0]·r_{i−1}[j+1]) / r_{i−1}[0].
// An entry below 1e-12 of the size of the terms that formed it is set to exactly zero.
// Special cases (common practice, e.g. Ogata, Modern Control Engineering §5-6 [memory]):
//  - a zero first entry in a row that is not all zero: replaced by ε > 0 (ε = 1e-9 × the largest
//    magnitude in the two rows above), the count being the limit ε → 0⁺;
//  - an all-zero row: replaced by the coefficients of the derivative of the auxiliary polynomial
//    formed from the row above. The auxiliary polynomial (degree d) holds the roots that are
//    symmetric about the origin; with r sign changes from its row down, it has d − 2r roots on the
//    imaginary axis.
// Leading zeros are dropped, a negative leading coefficient flips all signs, and trailing zeros are
// roots at the origin (counted on the axis). Repeated axis roots are not told apart from simple
// ones here (the eigenvalue path in poles.ts does that).
//
// API
//   routh(coeffs) → RouthResult

export interface RouthResult {
  ok: boolean;
  /** Polynomial degree after dropping leading zeros (and the factors s^k it counts separately). */
  degree: number;
  rows: number[][];
  firstColumn: number[];
  /** Roots in the open right half plane (sign changes of the first column). */
  rhp: number;
  /** Roots on the imaginary axis found by an auxiliary polynomial, plus roots at the origin. */
  axis: number;
  lhp: number;
  verdict: 'stable' | 'marginal' | 'unstable';
  /** Row indices where ε replaced a zero first entry. */
  epsilonRows: number[];
  /** Auxiliary polynomials met (highest power first, in s), with the row they came from. */
  auxiliary: { row: number; poly: number[] }[];
  problem?: 'non-finite' | 'zero-polynomial';
}

const ROUNDING = 1e-12;
const EPSILON = 1e-9;

function signChanges(col: number[]): number {
  let n = 0;
  for (let i = 1; i < col.length; i++) if (Math.sign(col[i]) !== Math.sign(col[i - 1]) && col[i] !== 0 && col[i - 1] !== 0) n++;
  return n;
}

export function routh(coeffs: number[]): RouthResult {
  const base = { rows: [], firstColumn: [], rhp: 0, axis: 0, lhp: 0, verdict: 'unstable' as const, epsilonRows: [], auxiliary: [] };
  if (!coeffs.every(Number.isFinite)) return { ok: false, degree: 0, ...base, problem: 'non-finite' };
  let a = coeffs.slice();
  while (a.length > 0 && a[0] === 0) a.shift();
  if (a.length === 0) return { ok: false, degree: 0, ...base, problem: 'zero-polynomial' };
  if (a[0] < 0) a = a.map((c) => -c);
  let origin = 0;
  while (a.length > 1 && a[a.length - 1] === 0) { a.pop(); origin++; }
  const n = a.length - 1;
  const w = Math.floor(n / 2) + 1;
  const row = (start: number): number[] => Array.from({ length: w }, (_, j) => a[start + 2 * j] ?? 0);
  const rows: number[][] = [row(0)];
  if (n >= 1) rows.push(row(1));
  const epsilonRows: number[] = [];
  const auxiliary: { row: number; poly: number[] }[] = [];
  const fix = (i: number): void => {
    const r = rows[i];
    if (r.every((v) => v === 0)) {
      // Auxiliary polynomial of degree d = n − (i − 1) from the row above; replace by its derivative.
      const above = rows[i - 1], d = n - (i - 1);
      const poly: number[] = [];
      above.forEach((c, k) => { if (d - 2 * k >= 0) { poly.push(c); if (d - 2 * k > 0) poly.push(0); } });
      auxiliary.push({ row: i - 1, poly });
      rows[i] = above.map((c, k) => (d - 2 * k > 0 ? (d - 2 * k) * c : 0));
    }
    if (rows[i][0] === 0) {
      const big = Math.max(...rows[i - 1].map(Math.abs), ...rows[i].map(Math.abs));
      rows[i][0] = EPSILON * (big > 0 ? big : 1);
      epsilonRows.push(i);
    }
  };
  if (n >= 1) fix(1);
  for (let i = 2; i <= n; i++) {
    const r0 = rows[i - 2], r1 = rows[i - 1];
    const next = new Array<number>(w).fill(0);
    for (let j = 0; j + 1 < w; j++) {
      const t1 = r1[0] * r0[j + 1], t2 = r0[0] * r1[j + 1];
      const v = (t1 - t2) / r1[0];
      next[j] = Math.abs(t1 - t2) <= ROUNDING * (Math.abs(t1) + Math.abs(t2)) ? 0 : v;
    }
    rows.push(next);
    fix(i);
  }
  const firstColumn = rows.map((r) => r[0]);
  const rhp = signChanges(firstColumn);
  let axis = origin;
  if (auxiliary.length > 0) {
    const first = auxiliary[0];
    const d = first.poly.length - 1;
    axis += d - 2 * signChanges(firstColumn.slice(first.row));
  }
  const lhp = n + origin - rhp - axis;
  const verdict = rhp > 0 ? 'unstable' : axis > 0 ? 'marginal' : 'stable';
  return { ok: true, degree: n + origin, rows, firstColumn, rhp, axis, lhp, verdict, epsilonRows, auxiliary };
}
