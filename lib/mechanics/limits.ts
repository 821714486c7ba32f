/**
 * Size limits of a model, checked before any symbolic work. A module of its
 * own, without dependencies, so the notebook can state and apply the same
 * limits in the browser (refusing a 31st coordinate when it is added).
 */
export interface ModelLimits {
  maxCoordinates: number;
  maxParameters: number;
  maxInputs: number;
  maxDefinitions: number;
  /** Each of constraints, rateConstraints and outputs. */
  maxConstraints: number;
  /** Sum of the lengths of all expression texts. */
  maxTotalTextLength: number;
}

export const DEFAULT_MODEL_LIMITS: ModelLimits = {
  maxCoordinates: 30,
  maxParameters: 200,
  maxInputs: 50,
  maxDefinitions: 200,
  maxConstraints: 50,
  maxTotalTextLength: 100_000,
};
