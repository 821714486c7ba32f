/**
 * Web Worker for the notebook's simulation cell. It derives the document's
 * model (the same engine path the server's simulation pool takes), hands the
 * mass-matrix form to the simulation library's worker handler, and, once the
 * integration is done, evaluates the definitions the analyst marked as
 * mechanism points along the trajectory. Every expression is parsed and
 * compiled from its tree here, never run as program text.
 *
 * page → worker: `{ type: "start", id, job: ModelSimulationJob }`, `{ type: "cancel", id }`
 * worker → page: the library's `progress`, `result` (with `points`) and `error` messages.
 */
// First, so that zod knows before any schema parses here: this worker runs under the page's policy (no eval).
import "@/lib/validation/zod-config";
import { compileExpressions, deriveModel, ModelError, analyzeModel, validateModel } from "@/lib/mechanics";
import {
  type SimulationResult,
  checkSmallOscillation,
  type SmallOscillationReport,
  systemFromMassMatrixForm,
  type MassMatrixForm,
  createWorkerHandler,
  errorPayload,
  type SimulationSettingsMessage,
  type WorkerRequest,
  type WorkerResponse,
} from "@/lib/simulate";
import { massMatrixFormOf } from "@/lib/simulate";
import { constraintColumnUnits } from "@/lib/runs/column-units";
import type { ExtraColumnUnits } from "@/lib/simulate";
import type { ModelSimulationJob, ModelSimulationRequest, PointTrack, SimulationWorkerResponse } from "./worker-messages";

interface DedicatedWorkerScope {
  postMessage(message: SimulationWorkerResponse, transfer?: ArrayBuffer[]): void;
  onmessage: ((event: { data: ModelSimulationRequest }) => void) | null;
}

const scope = globalThis as unknown as DedicatedWorkerScope;
/** Point pairs and the model of each running job, for the result message. */
const pending = new Map<
  string,
  {
    model: ReturnType<typeof validateModel>;
    points: { x: string; y: string }[];
    inputs: Record<string, string>;
    smallOscillation: SmallOscillationReport | null;
    columnUnits: ExtraColumnUnits;
  }
>();

const handle = createWorkerHandler((message: WorkerResponse, transfer) => {
  const job = pending.get(message.id);
  if (message.type !== "progress") pending.delete(message.id);
  if (message.type === "result" && message.outcome.kind === "simulate" && job) {
    let points: PointTrack[] = [];
    let pointsError: string | null = null;
    try {
      points = pointTracks(job.model, job.points, job.inputs, message.outcome.result);
    } catch (error) {
      pointsError = error instanceof Error ? error.message : String(error);
    }
    scope.postMessage({ ...message, points, pointsError, smallOscillation: job.smallOscillation, columnUnits: job.columnUnits }, [
      ...(transfer ?? []),
      ...points.flatMap((p) => [p.x.buffer as ArrayBuffer, p.y.buffer as ArrayBuffer]),
    ]);
    return;
  }
  scope.postMessage(message, transfer ?? []);
});

scope.onmessage = (event) => {
  const request = event.data;
  if (request.type === "cancel") {
    void handle(request);
    return;
  }
  const { id, job } = request;
  let system: MassMatrixForm;
  let model: ReturnType<typeof validateModel>;
  let columnUnits: ExtraColumnUnits;
  try {
    model = validateModel(job.model);
    const derived = deriveModel(model);
    system = massMatrixFormOf(model, derived);
    columnUnits = constraintColumnUnits(model, derived.constraints);
  } catch (error) {
    const payload = error instanceof ModelError ? { name: error.name, code: error.code, field: error.field, message: error.message } : errorPayload(error);
    scope.postMessage({ type: "error", id, error: payload });
    return;
  }
  pending.set(id, { model, points: job.points, inputs: job.settings.inputs ?? {}, smallOscillation: smallOscillationOf(system, job), columnUnits });
  const settings: SimulationSettingsMessage = job.settings;
  const start: WorkerRequest = { type: "start", id, job: { kind: "simulate", system, settings, energyDriftThreshold: job.energyDriftThreshold } };
  void handle(start);
};

