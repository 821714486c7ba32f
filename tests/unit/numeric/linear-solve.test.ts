import { describe, expect, it } from "vitest";
import { Matrix, solve } from "ml-matrix";
import { SingularMatrixError } from "@/lib/simulate";
import { createLuWorkspace, factorInPlace, solveInPlace, substituteInPlace } from "@/lib/numeric/linear-solve";
import { seededRandom } from "../simulate/systems";

describe("LU with partial pivoting", () => {
  it("agrees with ml-matrix on random well-conditioned systems (seeded)", () => {
    const random = seededRandom(20240611);
    for (let trial = 0; trial < 200; trial++) {
      const n = 1 + Math.floor(random() * 8);
      const rows = Array.from({ length: n }, (_, i) => Array.from({ length: n }, (_, j) => random() * 2 - 1 + (i === j ? n : 0)));
      const b = Array.from({ length: n }, () => random() * 10 - 5);
      const workspace = createLuWorkspace(n);
      workspace.matrix.set(rows.flat());
      const x = Float64Array.from(b);
      solveInPlace(workspace, x);
      // Reference: a general-purpose numerical library (ml-matrix).
      const reference = solve(new Matrix(rows), Matrix.columnVector(b)).getColumn(0);
      for (let i = 0; i < n; i++) expect(x[i]).toBeCloseTo(reference[i]!, 12);
    }
  });

  it("needs the row exchange for a zero leading entry", () => {
    const workspace = createLuWorkspace(2);
    workspace.matrix.set([0, 2, 3, 0]);
    const x = new Float64Array([4, 9]);
    solveInPlace(workspace, x);
    expect(Array.from(x)).toEqual([3, 2]);
    expect(Array.from(workspace.pivots)).toEqual([1, 0]);
  });

  it("reuses one factorization for several right-hand sides", () => {
    const workspace = createLuWorkspace(3);
    workspace.matrix.set([4, -2, 1, -2, 4, -2, 1, -2, 4]);
    factorInPlace(workspace);
    const first = new Float64Array([11, -16, 17]);
    substituteInPlace(workspace, first);
    // 4·1 − 2·(−2) + 1·3 = 11, −2·1 + 4·(−2) − 2·3 = −16, 1·1 − 2·(−2) + 4·3 = 17
    expect(Array.from(first).map((v) => Number(v.toFixed(12)))).toEqual([1, -2, 3]);
    const second = new Float64Array([3, 0, 3]);
    substituteInPlace(workspace, second);
    expect(Array.from(second).map((v) => Number(v.toFixed(12)))).toEqual([1, 1, 1]);
  });

  it("refuses a rank-deficient matrix with a typed error naming the column", () => {
    const workspace = createLuWorkspace(3);
    workspace.matrix.set([1, 2, 3, 2, 4, 6, 0, 1, 1]);
    let caught: unknown;
    try {
      solveInPlace(workspace, new Float64Array(3));
    } catch (error) {
      caught = error;
    }
    expect(caught).toBeInstanceOf(SingularMatrixError);
    expect((caught as SingularMatrixError).code).toBe("singular_matrix");
    expect((caught as SingularMatrixError).column).toBe(2);
    expect((caught as SingularMatrixError).nonFinite).toBe(false);
  });

  it("treats a pivot at roundoff level as singular, relative to the matrix's scale", () => {
    const workspace = createLuWorkspace(2);
    workspace.matrix.set([1e6, 1e6, 1e6, 1e6 * (1 + 1e-15)]);
    expect(() => solveInPlace(workspace, new Float64Array(2))).toThrow(SingularMatrixError);
    // The same shape scaled down is still fine when it is well conditioned.
    workspace.matrix.set([1e-9, 0, 0, 2e-9]);
    const x = new Float64Array([1e-9, 1e-9]);
    solveInPlace(workspace, x);
    expect(x[0]).toBeCloseTo(1, 12);
    expect(x[1]).toBeCloseTo(0.5, 12);
  });

  it("reports NaN and infinite entries as non-finite", () => {
    const workspace = createLuWorkspace(2);
    workspace.matrix.set([1, Number.NaN, 0, 1]);
    expect(() => factorInPlace(workspace)).toThrow(expect.objectContaining({ nonFinite: true }));
    workspace.matrix.set([1, 0, 0, Infinity]);
    expect(() => factorInPlace(workspace)).toThrow(expect.objectContaining({ nonFinite: true }));
  });
});
