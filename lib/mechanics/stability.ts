import { CholeskyDecomposition, EigenvalueDecomposition, Matrix, SingularValueDecomposition } from "ml-matrix";
import type { Complex, Linearization } from "./linearize";
import { STABILITY_RULE } from "./stability-rule";

export { STABILITY_RULE };

export type Stability = "stable" | "unstable" | "marginal";

/** τ = STABILITY_TOLERANCE × the frequency scale of A (see `frequencyScale`). */
export const STABILITY_TOLERANCE = 1e-7;

export interface StabilityVerdict {
  stability: Stability;
  /** Every eigenvalue has Re λ < −τ: disturbances decay. */
  asymptotic: boolean;
  /** The clause of the rule that decided, in words, with the eigenvalues involved. */
  reason: string;
  /** τ in 1/s. */
  tolerance: number;
}

/**
 * The frequency scale of a state matrix A = [0 I; A₂₁ A₂₂] in 1/s: the larger
 * of √‖A₂₁‖ (stiffness over mass, 1/s²) and ‖A₂₂‖ (damping over mass, 1/s),
 * with ‖·‖ the largest row sum. Eigenvalues of A are of this size, so a
 * tolerance proportional to it does not depend on the units chosen.
 */
export function frequencyScale(A: readonly (readonly number[])[]): number {
  const n = A.length / 2;
  let stiffness = 0;
  let damping = 0;
  for (let i = n; i < 2 * n; i++) {
    let k = 0;
    let c = 0;
    for (let j = 0; j < n; j++) {
      k += Math.abs(A[i]![j]!);
      c += Math.abs(A[i]![n + j]!);
    }
    stiffness = Math.max(stiffness, k);
    damping = Math.max(damping, c);
  }
  return Math.max(Math.sqrt(stiffness), damping);
}

/** τ for a state matrix: STABILITY_TOLERANCE × `frequencyScale(A)`, in 1/s. Real or imaginary parts within τ of 0 are 0. */
export function stabilityTolerance(A: readonly (readonly number[])[]): number {
  return STABILITY_TOLERANCE * frequencyScale(A);
}

/**
 * Classifies an equilibrium from its linearization; the one rule used for
 * every verdict the product shows (STABILITY_RULE states it in words):
 *
 * - τ = 10⁻⁷ × `frequencyScale(A)`.
 * - **unstable** if some eigenvalue has Re λ > τ, or an eigenvalue on the
 *   imaginary axis (|Re λ| ≤ τ; eigenvalues within τ of each other count as
 *   one repeated eigenvalue) has fewer independent eigenvectors than its
 *   multiplicity — a Jordan block, whose motion grows like t (a coordinate
 *   with neither stiffness nor damping drifts).
 * - **stable** if every eigenvalue has Re λ < −τ (asymptotically stable), or
 *   if the eigenvalues on the axis are simple and non-zero, the stiffness K is
 *   symmetric positive definite and the damping's symmetric part is positive
 *   semi-definite: a strict minimum of the potential with gyroscopic and
 *   dissipative forces only, stable by Lagrange–Dirichlet (Kelvin–Tait–Chetaev
 *   for the added forces), bounded but not decaying.
 * - **marginal** otherwise: a zero eigenvalue (a direction with no restoring
 *   stiffness, e.g. a cyclic coordinate) or a repeated eigenvalue on the axis,
 *   without a Jordan block, or simple imaginary eigenvalues without a
 *   positive definite stiffness. Linear analysis cannot decide these.
 *
 * The geometric multiplicity of λ is found from the second-order form: the
 * eigenvectors of A at λ are [v; λv] with (λ²I − λA₂₂ − A₂₁) v = 0.
 *
 * @example
 * classifyStability(linearizeAbout(pendulumWithDamping, { q: [0] })).stability // "stable"
 */
export function classifyStability(linearization: Pick<Linearization, "A" | "eigenvalues" | "stiffness" | "damping">): StabilityVerdict {
  const { A, eigenvalues } = linearization;
  const scale = frequencyScale(A);
  const tolerance = stabilityTolerance(A);
  const verdict = (stability: Stability, reason: string, asymptotic = false): StabilityVerdict => ({ stability, asymptotic, reason, tolerance });

  if (eigenvalues.length === 0) return verdict("stable", "the system has no state to disturb.", true);
  const fastest = eigenvalues.reduce((a, b) => (b.re > a.re ? b : a));
  if (fastest.re > tolerance) {
    return verdict(
      "unstable",
      `an eigenvalue has a positive real part (λ = ${formatEigenvalue(fastest, tolerance)}): a disturbance grows like exp(${formatNumber(fastest.re)}·t).`,
    );
  }
  const onAxis = eigenvalues.filter((l) => Math.abs(l.re) <= tolerance);
  if (onAxis.length === 0) {
    return verdict("stable", `every eigenvalue has a negative real part; the slowest decays like exp(${formatNumber(fastest.re)}·t).`, true);
  }

  const clusters = clusterEigenvalues(onAxis, tolerance).filter((c) => c.im >= -tolerance);
  for (const cluster of clusters) {
    const vectors = eigenvectorCount(A, cluster.im <= tolerance ? 0 : cluster.im, scale);
    if (vectors < cluster.size) {
      return verdict(
        "unstable",
        `λ = ${formatEigenvalue({ re: 0, im: cluster.im }, tolerance)} is repeated ${cluster.size} times on the imaginary axis with only ${vectors} eigenvector${vectors === 1 ? "" : "s"} (a Jordan block): a disturbance grows in proportion to t, as a coordinate with neither stiffness nor damping drifts.`,
      );
    }
  }
  const zero = clusters.find((c) => Math.abs(c.im) <= tolerance);
  if (zero) {
    return verdict(
      "marginal",
      `λ = 0 is an eigenvalue${zero.size > 1 ? ` (${zero.size} times, each with its own eigenvector)` : ""}: a direction with no restoring stiffness, such as a cyclic coordinate, where a disturbance neither grows nor decays in the linear model.`,
    );
  }
  const repeated = clusters.find((c) => c.size > 1);
  if (repeated) {
    return verdict(
      "marginal",
      `λ = ${formatEigenvalue({ re: 0, im: repeated.im }, tolerance)} is repeated ${repeated.size} times on the imaginary axis (no Jordan block): linear analysis cannot decide.`,
    );
  }
  const axisText = clusters.map((c) => formatEigenvalue({ re: 0, im: c.im }, tolerance)).join(", ");
  if (isPositiveDefinite(linearization.stiffness) && isPositiveSemiDefinite(linearization.damping)) {
    return verdict(
      "stable",
      `the eigenvalues on the imaginary axis (${axisText}) are simple and the stiffness is positive definite: a strict minimum of the potential, stable by Lagrange–Dirichlet; disturbances stay bounded but do not decay.`,
    );
  }
  return verdict("marginal", `eigenvalues on the imaginary axis (${axisText}) without a positive definite stiffness: linear analysis cannot decide.`);
}

