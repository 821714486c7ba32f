import { derivationRoute } from "@/lib/api/resource-route";
import { cachedDocumentEvaluation, documentEvaluationHash, evaluateDocumentCached, isLargeDocument } from "@/lib/evaluation/service";
import { readOptionalJson } from "@/lib/api/optional-json";
import { AppError } from "@/lib/errors";
import { appErrorOfJob } from "@/lib/jobs/queue";
import { awaitJob, queueEvaluation } from "@/lib/jobs/service";
import { jobView, prefersAsync } from "@/lib/jobs/views";
import { parseOrThrow } from "@/lib/validation/parse";
import { evaluateSchema } from "./schema";
import { enforceRateLimits, rateLimits } from "@/lib/auth/rate-limit";
import { documentForRequest } from "@/lib/evaluation/document-content";

type Params = { id: string };

/**
 * Evaluates the stored or posted document. A cached evaluation answers at
 * once; a small model is evaluated on the request (the engine pool's threads,
 * 20 s limit); a large one (lib/evaluation/size.ts) is queued for a queue
 * worker as an `evaluation` job, whose answer lands in the same cache. With
 * `Prefer: respond-async` that is a 202 with the job (the notebook polls
 * GET …/jobs/[jobId] and asks again when it completed); otherwise the request
 * waits for the job and answers the evaluation, or 202 with the job when it
 * outlasts the wait.
 *
 * Evaluating changes nothing stored (the cache is keyed by content, not by
 * derivation), so everyone who may read the derivation may evaluate it.
 */
export const POST = derivationRoute<Params>("derivation:read", async ({ request, user, derivation }) => {
  await enforceRateLimits([[rateLimits.evaluateByUser, user.id]], "rate_limited:engine", "Too many evaluations in a short time. Wait a moment and try again.");
  const input = parseOrThrow(evaluateSchema, await readOptionalJson(request));
  const document = documentForRequest(input.document, derivation);
  const asked = { document, linearization: input.linearization };
  const cached = await cachedDocumentEvaluation(asked);
  if (cached) return Response.json(cached);
  if (!isLargeDocument(document)) return Response.json(await evaluateDocumentCached(asked));

  const queued = await queueEvaluation({ derivation, userId: user.id, ...asked, modelHash: documentEvaluationHash(asked) });
  if (prefersAsync(request)) return Response.json({ job: jobView(queued) }, { status: 202 });
  const job = await awaitJob(queued);
  if (job.state === "queued" || job.state === "running") return Response.json({ job: jobView(job) }, { status: 202 });
  if (job.state !== "completed") throw appErrorOfJob(job);
  const evaluated = await cachedDocumentEvaluation(asked);
  if (!evaluated) throw new AppError("internal:engine", "The evaluation completed but its answer was not stored.");
  return Response.json(evaluated);
});
