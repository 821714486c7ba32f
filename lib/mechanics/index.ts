// Public API of the derivation engine (framework-free). Append new exports; keep existing ones.
// Code outside lib/mechanics and lib/simulate imports this entry (a lint rule keeps it so), or
// ./browser (the part without computer algebra, for client bundles), or ./worker (Node threads).
export type { Model, Coordinate, Parameter, Input, Definition, NamedUnit, ConstraintSpec, OutputSpec } from "./model";
export { ModelError, ExpressionError, EngineLimitError } from "./errors";
export type { ModelErrorCode, ExpressionErrorCode } from "./errors";
export { parseExpression, formatExpression, expressionTree } from "./expr/parse";
export type { ExpressionSource } from "./expr/parse";
export { FUNCTION_NAMES, RESERVED_NAMES, TIME, walk, symbolsOf } from "./expr/ast";
export type { Expr, FunctionName } from "./expr/ast";
export { spellGreekLetters, hasGreekLetter, greekAdvice } from "./expr/greek";
export { validateModel, analyzeModel, collectModelIssues, DEFAULT_MODEL_LIMITS } from "./validate-model";
export { readModelFile, jsonSyntaxIssues } from "./model-file";
export type { ModelLimits, ModelAnalysis } from "./validate-model";
export { deriveModel, deriveCanonical } from "./derive";
export type {
  DeriveOptions,
  DerivationResult,
  CanonicalDerivation,
  EquationResult,
  MomentumResult,
  ConservedQuantity,
  CyclicMomentum,
  HamiltonianResult,
  DerivationTiming,
} from "./derive";
export { canonicalize, canonicalText, sameExpression } from "./canonical";
export { chainModel } from "./templates/chain";
export type { ChainOptions } from "./templates/chain";
// Numerics, analysis, units, LaTeX and code export. The worker pool needs
// node:worker_threads, so it has its own entry (./worker).
export { differentiate, dependsOn, constantValue } from "./differentiate";
export { compileExpressions, compileMassMatrixSystem, DERIVED_EXPRESSION_LIMITS } from "./compile";
export type { CompiledExpressions, CompileOptions, MassMatrixSystem, CompiledMassMatrixSystem } from "./compile";
export { ExpressionGraph } from "./graph";
export { residualJacobians } from "./jacobians";
export type { ResidualJacobians } from "./jacobians";
export { linearizeAbout, compileAnalysis, normalModes, matchEigenvalues, constraintBasis } from "./linearize";
export type { OperatingPoint, Linearization, Mode, ModeKind, Complex, CompiledAnalysis, AnalysisSystem, AnalysisConstraint } from "./linearize";
export { findEquilibria, wrapAngle } from "./equilibria";
export type { Equilibrium, EquilibriumOptions, Stability } from "./equilibria";
export { classifyStability, frequencyScale, stabilityTolerance, formatEigenvalue, STABILITY_RULE, STABILITY_TOLERANCE } from "./stability";
export type { StabilityVerdict } from "./stability";
export { checkModelUnits, unitOfExpression, parseUnit, formatDimension, isAngleUnit } from "./units";
export type { Dimension } from "./units";
export { toLatex, toLatexTerms, joinLatexTerms, symbolLatex, termId } from "./latex";
export type { LatexTerm } from "./latex";
export { topLevelTerms } from "./terms";
export type { SignedTerm } from "./terms";
export { exportCode, CODE_LANGUAGES } from "./codegen";
export type { CodeExportInput, CodeLanguage } from "./codegen";
export { solveAccelerations, ACCELERATIONS_MAX_SIZE } from "./accelerations";
export type { AccelerationsResult, SolvedAcceleration } from "./accelerations";
export { derivationReport } from "./report";
export type { DerivationReport } from "./report";
// Printing where results leave the engine (worker boundary, CLI).
export { printDerivation } from "./print";
export type { PrintedDerivation, PrintedEquation } from "./print";
// Constraints with multipliers, outputs, and the numeric evaluator of the augmented system.
export { compileConstrainedSystem, constrainedSystemOf, multiplierSymbol, constraintField } from "./constraints";
export type {
  ConstraintKind,
  ConstraintResult,
  OutputResult,
  ConstraintRow,
  ConstrainedSystem,
  ConstrainedSolution,
  ConstraintDependence,
  CompiledConstrainedSystem,
} from "./constraints";
export type { PrintedConstraint, PrintedOutput } from "./print";
// Frequency response of a linearization (y = C x + D u) and state-space export.
export { stateSpaceOf, polesOf, transmissionZeros, frequencyResponse, exportStateSpace } from "./frequency-response";
export type { StateSpace, OutputChoice, PoleInfo, ZerosResult, FrequencyResponseOptions, FrequencyResponse, StateSpaceFormat } from "./frequency-response";
