// Types for extrapolation-odex.js: the subset of the `odex` 2.0 API (node_modules/odex/src/odex.ts)
// that extrapolation.ts uses.

/** dy/dx = f(x, y); y is a fresh plain array, the result is read by index up to its length. */
export type OdexDerivative = (x: number, y: number[]) => ArrayLike<number>;

/**
 * Called once with nr = 1 for the initial point (no dense function), then after every accepted
 * step with the interval [xOld, x], the new state y and, with denseOutput, an interpolant of
 * component c at a point of [xOld, x] (valid during the call only). Returning false stops.
 */
export type OdexOutput = (
  nr: number,
  xOld: number,
  x: number,
  y: number[],
  dense?: (c: number, x: number) => number,
) => boolean | void;

export declare enum Outcome {
  Converged = 0,
  MaxStepsExceeded = 1,
  EarlyReturn = 2,
}

export interface OdexResult {
  y: number[];
  outcome: Outcome;
  nStep: number;
  xEnd: number;
  nAccept: number;
  nReject: number;
  nEval: number;
}

export declare class Solver {
  constructor(n: number);
  n: number;
  uRound: number;
  maxSteps: number;
  initialStepSize: number;
  /** 0 means xEnd − x. */
  maxStepSize: number;
  maxExtrapolationColumns: number;
  stepSizeSequence: number;
  denseOutput: boolean;
  denseOutputErrorEstimator: boolean;
  relativeTolerance: number | number[];
  absoluteTolerance: number | number[];
  solve(f: OdexDerivative, x: number, y0: number[], xEnd: number, solOut?: OdexOutput): OdexResult;
}
