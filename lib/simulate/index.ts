// Public API of the simulation library (framework-free; runs in a Web Worker and in Node worker threads).
// Code outside lib/mechanics and lib/simulate imports this entry only (a lint rule keeps it so); nothing
// behind it reaches the engine's computer algebra, so client components may import it.
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
  MassForcingKernel,
  MassMatrixForm,
  ExpressionCompiler,
  ExpressionEvaluator,
  VariableLayout,
} from "./system";
export { integrate, integrateInSlices, chooseMethod, STEP_TOLERANCE_FACTOR, STEP_TOLERANCE_FACTORS, INTEGRATION_METHODS, CONSTRAINT_METHOD } from "./integrate";
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
  IntegrationMethod,
  IntegrationMethodSetting,
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
export type { FitOptions, FitParameter, FitResult, FittedParameter, FitProgress, FitStatus, NotIdentifiable } from "./fit";
export { explainFit } from "./fit-report";
export type { FitReport, FitReportContext } from "./fit-report";
export { trajectoryCsv } from "./trajectory-csv";
export type { TrajectoryColumns, ExtraColumnUnits } from "./trajectory-csv";
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
