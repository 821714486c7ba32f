/**
 * Size limits of a model, checked before any symbolic work. A module of its
 * own, without dependencies, so the notebook can state and apply the same
 * limits in the browser (refusing a 13th coordinate when it is added).
 */
export interface ModelLimits {
  maxCoordinates: number;
  maxParameters: number;
  maxInputs: number;
  maxDefinitions: number;
  /** Sum of the lengths of all expression texts. */
  maxTotalTextLength: number;
}

export const DEFAULT_MODEL_LIMITS: ModelLimits = {
  maxCoordinates: 12,
  maxParameters: 200,
  maxInputs: 50,
  maxDefinitions: 200,
  maxTotalTextLength: 100_000,
};
