/**
 * The model file (`*.model.json`), the portable form of a derivation.
 * See DESIGN.md, "Model file". Validation lives in validate-model.ts.
 */

export interface NamedUnit {
  name: string;
  /** Units written with * / ^ over SI symbols (kg, m, s, rad, N, J, W, Pa, Hz) and numbers. */
  unit: string;
  description?: string;
}

export type Coordinate = NamedUnit;
export type Input = NamedUnit;

export interface Parameter extends NamedUnit {
  /** Absent: the parameter stays symbolic. */
  value?: number;
}

export interface Definition {
  name: string;
  expr: string;
  description?: string;
}

/**
 * A constraint `expr = 0`. In `constraints` (position, holonomic) a function
 * of the coordinates, t and parameters; in `rateConstraints` linear in the
 * rates: Σ_j a_j(q, t) q_j' + a_0(q, t) = 0 (rolling without slipping).
 * Its multiplier appears in the equations as `lambda_<name>` (position) or
 * `mu_<name>` (rate).
 */
export interface ConstraintSpec {
  name: string;
  expr: string;
  description?: string;
}

/**
 * A named quantity evaluated along a simulation (rope tension, pin load):
 * an expression in coordinates, rates, accelerations, multipliers
 * (`lambda_<name>`, `mu_<name>`), parameters, inputs and definitions,
 * checked against `unit`.
 */
export interface OutputSpec {
  name: string;
  expr: string;
  unit: string;
  description?: string;
}

export interface Model {
  title: string;
  coordinates: Coordinate[];
  parameters: Parameter[];
  inputs?: Input[];
  definitions?: Definition[];
  kinetic: string;
  potential: string;
  dissipation?: string;
  /** Generalized force per coordinate name. */
  forces?: Record<string, string>;
  /** Position constraints g_k(q, t) = 0; L is augmented by Σ λ_k g_k. */
  constraints?: ConstraintSpec[];
  /** Constraints linear in the rates, Σ_j a_kj q_j' + a_k0 = 0; residual of q gains −Σ μ_k a_kq. */
  rateConstraints?: ConstraintSpec[];
  /** Named quantities of interest, evaluated along every simulation. */
  outputs?: OutputSpec[];
}
