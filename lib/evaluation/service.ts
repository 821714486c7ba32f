import "server-only";
import { getEvaluationByModelHash, upsertEvaluationByModelHash } from "@/db/queries/evaluations";
import { EngineLimitError, ExpressionError, ModelError, type Model, type CodeLanguage } from "@/lib/mechanics";
import type { DerivationDocument } from "@/lib/notebook/document";
import { AppError } from "@/lib/errors";
import { modelErrorToAppError, modelFromDocument } from "./document-content";
import {
  codeExportInput,
  codeFileName,
  engineCodeLanguage,
  evaluateModel,
  evaluationHash,
  relinearize,
  settingsOfDocument,
  type EngineRunner,
  type EvaluationSettings,
  type LinearizationSettings,
} from "./evaluate";
import { getEnginePool } from "@/lib/workers/engine-pool";
import type { EvaluationResponse } from "./views";
import { engineVersion } from "@/lib/workers/worker-file";
import { evaluationSize, isLargeEvaluation } from "./size";

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
  const hit = await cachedEvaluation(modelHash, started);
  if (hit) return hit;
  let evaluated;
  try {
    evaluated = await evaluateModel(runner ?? getEnginePool(), model, settings);
  } catch (error) {
    throw engineErrorToAppError(error);
  }
  const row = await upsertEvaluationByModelHash({
    modelHash,
    engineVersion: version,
    result: evaluated.result,
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

/** The cached evaluation under `modelHash`, or null on a miss. */
async function cachedEvaluation(modelHash: string, started: number): Promise<EvaluationResponse | null> {
  const hit = await getEvaluationByModelHash({ modelHash });
  if (!hit) return null;
  return {
    cached: true,
    modelHash,
    engineVersion: hit.engineVersion,
    result: hit.result,
    timings: hit.timings,
    requestMs: Math.round((performance.now() - started) * 100) / 100,
    evaluatedAt: hit.updatedAt.toISOString(),
  };
}

/**
 * A model's evaluation with other linearization settings than `base`: the
 * evaluation with `base` (cached, or run once) supplies the derivation, and
 * only the equilibria and the linearization are computed again. Choosing
 * another equilibrium costs the analysis, never a new derivation.
 */
async function relinearizedModelCached({
  model,
  base,
  settings,
  runner,
}: {
  model: Model;
  base: EvaluationSettings;
  settings: EvaluationSettings;
  runner?: EngineRunner;
}): Promise<EvaluationResponse> {
  const started = performance.now();
  const version = engineVersion();
  const modelHash = evaluationHash(model, settings, version);
  const hit = await cachedEvaluation(modelHash, started);
  if (hit) return hit;
  const derived = await evaluateModelCached({ model, settings: base, runner });
  let relinearized;
  try {
    relinearized = await relinearize(runner ?? getEnginePool(), model, derived.result, settings.linearization);
  } catch (error) {
    throw engineErrorToAppError(error);
  }
  const timings = { ...relinearized.timings };
  const row = await upsertEvaluationByModelHash({
    modelHash,
    engineVersion: version,
    result: relinearized.result,
    timings,
  });
  return {
    cached: false,
    modelHash,
    engineVersion: version,
    result: relinearized.result,
    timings,
    requestMs: Math.round((performance.now() - started) * 100) / 100,
    evaluatedAt: row.updatedAt.toISOString(),
  };
}

/**
 * Evaluates a notebook document (its model, its linearization and code-export
 * settings). With other linearization settings than the document's, the
 * document's own evaluation is reused and only the linearization is redone.
 */
export async function evaluateDocumentCached({
  document,
  linearization,
  runner,
}: {
  document: DerivationDocument;
  linearization?: Partial<LinearizationSettings>;
  /** The engine to run on; the process's engine pool by default (a queue worker passes one that reports progress and stops on cancel). */
  runner?: EngineRunner;
}): Promise<EvaluationResponse> {
  const model = modelFromDocument(document);
  const own = settingsOfDocument(document);
  if (!linearization) return evaluateModelCached({ model, settings: own, runner });
  const settings = settingsOfDocument(document, linearization);
  const version = engineVersion();
  if (evaluationHash(model, settings, version) === evaluationHash(model, own, version)) return evaluateModelCached({ model, settings: own, runner });
  return relinearizedModelCached({ model, base: own, settings, runner });
}

/** The cache key of a document's evaluation with these linearization settings. */
export function documentEvaluationHash({ document, linearization }: { document: DerivationDocument; linearization?: Partial<LinearizationSettings> }): string {
  return evaluationHash(modelFromDocument(document), settingsOfDocument(document, linearization), engineVersion());
}

/** The document's evaluation from the cache, running nothing; null on a miss. */
export async function cachedDocumentEvaluation({
  document,
  linearization,
}: {
  document: DerivationDocument;
  linearization?: Partial<LinearizationSettings>;
}): Promise<EvaluationResponse | null> {
  const started = performance.now();
  return cachedEvaluation(documentEvaluationHash({ document, linearization }), started);
}

/** True when the document's model is large enough to be evaluated by a queue worker (lib/evaluation/size.ts). */
export function isLargeDocument(document: DerivationDocument): boolean {
  return isLargeEvaluation(evaluationSize(modelFromDocument(document)));
}

/**
 * The document's model as code in `language`: from the document's evaluation
 * when it already holds that language, otherwise exported from its M and f
 * (no new derivation). `fallbackTitle` names the file when the document has no title.
 */
export async function codeOfDocument({
  document,
  language,
  fallbackTitle,
  evaluate = (doc) => evaluateDocumentCached({ document: doc }),
}: {
  document: DerivationDocument;
  language: CodeLanguage;
  fallbackTitle: string;
  /** How the document's evaluation is had (a route passes one that queues a large model: lib/jobs/service.ts's evaluationForRequest). */
  evaluate?: (document: DerivationDocument) => Promise<EvaluationResponse>;
}): Promise<{ language: CodeLanguage; filename: string; source: string }> {
  const model = modelFromDocument(document);
  if (!model.title.trim()) model.title = fallbackTitle;
  const { result } = await evaluate(document);
  let source = result.code?.find((entry) => engineCodeLanguage(entry.language as "octave") === language)?.source;
  if (source === undefined) {
    try {
      ({ code: source } = await getEnginePool().run<{ code: string }>("exportCode", { input: codeExportInput(model, result), language }));
    } catch (error) {
      throw engineErrorToAppError(error);
    }
  }
  return { language, filename: codeFileName(model.title, language), source };
}
