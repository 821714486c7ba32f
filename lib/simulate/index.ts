// Public API of the simulation library (framework-free; runs in a Web Worker and in Node worker threads).
// The worker handler (worker-protocol.ts) serves the notebook's Web Worker (components/notebook/simulation);
// the server runs simulations through lib/runs (tasks.ts in the simulation worker pool).
export { SingularMatrixError, SimulationSetupError, MeasuredDataError, FitError } from "./errors";
export type { SimulationSetupErrorCode, MeasuredDataErrorCode, FitErrorCode } from "./errors";
export { createLuWorkspace, factorInPlace, substituteInPlace, solveInPlace, DEFAULT_SINGULAR_TOLERANCE } from "../numeric/linear-solve";
export type { LuWorkspace } from "../numeric/linear-solve";
export { systemFromMassMatrixForm, systemFromDerivation, massMatrixFormOf, variableNames, layoutOf } from "./system";
export { multiplierSymbol } from "./specs";
export type { ConstraintSpec, OutputSpec, ConstraintKind } from "./specs";
export { dependentConstraint } from "./constraints";
export { peakOf, outputVariables } from "./outputs";
export type { Peak, OutputSeries } from "./outputs";
export type {
  MechanicalSystem,
  SystemParameter,
  MassForcingEvaluator,
  EnergyEvaluator,
  SpecializedEvaluators,
  MassMatrixForm,
  ExpressionCompiler,
  ExpressionEvaluator,
  VariableLayout,
} from "./system";
export { integrate, integrateInSlices, STEP_TOLERANCE_FACTOR, CONSTRAINT_METHOD } from "./integrate";
export type {
  SimulationSettings,
  SimulationResult,
  SimulationFailure,
  SimulationFailureReason,
  ConstraintReport,
  InitialProjection,
  SimulationProgress,
  SimulationStats,
  Trajectory,
  NumericAssignment,
  InputSignal,
  CancelSignal,
} from "./integrate";
export {
  energyDrift,
  estimatePeriod,
  upwardCrossings,
  checkSmallOscillation,
  explainSmallOscillation,
  INTEGRATION_ERROR_FACTOR,
  DEFAULT_ENERGY_DRIFT_THRESHOLD,
} from "./checks";
export type { EnergyDriftReport, PeriodEstimate, SmallOscillationOptions, SmallOscillationReport } from "./checks";
export { parseMeasuredCsv, resample, DEFAULT_MEASURED_LIMITS } from "./measured";
export type { MeasuredData, MeasuredSeries, MeasuredDataOptions } from "./measured";
export { fitParameters, fitParametersInSlices } from "./fit";
export type { FitOptions, FitParameter, FitResult, FittedParameter, FitProgress, FitStatus } from "./fit";
export { createWorkerHandler, errorPayload } from "./worker-protocol";
export type {
  WorkerRequest,
  WorkerResponse,
  SimulationJob,
  FitJob,
  SimulationOutcome,
  FitOutcome,
  WorkerErrorPayload,
  SimulationSettingsMessage,
  PostMessage,
} from "./worker-protocol";
