import { Matrix, SingularValueDecomposition } from "ml-matrix";
import { compileAnalysis, linearizeAbout, type AnalysisSystem, type CompiledAnalysis, type Complex, type Linearization } from "./linearize";
import { classifyStability, type Stability } from "./stability";
import { isAngleUnit } from "./units";
import { seededRandom } from "./canonical/evaluate";

export type { Stability };

/** Order of the list: stable equilibria first, so the first one is the one to linearize about. */
const STABILITY_ORDER: Record<Stability, number> = { stable: 0, marginal: 1, unstable: 2 };

export interface Equilibrium {
  /** Coordinates; angles wrapped into (−π, π]. */
  q: number[];
  /** Largest |f| left at the point (with constraints, of f₀ + Aᵀλ and of the constraints' values). */
  residual: number;
  /** Multipliers at the point, in constraint order; absent without constraints. */
  multipliers?: number[];
  /** From the eigenvalues of A by `classifyStability` (stability.ts), the one rule every verdict uses. */
  stability: Stability;
  asymptotic: boolean;
  /** The clause of the rule that decided, in words. */
  stabilityReason: string;
  /** False when ∂f/∂q is singular there (a family of equilibria, e.g. along a cyclic coordinate). */
  isolated: boolean;
  eigenvalues: Complex[];
  linearization: Linearization;
}

export interface EquilibriumOptions {
  /** Input values held during the search; default zeros. */
  inputs?: readonly number[];
  t?: number;
  /** Which coordinates are angles; default from `coordinateUnits` (rad). */
  angular?: readonly boolean[];
  /** Extra starting points. */
  starts?: readonly (readonly number[])[];
  /** Random starting points added to the grid; default 16. */
  randomStarts?: number;
  /** Largest grid of starting points; default 64. */
  maxGridStarts?: number;
  seed?: number;
  /** Accept a point when max |f| ≤ tolerance × (typical |f| at the starts); default 1e-10. */
  tolerance?: number;
  maxIterations?: number;
}

/**
 * Finds equilibria of M q'' = f with rates zero and inputs held: Newton's
 * method with exact Jacobians (minimum-norm steps from the SVD, so singular
 * directions are left alone) from a grid of starts plus seeded random ones;
 * results deduplicated (angles modulo 2π) and classified from the linearization
 * by `classifyStability`. Listed stable first, then marginal, then unstable,
 * each group by coordinates.
 *
 * @example
 * findEquilibria({ coordinates: ["theta"], coordinateUnits: ["rad"], massMatrix: [["m*l^2"]], forcing: ["-m*g*l*sin(theta)"], parameters: { m: 1, l: 1, g: 9.81 } })
 * // θ = 0 stable, θ = π unstable
 */