/**
 * x and y of each marked point at every output time. Definitions are compiled
 * in dependency order, each reading the coordinates, rates, time, inputs and
 * the definitions before it; parameters are folded in as constants.
 */
function pointTracks(
  model: ReturnType<typeof validateModel>,
  pairs: readonly { x: string; y: string }[],
  inputTexts: Record<string, string>,
  result: SimulationResult,
): PointTrack[] {
  if (pairs.length === 0) return [];
  const analysis = analyzeModel(model);
  const definitions = model.definitions ?? [];
  const coordinateNames = result.trajectory.coordinateNames;
  const inputNames = (model.inputs ?? []).map((u) => u.name);
  const definitionNames = definitions.map((d) => d.name);
  const variables = [...coordinateNames, ...coordinateNames.map((q) => `${q}'`), "t", ...inputNames, ...definitionNames];
  const constants = result.parameterValues;
  const n = coordinateNames.length;
  const inputOffset = 2 * n + 1;
  const definitionOffset = inputOffset + inputNames.length;
  const compiledDefinitions = analysis.definitionOrder.map((index) => ({
    slot: definitionOffset + index,
    compiled: compileExpressions([analysis.definitions[index]!], variables, { constants }),
  }));
  const inputCompiled = inputNames.map((name) => (inputTexts[name] ? compileExpressions([inputTexts[name]!], ["t"], { constants }) : null));

  const { times, coordinates, rates } = result.trajectory;
  const count = times.length;
  // A point's x or y is a definition, a coordinate (a support moving along a track) or "0"; the last slot holds the zero.
  const zeroSlot = variables.length;
  const slotOf = (name: string): number => {
    if (name === "0") return zeroSlot;
    const definition = definitionNames.indexOf(name);
    if (definition >= 0) return definitionOffset + definition;
    const coordinate = coordinateNames.indexOf(name);
    if (coordinate >= 0) return coordinate;
    throw new Error(`"${name}" is not a definition or coordinate`);
  };
  const tracks = pairs.map((pair) => ({ x: new Float64Array(count), y: new Float64Array(count), xSlot: slotOf(pair.x), ySlot: slotOf(pair.y) }));
  const values = new Float64Array(variables.length + 1);
  const out = new Float64Array(1);
  const timeOnly = new Float64Array(1);
  for (let k = 0; k < count; k++) {
    for (let i = 0; i < n; i++) {
      values[i] = coordinates[i]![k]!;
      values[n + i] = rates[i]![k]!;
    }
    values[2 * n] = times[k]!;
    timeOnly[0] = times[k]!;
    inputCompiled.forEach((compiled, j) => {
      if (compiled) {
        compiled.evaluate(timeOnly, out);
        values[inputOffset + j] = out[0]!;
      } else values[inputOffset + j] = 0;
    });
    for (const { slot, compiled } of compiledDefinitions) {
      compiled.evaluate(values, out);
      values[slot] = out[0]!;
    }
    for (const track of tracks) {
      track.x[k] = values[track.xSlot]!;
      track.y[k] = values[track.ySlot]!;
    }
  }
  return tracks.map(({ x, y }, i) => ({ xName: pairs[i]!.x, yName: pairs[i]!.y, x, y }));
}

/** The small-amplitude swing along the linearization's first mode, when the page supplied one. */
function smallOscillationOf(form: MassMatrixForm, job: ModelSimulationJob): SmallOscillationReport | null {
  const check = job.smallOscillation;
  if (!check) return null;
  try {
    return checkSmallOscillation(systemFromMassMatrixForm(form), check);
  } catch (error) {
    return {
      expectedFrequency: check.expectedFrequency,
      comparedFrequency: check.eigenvalue ? Math.abs(check.eigenvalue.im) : check.expectedFrequency,
      measuredFrequency: null,
      relativeError: null,
      amplitudeShift: null,
      integrationAllowance: 0,
      timingAllowance: 0,
      allowance: null,
      threshold: null,
      passed: false,
      coordinate: check.coordinate ?? form.coordinates[0] ?? "",
      amplitude: 0,
      periods: 0,
      problem: error instanceof Error ? error.message : String(error),
    };
  }
}
