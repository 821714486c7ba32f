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
}
