// Shared comparison helpers for the linear-analysis tests.
import { expect } from 'vitest';
import type { Complex } from '../../language/src/linear/complex';

/** max |a − b| / (1 + max |b|) over all entries: a relative error on the matrix scale. */
export function matErr(a: number[][], b: number[][]): number {
  expect(a.length).toBe(b.length);
  let scale = 0, err = 0;
  for (let i = 0; i < b.length; i++) {
    expect(a[i].length).toBe(b[i].length);
    for (let j = 0; j < b[i].length; j++) {
      scale = Math.max(scale, Math.abs(b[i][j]));
      err = Math.max(err, Math.abs(a[i][j] - b[i][j]));
    }
  }
  return err / Math.max(scale, Number.MIN_VALUE);
}

export function expectMatClose(a: number[][], b: number[][], rel: number): void {
  expect(matErr(a, b)).toBeLessThanOrEqual(rel);
}

export function expectComplexClose(a: Complex, b: Complex, rel: number): void {
  const scale = Math.max(1, Math.hypot(b.re, b.im));
  expect(Math.hypot(a.re - b.re, a.im - b.im) / scale).toBeLessThanOrEqual(rel);
}

/** Sort complex numbers by real then imaginary part, for comparing root sets. */
export const sortC = (zs: Complex[]): Complex[] => zs.slice().sort((a, b) => a.re - b.re || a.im - b.im);
