import "server-only";
import { getEvaluationByModelHash, upsertEvaluationByModelHash } from "@/db/queries/evaluations";
import { EngineLimitError, ExpressionError, ModelError } from "@/lib/mechanics/errors";
import type { Model } from "@/lib/mechanics/model";
import type { DerivationDocument } from "@/lib/notebook/document";
import { AppError } from "@/lib/errors";
import { modelErrorToAppError, modelFromDocument } from "./document-content";
import { evaluateModel, evaluationHash, settingsOfDocument, type EngineRunner, type EvaluationResult, type LinearizationSettings } from "./evaluate";
import { getEnginePool } from "@/lib/workers/engine-pool";
import type { EvaluationResponse } from "./views";
import { engineVersion } from "@/lib/workers/worker-file";

export type { EvaluationResponse } from "./views";

/** Turns the engine's typed errors into the API's: a model problem is a 422 the editors can underline. */
export function engineErrorToAppError(error: unknown): unknown {
  if (error instanceof ModelError) return modelErrorToAppError(error);
  if (error instanceof ExpressionError) return modelErrorToAppError(ModelError.fromExpression("equations", error));
  if (error instanceof EngineLimitError) {
    if (error.limit === "queue") return new AppError("rate_limited:engine", error.message);
    if (error.limit === "closed") return new AppError("unavailable:engine", "The derivation engine is restarting; try again.");
    return new AppError("unprocessable:engine", `The model is too large to evaluate: ${error.message}.`, { details: { limit: error.limit } });
  }
  return error;
}

/** Evaluates a model with the server's engine pool, answering from the PostgreSQL cache when it can. */
export async function evaluateModelCached({
  model,
  settings,
  runner,
}: {
  model: Model;
  settings: ReturnType<typeof settingsOfDocument>;
  runner?: EngineRunner;
}): Promise<EvaluationResponse> {
  const started = performance.now();
  const version = engineVersion();
  const modelHash = evaluationHash(model, settings, version);
  const hit = await getEvaluationByModelHash({ modelHash });
  if (hit) {
    return {
      cached: true,
      modelHash,
      engineVersion: hit.engineVersion,
      result: hit.result as unknown as EvaluationResult,
      timings: hit.timings,
      requestMs: Math.round((performance.now() - started) * 100) / 100,
      evaluatedAt: hit.updatedAt.toISOString(),
    };
  }
  let evaluated;
  try {
    evaluated = await evaluateModel(runner ?? getEnginePool(), model, settings);
  } catch (error) {
    throw engineErrorToAppError(error);
  }
  const row = await upsertEvaluationByModelHash({
    modelHash,
    engineVersion: version,
    result: evaluated.result as unknown as Record<string, unknown>,
    timings: { ...evaluated.timings },
  });
  return {
    cached: false,
    modelHash,
    engineVersion: version,
    result: evaluated.result,
    timings: { ...evaluated.timings },
    requestMs: Math.round((performance.now() - started) * 100) / 100,
    evaluatedAt: row.updatedAt.toISOString(),
  };
}

/** Evaluates a notebook document (its model, its linearization and code-export settings). */
export async function evaluateDocumentCached({
  document,
  linearization,
}: {
  document: DerivationDocument;
  linearization?: Partial<LinearizationSettings>;
}): Promise<EvaluationResponse> {
  const model = modelFromDocument(document);
  return evaluateModelCached({ model, settings: settingsOfDocument(document, linearization) });
}
