// Complex arithmetic on plain `{ re, im }` records, used by the frequency-domain code
// (transfer-function evaluation, Nyquist winding, polynomial roots). Pure functions, no classes,
// so values serialise with JSON.stringify unchanged.

export interface Complex {
  re: number;
  im: number;
}

export const cx = (re: number, im = 0): Complex => ({ re, im });
export const cAdd = (a: Complex, b: Complex): Complex => ({ re: a.re + b.re, im: a.im + b.im });
export const cSub = (a: Complex, b: Complex): Complex => ({ re: a.re - b.re, im: a.im - b.im });
export const cMul = (a: Complex, b: Complex): Complex => ({
  re: a.re * b.re - a.im * b.im,
  im: a.re * b.im + a.im * b.re,
});
export const cScale = (a: Complex, k: number): Complex => ({ re: a.re * k, im: a.im * k });
export const cNeg = (a: Complex): Complex => ({ re: -a.re, im: -a.im });
export const cConj = (a: Complex): Complex => ({ re: a.re, im: -a.im });
export const cAbs = (a: Complex): number => Math.hypot(a.re, a.im);
/** Principal argument in (−π, π]. */
export const cArg = (a: Complex): number => Math.atan2(a.im, a.re);
export const cIsFinite = (a: Complex): boolean => Number.isFinite(a.re) && Number.isFinite(a.im);

/** a / b by Smith's algorithm (avoids overflow for large |b|). Division by zero gives non-finite parts. */
export function cDiv(a: Complex, b: Complex): Complex {
  if (Math.abs(b.re) >= Math.abs(b.im)) {
    if (b.re === 0) return { re: a.re / 0, im: a.im / 0 };
    const r = b.im / b.re;
    const d = b.re + b.im * r;
    return { re: (a.re + a.im * r) / d, im: (a.im - a.re * r) / d };
  }
  const r = b.re / b.im;
  const d = b.re * r + b.im;
  return { re: (a.re * r + a.im) / d, im: (a.im * r - a.re) / d };
}

/** e^a */
export function cExp(a: Complex): Complex {
  const m = Math.exp(a.re);
  return { re: m * Math.cos(a.im), im: m * Math.sin(a.im) };
}

/** Principal logarithm; log 0 = −∞. */
export function cLog(a: Complex): Complex {
  return { re: Math.log(cAbs(a)), im: cArg(a) };
}