/** Groups eigenvalues lying within `tolerance` of a neighbour (sorted by imaginary part); each group's centre and size. */
function clusterEigenvalues(values: readonly Complex[], tolerance: number): { im: number; size: number }[] {
  const sorted = [...values].sort((a, b) => a.im - b.im);
  const clusters: Complex[][] = [];
  for (const value of sorted) {
    const last = clusters[clusters.length - 1];
    const previous = last?.[last.length - 1];
    if (last && previous && Math.hypot(value.re - previous.re, value.im - previous.im) <= tolerance) last.push(value);
    else clusters.push([value]);
  }
  return clusters.map((c) => ({ im: c.reduce((sum, l) => sum + l.im, 0) / c.length, size: c.length }));
}

/**
 * dim null(λ²I − λA₂₂ − A₂₁) at λ = iω, the number of independent
 * eigenvectors of A there; complex arithmetic through the real embedding
 * [Re −Im; Im Re], whose null space has twice the dimension.
 */
function eigenvectorCount(A: readonly (readonly number[])[], omega: number, scale: number): number {
  const n = A.length / 2;
  const complex = omega !== 0;
  const size = complex ? 2 * n : n;
  const Q = Matrix.zeros(size, size);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      const re = (i === j ? -omega * omega : 0) - A[n + i]![j]!;
      Q.set(i, j, re);
      if (complex) {
        const im = -omega * A[n + i]![n + j]!;
        Q.set(n + i, n + j, re);
        Q.set(i, n + j, -im);
        Q.set(n + i, j, im);
      }
    }
  }
  // Entries are in 1/s²; a λ off by τ moves Q by about τ·scale = 10⁻⁷·scale².
  const rankTolerance = 10 * STABILITY_TOLERANCE * scale * scale;
  const singular = new SingularValueDecomposition(Q, { computeLeftSingularVectors: false, computeRightSingularVectors: false }).diagonal;
  const nullity = singular.filter((s) => s <= rankTolerance).length;
  return complex ? Math.floor(nullity / 2) : nullity;
}

function symmetricPart(rows: readonly (readonly number[])[]): { matrix: Matrix; asymmetry: number; size: number } {
  const matrix = new Matrix(rows as number[][]);
  const transposed = matrix.transpose();
  const size = Math.max(0, ...matrix.to1DArray().map(Math.abs));
  const asymmetry = Math.max(0, ...Matrix.sub(matrix, transposed).to1DArray().map(Math.abs));
  return { matrix: Matrix.add(matrix, transposed).mul(0.5), asymmetry, size };
}

function isPositiveDefinite(rows: readonly (readonly number[])[]): boolean {
  if (rows.length === 0) return false;
  const { matrix, asymmetry, size } = symmetricPart(rows);
  if (asymmetry > 1e-10 * size) return false; // circulatory forces: no potential, no Lagrange–Dirichlet
  return new CholeskyDecomposition(matrix).isPositiveDefinite();
}

function isPositiveSemiDefinite(rows: readonly (readonly number[])[]): boolean {
  if (rows.length === 0) return true;
  const { matrix, size } = symmetricPart(rows);
  const values = new EigenvalueDecomposition(matrix, { assumeSymmetric: true }).realEigenvalues;
  return values.every((v) => v >= -1e-10 * size);
}

function formatNumber(value: number): string {
  return Number(value.toPrecision(4)).toString();
}

/** λ as text, `a ± bi` for a complex pair; parts below `tolerance` are written as 0. */
export function formatEigenvalue(value: Complex, tolerance = 0): string {
  const re = Math.abs(value.re) <= tolerance ? 0 : value.re;
  const im = Math.abs(value.im) <= tolerance ? 0 : Math.abs(value.im);
  if (im === 0) return formatNumber(re);
  return re === 0 ? `±${formatNumber(im)}i` : `${formatNumber(re)} ± ${formatNumber(im)}i`;
}