export function findEquilibria(system: AnalysisSystem, options: EquilibriumOptions = {}): Equilibrium[] {
  const compiled = compileAnalysis(system);
  const { n, m } = compiled;
  const angular = options.angular ?? system.coordinates.map((_, i) => isAngleUnit(system.coordinateUnits?.[i] ?? ""));
  const u = options.inputs ?? new Array<number>(m).fill(0);
  const t = options.t ?? 0;
  const zeros = new Array<number>(n).fill(0);
  const random = seededRandom(options.seed ?? 1);

  const starts: number[][] = [...(options.starts ?? []).map((s) => [...s])];
  const angleGrid = [0, Math.PI, Math.PI / 2, -Math.PI / 2];
  const otherGrid = [0, 1, -1];
  const maxGrid = options.maxGridStarts ?? 64;
  const full = angular.reduce((count, a) => count * (a ? angleGrid.length : otherGrid.length), 1);
  const grid = full <= maxGrid ? [angleGrid, otherGrid] : angular.reduce((c, a) => c * (a ? 2 : 1), 1) <= maxGrid ? [[0, Math.PI], [0]] : [[0], [0]];
  const product = (i: number, prefix: number[]): void => {
    if (i === n) {
      starts.push(prefix);
      return;
    }
    for (const v of angular[i] ? grid[0]! : grid[1]!) product(i + 1, [...prefix, v]);
  };
  product(0, []);
  for (let k = 0; k < (options.randomStarts ?? 16); k++) {
    starts.push(angular.map((a) => (a ? (random() * 2 - 1) * Math.PI : (random() * 2 - 1) * 2)));
  }

  const k = compiled.multipliers.length;
  const forcingAt = (q: number[], lambda?: readonly number[]) => compiled.at(q, zeros, zeros, t, u, lambda);
  const norm = (v: readonly number[]) => Math.max(0, ...v.map(Math.abs));
  let typical = 0;
  let typicalConstraint = 0;
  for (const s of starts) {
    typical = Math.max(typical, norm(forcingAt(s).forcing));
    if (k > 0) typicalConstraint = Math.max(typicalConstraint, norm(compiled.constraintsAt(s, t, u).residuals));
  }
  const tolerance = (options.tolerance ?? 1e-10) * Math.max(typical, Number.MIN_VALUE);
  const constraintTolerance = (options.tolerance ?? 1e-10) * Math.max(typicalConstraint, 1);
  const maxIterations = options.maxIterations ?? 60;

  const found: { q: number[]; residual: number; isolated: boolean; multipliers?: number[] }[] = [];
  for (const start of starts) {
    const solved = k > 0 ? constrainedNewton(compiled, start, t, u, tolerance, constraintTolerance, maxIterations) : newton(start);
    if (solved === null) continue;
    const { q, residual, multipliers } = solved;
    const wrapped = q.map((x, i) => (angular[i] ? wrapAngle(x) : x));
    const same = found.find((f) => f.q.every((x, i) => Math.abs(angular[i] ? wrapAngle(x - wrapped[i]!) : x - wrapped[i]!) < 1e-6 * (1 + Math.abs(x))));
    if (same) continue;
    let isolated: boolean;
    if (k > 0) {
      // Isolated when the stiffness over the independent coordinates has full rank.
      try {
        const lin = linearizeAbout(compiled, { q: wrapped, inputs: u, t, multipliers });
        isolated = new SingularValueDecomposition(new Matrix(lin.stiffness), { autoTranspose: true }).rank === lin.coordinates.length;
      } catch {
        continue;
      }
    } else {
      isolated = new SingularValueDecomposition(new Matrix(forcingAt(wrapped).byCoordinate), { autoTranspose: true }).rank === n;
    }
    found.push({ q: wrapped, residual, isolated, ...(multipliers ? { multipliers } : {}) });
  }

  function newton(start: readonly number[]): { q: number[]; residual: number; multipliers?: number[] } | null {
    let q = [...start];
    let e = forcingAt(q);
    let residual = norm(e.forcing);
    for (let iteration = 0; iteration < maxIterations && residual > tolerance; iteration++) {
      // g(q) = f(q, 0); ∂g/∂q = −∂r/∂q, so the Newton step is δ = (∂r/∂q)⁺ g.
      const step = new SingularValueDecomposition(new Matrix(e.byCoordinate), { autoTranspose: true }).solve(Matrix.columnVector(e.forcing)).to1DArray();
      if (!step.every(Number.isFinite)) break;
      let alpha = 1;
      let accepted = false;
      for (let halving = 0; halving < 12; halving++, alpha /= 2) {
        const trial = q.map((x, i) => x + alpha * step[i]!);
        const te = forcingAt(trial);
        const tr = norm(te.forcing);
        if (tr < residual) {
          q = trial;
          e = te;
          residual = tr;
          accepted = true;
          break;
        }
      }
      if (!accepted) break;
    }
    return residual <= tolerance ? { q, residual } : null;
  }

  return found
    .map((f): Equilibrium => {
      const linearization = linearizeAbout(compiled as CompiledAnalysis, { q: f.q, inputs: u, t, ...(f.multipliers ? { multipliers: f.multipliers } : {}) });
      const { stability, asymptotic, reason } = classifyStability(linearization);
      return { ...f, stability, asymptotic, stabilityReason: reason, eigenvalues: linearization.eigenvalues, linearization };
    })
    .sort((a, b) => STABILITY_ORDER[a.stability] - STABILITY_ORDER[b.stability] || compareVectors(a.q, b.q));
}

