// Coefficients of the Dormand–Prince 5(4) pair.
//
// Butcher tableau, 5th-order weights and the embedded 4th-order weights: J. R. Dormand and
// P. J. Prince, "A family of embedded Runge–Kutta formulae", J. Comput. Appl. Math. 6(1), 1980,
// pp. 19–26 (method RK5(4)7M), as tabulated in Hairer, Nørsett & Wanner, Solving ODEs I, 2nd ed.,
// §II.5, Table 5.2 [memory]. The last row of A equals b (first same as last, FSAL).
//
// Dense output of order 4: the continuous extension used in HNW I §II.6 and their DOPRI5 code
// (after Shampine, "Some practical Runge–Kutta formulas", Math. Comp. 46(173), 1986) [memory]:
//   y(t0 + θh) = r1 + θ(r2 + (1−θ)(r3 + θ(r4 + (1−θ) r5))),
//   r1 = y0, r2 = y1 − y0, r3 = h k1 − r2, r4 = r2 − h k7 − r3, r5 = h Σ d_i k_i.
//
// test/sim/integrator-coefficients.test.ts checks all of these numbers against the Runge–Kutta
// order conditions (order 5 for b, order 4 for the embedded weights and for the dense output at
// every θ), so a mistyped digit cannot go unnoticed.

export const DOPRI5 = {
  stages: 7,
  c: [0, 1 / 5, 3 / 10, 4 / 5, 8 / 9, 1, 1],
  /** Strictly lower triangular rows a[i][0..i-1]. */
  a: [
    [],
    [1 / 5],
    [3 / 40, 9 / 40],
    [44 / 45, -56 / 15, 32 / 9],
    [19372 / 6561, -25360 / 2187, 64448 / 6561, -212 / 729],
    [9017 / 3168, -355 / 33, 46732 / 5247, 49 / 176, -5103 / 18656],
    [35 / 384, 0, 500 / 1113, 125 / 192, -2187 / 6784, 11 / 84],
  ],
  /** 5th-order weights (propagated solution). */
  b: [35 / 384, 0, 500 / 1113, 125 / 192, -2187 / 6784, 11 / 84, 0],
  /** b − b̂, b̂ the embedded 4th-order weights (5179/57600, 0, 7571/16695, 393/640, −92097/339200, 187/2100, 1/40). */
  e: [71 / 57600, 0, -71 / 16695, 71 / 1920, -17253 / 339200, 22 / 525, -1 / 40],
  /** Dense-output weights d_i for r5. */
  d: [
    -12715105075 / 11282082432,
    0,
    87487479700 / 32700410799,
    -10690763975 / 1880347072,
    701980252875 / 199316789632,
    -1453857185 / 822651844,
    69997945 / 29380423,
  ],
} as const;

/**
 * Step-size control constants of HNW I §II.4 and their DOPRI5 code: safety factor, bounds on the
 * ratio h_new/h, and the PI (Lund-stabilized) exponent β.
 */
export const DOPRI5_CONTROL = {
  safety: 0.9,
  /** Smallest ratio h_new / h. */
  facMin: 0.2,
  /** Largest ratio h_new / h. */
  facMax: 10,
  beta: 0.04,
  /** err^(1/5 − 0.75β): the error exponent of the PI controller. */
  expo1: 0.2 - 0.04 * 0.75,
} as const;
