// The parts of odex (Hairer & Wanner's ODEX, Gragg–Bulirsch–Stoer extrapolation)
// that lib/simulate uses. The package's `main` is src/odex.js beside its TypeScript
// source src/odex.ts, so without this file tsc would type-check that source under our
// strict settings. tsconfig.json maps "odex" here (paths), which wins over node_modules.

/** y' = F(x, y). odex copies the returned values immediately, so the array may be reused. */
export type Derivative = (x: number, y: number[]) => number[];

/**
 * Called after every accepted step with the step number, the step's left and
 * right edges and the state at the right edge. When dense output is on (and
 * after the first call), `dense(i, x)` interpolates component i anywhere in
 * [xOld, x]. Returning false stops the integration.
 */
export type OutputFunction = (nr: number, xOld: number, x: number, y: number[], dense?: (component: number, x: number) => number) => boolean | void;

export declare enum Outcome {
  Converged = 0,
  MaxStepsExceeded = 1,
  EarlyReturn = 2,
}

export interface SolveResult {
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
  maxSteps: number;
  initialStepSize: number;
  maxStepSize: number;
  denseOutput: boolean;
  denseComponents: number[] | undefined;
  /** Step-number sequence 1…5 (IWORK(3) of the Fortran code); dense output needs 4 or 5. */
  stepSizeSequence: number;
  /** MUDIF of the Fortran code, 1…6: the dense output has degree 2κ − MUDIF + 1. */
  interpolationFormulaDegree: number;
  relativeTolerance: number | number[];
  absoluteTolerance: number | number[];
  solve(f: Derivative, x: number, y0: number[], xEnd: number, solOut?: OutputFunction): SolveResult;
}
