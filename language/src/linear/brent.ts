// Brent's root finder on a bracketing interval (R. P. Brent, Algorithms for Minimization without
// Derivatives, Prentice-Hall 1973, ch. 4, "zeroin"): inverse quadratic interpolation and secant
// steps, falling back to bisection, so it never leaves the bracket and converges superlinearly for
// smooth functions. Never throws: a non-finite value or a missing sign change returns null.
//
// API
//   brentRoot(f, a, b, opts?) → number | null

export interface BrentOptions {
  /** Absolute tolerance on x (default 1e-15·(|x| + 1)-scaled, see code). */
  xtol?: number;
  maxIter?: number;
}

export function brentRoot(f: (x: number) => number, a0: number, b0: number, opts: BrentOptions = {}): number | null {
  let a = a0, b = b0, fa = f(a), fb = f(b);
  if (!Number.isFinite(fa) || !Number.isFinite(fb)) return null;
  if (fa === 0) return a;
  if (fb === 0) return b;
  if (Math.sign(fa) === Math.sign(fb)) return null;
  const maxIter = opts.maxIter ?? 200;
  const xtol = opts.xtol ?? 0;
  let c = a, fc = fa, d = b - a, e = d;
  for (let it = 0; it < maxIter; it++) {
    if (Math.sign(fb) === Math.sign(fc)) { c = a; fc = fa; d = b - a; e = d; }
    if (Math.abs(fc) < Math.abs(fb)) { a = b; b = c; c = a; fa = fb; fb = fc; fc = fa; }
    const tol = 2 * Number.EPSILON * Math.abs(b) + 0.5 * xtol;
    const m = 0.5 * (c - b);
    if (Math.abs(m) <= tol || fb === 0) return b;
    if (Math.abs(e) >= tol && Math.abs(fa) > Math.abs(fb)) {
      let p: number, q: number;
      const s = fb / fa;
      if (a === c) { p = 2 * m * s; q = 1 - s; }
      else {
        const qq = fa / fc, r = fb / fc;
        p = s * (2 * m * qq * (qq - r) - (b - a) * (r - 1));
        q = (qq - 1) * (r - 1) * (s - 1);
      }
      if (p > 0) q = -q; else p = -p;
      if (2 * p < Math.min(3 * m * q - Math.abs(tol * q), Math.abs(e * q))) { e = d; d = p / q; }
      else { d = m; e = m; }
    } else { d = m; e = m; }
    a = b; fa = fb;
    b += Math.abs(d) > tol ? d : m > 0 ? tol : -tol;
    fb = f(b);
    if (!Number.isFinite(fb)) return null;
  }
  return b;
}

/** Golden-section search for a maximum of f on [a, b]; returns the abscissa. */
export function goldenMax(f: (x: number) => number, a: number, b: number, iters = 100): number {
  const g = (Math.sqrt(5) - 1) / 2;
  let x1 = b - g * (b - a), x2 = a + g * (b - a), f1 = f(x1), f2 = f(x2);
  for (let i = 0; i < iters && Math.abs(b - a) > 4 * Number.EPSILON * (Math.abs(a) + Math.abs(b)); i++) {
    if (f1 >= f2) { b = x2; x2 = x1; f2 = f1; x1 = b - g * (b - a); f1 = f(x1); }
    else { a = x1; x1 = x2; f1 = f2; x2 = a + g * (b - a); f2 = f(x2); }
  }
  return f1 >= f2 ? x1 : x2;
}
