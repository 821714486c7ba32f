import { derivationRoute } from "@/lib/api/resource-route";
import { evaluationForRequest } from "@/lib/jobs/service";
import type { LinearizationResponse } from "@/lib/evaluation/views";
import { readOptionalJson } from "@/lib/api/optional-json";
import { parseOrThrow } from "@/lib/validation/parse";
import { linearizeSchema } from "./schema";
import { enforceRateLimits, rateLimits } from "@/lib/auth/rate-limit";
import { documentForRequest } from "@/lib/evaluation/document-content";

type Params = { id: string };

/**
 * Linearizes about another equilibrium or input without saving the choice:
 * the same cached evaluation as /evaluate with these settings, answered with
 * its linearization part.
 */
export const POST = derivationRoute<Params>("derivation:read", async ({ request, user, derivation }) => {
  await enforceRateLimits([[rateLimits.evaluateByUser, user.id]], "rate_limited:engine", "Too many evaluations in a short time. Wait a moment and try again.");
  const input = parseOrThrow(linearizeSchema, await readOptionalJson(request));
  const document = documentForRequest(input.document, derivation);
  // A large model's linearization is a queued evaluation with these settings (the request waits for it).
  const evaluation = await evaluationForRequest({
    derivation,
    userId: user.id,
    document,
    linearization: { equilibriumIndex: input.equilibriumIndex, inputValues: input.inputValues },
  });
  const { result } = evaluation;
  const answer: LinearizationResponse = {
    cached: evaluation.cached,
    modelHash: evaluation.modelHash,
    timings: evaluation.timings,
    requestMs: evaluation.requestMs,
    linearization: result.linearization ?? null,
    equilibria: result.equilibria ?? [],
    ...(result.linearizationNote ? { note: result.linearizationNote } : {}),
  };
  return Response.json(answer);
});
