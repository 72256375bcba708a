// Coefficients of RODAS, the stiffly accurate, L-stable Rosenbrock method of order 4 with an
// embedded method of order 3 and a dense output of order 3: E. Hairer and G. Wanner, Solving
// Ordinary Differential Equations II, 2nd ed. 1996, §IV.7 ("Rosenbrock methods", the method RODAS
// with γ = 0.25), in the form of their code RODAS (first coefficient set) [memory].
//
// Transformed form (HW II §IV.7, the implementation with u_i = Σ_j γ_ij k_j, which avoids the
// matrix-vector products with J): for i = 1..6
//   (1/(hγ) I − J) u_i = f(t0 + α_i h, x0 + Σ_{j<i} a_ij u_j) + Σ_{j<i} (c_ij / h) u_j + h γ_i ∂f/∂t
//   x1 = x0 + Σ m_i u_i.
// Stiff accuracy: row 6 of a is (m_1..m_5), so x1 = (stage-6 argument) + u6, and the embedded
// solution is the stage-6 argument, which makes the error estimate simply u6.
// Dense output: x(t0 + sh) = (1−s) x0 + s (x1 + (1−s)(c2 + s c3)), c2 = Σ d2_i u_i, c3 = Σ d3_i u_i.
//
// The digits are recalled, not re-read from the book [memory]; therefore
// test/sim/integrator-coefficients.test.ts converts them back to the standard form (α_ij, γ_ij, b_i)
// and checks the Rosenbrock order conditions of HW II Table IV.7.1 (order 4, embedded order 3,
// dense output order 3 at every s), stiff accuracy and R(∞) = 0. Every coefficient enters those
// conditions, so a mistyped digit fails them.

export const RODAS = {
  stages: 6,
  gamma: 0.25,
  /** α_i: stage times as fractions of h. */
  alpha: [0, 0.386, 0.21, 0.63, 1, 1],
  /** γ_i = Σ_j γ_ij, for the time-derivative term. */
  gammaSum: [0.25, -0.1043, 0.1035, -0.362e-1, 0, 0],
  /** a_ij (strictly lower rows). */
  a: [
    [],
    [0.1544e1],
    [0.9466785280815826, 0.2557011698983284],
    [0.3314825187068521e1, 0.2896124015972201e1, 0.9986419139977817],
    [0.1221224509226641e1, 0.6019134481288629e1, 0.1253708332932087e2, -0.687886036105895],
    [0.1221224509226641e1, 0.6019134481288629e1, 0.1253708332932087e2, -0.687886036105895, 1],
  ],
  /** c_ij (strictly lower rows). */
  c: [
    [],
    [-0.56688e1],
    [-0.2430093356833875e1, -0.2063599157091915],
    [-0.1073529058151375, -0.9594562251023355e1, -0.2047028614809616e2],
    [0.7496443313967647e1, -0.1024680431464352e2, -0.3399990352819905e2, 0.117089089320616e2],
    [0.8083246795921522e1, -0.7981132988064893e1, -0.3152159432874371e2, 0.1631930543123136e2, -0.6058818238834054e1],
  ],
  /** m_i: weights of the propagated solution. */
  m: [0.1221224509226641e1, 0.6019134481288629e1, 0.1253708332932087e2, -0.687886036105895, 1, 1],
  /** Embedded (order 3) weights: the stage-6 argument. The error estimate is m − mHat = e6. */
  mHat: [0.1221224509226641e1, 0.6019134481288629e1, 0.1253708332932087e2, -0.687886036105895, 1, 0],
  /** Dense-output weights on u_1..u_5 (u_6 does not enter). */
  d2: [0.1012623508344586e2, -0.7487995877610167e1, -0.3480091861555747e2, -0.7992771707568823e1, 0.1025137723295662e1],
  d3: [-0.6762803392801253, 0.6087714651680015e1, 0.1643084320892478e2, 0.2476722511418386e2, -0.6594389125716872e1],
} as const;

/**
 * Step-size control of the RODAS code (HW II §IV.7 and §IV.8, with the predictive controller of
 * Gustafsson, 1994 [memory]): h_new/h in [facMin, facMax], safety factor, error exponent 1/4 (the
 * embedded order is 3), and a tenfold cut when the very first step is rejected.
 */
export const RODAS_CONTROL = {
  safety: 0.9,
  facMin: 0.2,
  facMax: 6,
  exponent: 0.25,
  firstRejectCut: 0.1,
  /** Floor for the error of the previous accepted step in the predictive controller. */
  errAccFloor: 1e-2,
} as const;
