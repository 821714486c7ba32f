/** Typed errors of the shared numerics (used by the engine and the simulator alike). */

/** Raised by the LU factorization when a pivot is (numerically) zero. */
export class SingularMatrixError extends Error {
  readonly code = "singular_matrix" as const;
  /** 0-based column at which elimination found no usable pivot. */
  readonly column: number;
  /** True when the matrix held a NaN or an infinity rather than being rank-deficient. */
  readonly nonFinite: boolean;

  constructor(column: number, message = `matrix is singular (no usable pivot in column ${column + 1})`, nonFinite = false) {
    super(message);
    this.name = "SingularMatrixError";
    this.column = column;
    this.nonFinite = nonFinite;
  }
}
