import type { ExpressionSource } from "../mechanics/expr/parse";

/**
 * What a simulated system may carry besides M and f: constraints and the
 * named outputs evaluated along a run (constraints.ts, outputs.ts).
 */

export type ConstraintKind = "position" | "rate";

/** A constraint as the simulator takes it: the expression it holds at zero, with definitions already written out. */
export interface ConstraintSpec {
  name: string;
  kind: ConstraintKind;
  /** g(q, t, u, p) for a position constraint; a(q, t, u, p)·q' + a₀ for a rate constraint. */
  expr: ExpressionSource;
}

/** A named quantity evaluated along the run: of q, q', q'', t, inputs, parameters and the multipliers (`lambda_<name>`, `mu_<name>`). */
export interface OutputSpec {
  name: string;
  expr: ExpressionSource;
  unit?: string;
}

/** The symbol of a constraint's multiplier in equations and outputs: `lambda_rope` for a position constraint, `mu_roll` for a rate constraint. */
export function multiplierSymbol(constraint: Pick<ConstraintSpec, "name" | "kind">): string {
  return `${constraint.kind === "position" ? "lambda" : "mu"}_${constraint.name}`;
}