/**
 * Newton's method on F(q, λ) = [f₀(q) + A(q)ᵀλ; g(q)] = 0 with rates zero
 * (J = [∂f/∂q, Aᵀ; A, 0], minimum-norm steps), λ started from the least-squares
 * solution of Aᵀλ = −f₀. Null when it does not converge.
 */
function constrainedNewton(
  compiled: CompiledAnalysis,
  start: readonly number[],
  t: number,
  u: readonly number[],
  tolerance: number,
  constraintTolerance: number,
  maxIterations: number,
): { q: number[]; residual: number; multipliers: number[] } | null {
  const { n } = compiled;
  const k = compiled.multipliers.length;
  const zeros = new Array<number>(n).fill(0);
  const norm = (v: readonly number[]) => Math.max(0, ...v.map(Math.abs));
  const evaluate = (q: number[], lambda: number[]) => {
    const e = compiled.at(q, zeros, zeros, t, u, lambda);
    const c = compiled.constraintsAt(q, t, u);
    // Scaled so that either part at its tolerance weighs the same.
    const merit = Math.max(norm(e.forcing) / tolerance, norm(c.residuals) / constraintTolerance);
    return { e, c, merit };
  };
  let q = [...start];
  const first = compiled.at(q, zeros, zeros, t, u);
  // ∂r/∂λ = −Aᵀ, so Aᵀλ = −f₀ reads −(∂r/∂λ) λ = −f₀.
  let lambda = new SingularValueDecomposition(new Matrix(first.byMultiplier), { autoTranspose: true }).solve(Matrix.columnVector(first.forcing)).to1DArray();
  if (!lambda.every(Number.isFinite)) lambda = new Array<number>(k).fill(0);
  let current = evaluate(q, lambda);
  for (let iteration = 0; iteration < maxIterations && current.merit > 1; iteration++) {
    const J = Matrix.zeros(n + k, n + k);
    const F = Matrix.zeros(n + k, 1);
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < n; j++) J.set(i, j, -current.e.byCoordinate[i]![j]!);
      for (let j = 0; j < k; j++) J.set(i, n + j, -current.e.byMultiplier[i]![j]!);
      F.set(i, 0, -current.e.forcing[i]!);
    }
    for (let i = 0; i < k; i++) {
      for (let j = 0; j < n; j++) J.set(n + i, j, current.c.jacobian[i]![j]!);
      F.set(n + i, 0, -current.c.residuals[i]!);
    }
    const step = new SingularValueDecomposition(J, { autoTranspose: true }).solve(F).to1DArray();
    if (!step.every(Number.isFinite)) return null;
    let alpha = 1;
    let accepted = false;
    for (let halving = 0; halving < 12; halving++, alpha /= 2) {
      const trialQ = q.map((x, i) => x + alpha * step[i]!);
      const trialLambda = lambda.map((x, i) => x + alpha * step[n + i]!);
      const trial = evaluate(trialQ, trialLambda);
      if (trial.merit < current.merit) {
        q = trialQ;
        lambda = trialLambda;
        current = trial;
        accepted = true;
        break;
      }
    }
    if (!accepted) break;
  }
  if (!(current.merit <= 1)) return null;
  return { q, residual: Math.max(norm(current.e.forcing), norm(current.c.residuals)), multipliers: lambda };
}

/** Wraps an angle into (−π, π]. */
export function wrapAngle(x: number): number {
  const twoPi = 2 * Math.PI;
  let y = x - twoPi * Math.floor((x + Math.PI) / twoPi);
  if (y <= -Math.PI + 1e-12) y += twoPi;
  return Math.abs(y) < 1e-13 ? 0 : y;
}

function compareVectors(a: number[], b: number[]): number {
  for (let i = 0; i < a.length; i++) if (Math.abs(a[i]! - b[i]!) > 1e-9) return a[i]! - b[i]!;
  return 0;
}
