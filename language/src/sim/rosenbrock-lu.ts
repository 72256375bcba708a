// LU decomposition with partial pivoting (Doolittle, row interchanges), in place on a row-major
// n×n Float64Array: Golub & Van Loan, Matrix Computations, 4th ed., Algorithm 3.4.1 (Gaussian
// elimination with partial pivoting) [memory]. The unit lower factor L sits below the diagonal,
// U on and above it; piv[k] is the row swapped with row k at step k.

/** Factorizes a in place. Returns false when a pivot is zero or not finite (a is then unusable). */
export function luFactor(a: Float64Array, n: number, piv: Int32Array): boolean {
  for (let k = 0; k < n; k++) {
    let p = k;
    let big = Math.abs(a[k * n + k]);
    for (let i = k + 1; i < n; i++) {
      const v = Math.abs(a[i * n + k]);
      if (v > big) {
        big = v;
        p = i;
      }
    }
    if (!(big > 0) || big === Infinity) return false;
    piv[k] = p;
    if (p !== k) {
      const rk = k * n;
      const rp = p * n;
      for (let j = 0; j < n; j++) {
        const tmp = a[rk + j];
        a[rk + j] = a[rp + j];
        a[rp + j] = tmp;
      }
    }
    const rk = k * n;
    const pivot = a[rk + k];
    for (let i = k + 1; i < n; i++) {
      const ri = i * n;
      const l = a[ri + k] / pivot;
      a[ri + k] = l;
      if (l !== 0) for (let j = k + 1; j < n; j++) a[ri + j] -= l * a[rk + j];
    }
  }
  return true;
}

/** Solves (LU) x = b for a factorization from luFactor; b is overwritten with x. */
export function luSolve(lu: Float64Array, n: number, piv: Int32Array, b: Float64Array): void {
  for (let k = 0; k < n; k++) {
    const p = piv[k];
    if (p !== k) {
      const tmp = b[k];
      b[k] = b[p];
      b[p] = tmp;
    }
  }
  for (let i = 1; i < n; i++) {
    const ri = i * n;
    let s = b[i];
    for (let j = 0; j < i; j++) s -= lu[ri + j] * b[j];
    b[i] = s;
  }
  for (let i = n - 1; i >= 0; i--) {
    const ri = i * n;
    let s = b[i];
    for (let j = i + 1; j < n; j++) s -= lu[ri + j] * b[j];
    b[i] = s / lu[ri + i];
  }
}
