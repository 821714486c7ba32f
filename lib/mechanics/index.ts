// Public API of the derivation engine (framework-free). Append new exports; keep existing ones.
export type { Model, Coordinate, Parameter, Input, Definition, NamedUnit } from "./model";
export { ModelError, ExpressionError, EngineLimitError } from "./errors";
export type { ModelErrorCode, ExpressionErrorCode } from "./errors";
export { parseExpression, formatExpression } from "./expr/parse";
export type { Expr } from "./expr/ast";
export { validateModel, analyzeModel, DEFAULT_MODEL_LIMITS } from "./validate-model";
export type { ModelLimits, ModelAnalysis } from "./validate-model";
export { deriveModel, deriveCanonical } from "./derive";
export type {
  DeriveOptions,
  DerivationResult,
  CanonicalDerivation,
  EquationResult,
  MomentumResult,
  ConservedQuantity,
  HamiltonianResult,
  DerivationTiming,
} from "./derive";
export { canonicalize, canonicalText, sameExpression } from "./canonical";
export { chainModel } from "./templates/chain";
export type { ChainOptions } from "./templates/chain";
