import type { Expr } from "./expr/ast";
import { expressionTree, type ExpressionSource } from "./expr/parse";
import { differentiate } from "./differentiate";

/**
 * The residual r(q, q', q'', t, u) = M(q, q', t, u) q'' − f(q, q', t, u) of the
 * mass-matrix form and its exact partial derivatives, as trees. Linearizing
 * q'' = M⁻¹ f at any state gives
 *   ∂q''/∂q = −M⁻¹ ∂r/∂q,  ∂q''/∂q' = −M⁻¹ ∂r/∂q',  ∂q''/∂u = −M⁻¹ ∂r/∂u
 * evaluated with q'' = M⁻¹ f; at an equilibrium (q'' = 0) the ∂M/∂q term drops
 * out and −∂r/∂q = ∂f/∂q.
 */
export interface ResidualJacobians {
  mass: Expr[][];
  forcing: Expr[];
  /** ∂r_i/∂q_j */
  byCoordinate: Expr[][];
  /** ∂r_i/∂q'_j */
  byRate: Expr[][];
  /** ∂r_i/∂u_k */
  byInput: Expr[][];
}

export interface MassForm {
  coordinates: readonly string[];
  inputs?: readonly string[];
  massMatrix: readonly (readonly ExpressionSource[])[];
  forcing: readonly ExpressionSource[];
}

const at = { start: 0, end: 0 };

/**
 * Builds the residual trees and differentiates them.
 *
 * @example residualJacobians({ coordinates: ["x"], massMatrix: [["m"]], forcing: ["-k*x"] }).byCoordinate // [[k]]
 */
export function residualJacobians(system: MassForm): ResidualJacobians {
  const n = system.coordinates.length;
  const inputs = system.inputs ?? [];
  const mass = system.massMatrix.map((row) => row.map((entry) => expressionTree(entry)));
  const forcing = system.forcing.map((entry) => expressionTree(entry));
  const residual: Expr[] = [];
  for (let i = 0; i < n; i++) {
    let sum: Expr | null = null;
    for (let j = 0; j < n; j++) {
      const acceleration: Expr = { kind: "sym", name: system.coordinates[j]!, order: 2, ...at };
      const term: Expr = { kind: "bin", op: "*", left: mass[i]![j]!, right: acceleration, ...at };
      sum = sum === null ? term : { kind: "bin", op: "+", left: sum, right: term, ...at };
    }
    residual.push({ kind: "bin", op: "-", left: sum!, right: forcing[i]!, ...at });
  }
  const jacobian = (name: string, order: 0 | 1) => residual.map((r) => differentiate(r, name, order));
  const transpose = (columns: Expr[][]) => residual.map((_, i) => columns.map((column) => column[i]!));
  return {
    mass,
    forcing,
    byCoordinate: transpose(system.coordinates.map((q) => jacobian(q, 0))),
    byRate: transpose(system.coordinates.map((q) => jacobian(q, 1))),
    byInput: transpose(inputs.map((u) => jacobian(u, 0))),
  };
}
