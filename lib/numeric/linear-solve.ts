import { SingularMatrixError } from "./errors";

/**
 * Dense LU factorization with partial (row) pivoting for the small systems
 * M(q) q'' = f that the integrator solves at every right-hand-side call.
 *
 * Everything works in place on caller-owned typed arrays so that the hot path
 * allocates nothing. Matrices are stored row-major: entry (i, j) of an n×n
 * matrix is `a[i * n + j]`.
 *
 * @example
 * const lu = createLuWorkspace(2);
 * lu.matrix.set([4, 1, 1, 3]);
 * const b = new Float64Array([1, 2]);
 * solveInPlace(lu, b); // b is now the solution x of A x = b
 */
export interface LuWorkspace {
  readonly n: number;
  /** n×n row-major; filled by the caller, overwritten by the factors L (unit lower, below the diagonal) and U. */
  readonly matrix: Float64Array;
  /** Row permutation: after factorization, row i of PA is row pivots[i] of A. */
  readonly pivots: Int32Array;
  /** Length-n scratch vector for the substitution. */
  readonly scratch: Float64Array;
  /**
   * A pivot is refused when |pivot| ≤ singularTolerance · max|a_ij| of the
   * matrix before factorization. The default, 1e-13, is a few hundred unit
   * roundoffs: a mass matrix that close to singular gives accelerations with
   * no correct digits.
   */
  singularTolerance: number;
}

export const DEFAULT_SINGULAR_TOLERANCE = 1e-13;

export function createLuWorkspace(n: number, singularTolerance = DEFAULT_SINGULAR_TOLERANCE): LuWorkspace {
  if (!Number.isInteger(n) || n < 1) throw new RangeError(`matrix size must be a positive integer, got ${n}`);
  return { n, matrix: new Float64Array(n * n), pivots: new Int32Array(n), scratch: new Float64Array(n), singularTolerance };
}

/**
 * Factors `workspace.matrix` in place (PA = LU). Throws `SingularMatrixError`
 * when a column has no pivot above the tolerance, or when the matrix holds a
 * non-finite entry (NaN compares false with everything, so it is checked for
 * explicitly).
 */
export function factorInPlace(workspace: LuWorkspace): void {
  const { n, matrix: a, pivots } = workspace;
  let scale = 0;
  for (let k = 0; k < n * n; k++) {
    const v = Math.abs(a[k]!);
    if (v > scale) scale = v;
    else if (!(v <= scale)) throw new SingularMatrixError(k % n, `matrix entry (${Math.floor(k / n) + 1}, ${(k % n) + 1}) is not a finite number`, true);
  }
  if (scale === Infinity) throw new SingularMatrixError(0, "matrix has an infinite entry", true);
  const threshold = workspace.singularTolerance * scale;
  for (let i = 0; i < n; i++) pivots[i] = i;

  for (let col = 0; col < n; col++) {
    let pivotRow = col;
    let pivotAbs = Math.abs(a[col * n + col]!);
    for (let row = col + 1; row < n; row++) {
      const v = Math.abs(a[row * n + col]!);
      if (v > pivotAbs) {
        pivotAbs = v;
        pivotRow = row;
      }
    }
    if (!(pivotAbs > threshold)) throw new SingularMatrixError(col);
    if (pivotRow !== col) {
      const rowA = col * n;
      const rowB = pivotRow * n;
      for (let j = 0; j < n; j++) {
        const tmp = a[rowA + j]!;
        a[rowA + j] = a[rowB + j]!;
        a[rowB + j] = tmp;
      }
      const p = pivots[col]!;
      pivots[col] = pivots[pivotRow]!;
      pivots[pivotRow] = p;
    }
    const pivot = a[col * n + col]!;
    for (let row = col + 1; row < n; row++) {
      const rowStart = row * n;
      const factor = a[rowStart + col]! / pivot;
      a[rowStart + col] = factor;
      if (factor !== 0) {
        const pivotStart = col * n;
        for (let j = col + 1; j < n; j++) a[rowStart + j]! -= factor * a[pivotStart + j]!;
      }
    }
  }
}

/**
 * Solves A x = b with the factors from `factorInPlace`; `b` is overwritten by x.
 */
export function substituteInPlace(workspace: LuWorkspace, b: Float64Array): void {
  const { n, matrix: lu, pivots, scratch } = workspace;
  for (let i = 0; i < n; i++) scratch[i] = b[pivots[i]!]!;
  // Forward substitution with the unit lower triangle.
  for (let i = 1; i < n; i++) {
    let sum = scratch[i]!;
    const rowStart = i * n;
    for (let j = 0; j < i; j++) sum -= lu[rowStart + j]! * scratch[j]!;
    scratch[i] = sum;
  }
  // Back substitution with the upper triangle.
  for (let i = n - 1; i >= 0; i--) {
    let sum = scratch[i]!;
    const rowStart = i * n;
    for (let j = i + 1; j < n; j++) sum -= lu[rowStart + j]! * b[j]!;
    b[i] = sum / lu[rowStart + i]!;
  }
}

/**
 * Factors `workspace.matrix` and solves for `b` in place. One call per
 * right-hand side of the integrator; no allocation.
 */
export function solveInPlace(workspace: LuWorkspace, b: Float64Array): void {
  factorInPlace(workspace);
  substituteInPlace(workspace, b);
}
