import { derivationRoute } from "@/lib/api/resource-route";
import { evaluateDocumentCached } from "@/lib/evaluation/service";
import { readOptionalJson } from "@/lib/api/optional-json";
import { parseOrThrow } from "@/lib/validation/parse";
import { evaluateSchema } from "./schema";
import { enforceRateLimits, rateLimits } from "@/lib/auth/rate-limit";
import { documentForRequest } from "@/lib/evaluation/document-content";

type Params = { id: string };

// Evaluating changes nothing stored (the cache is keyed by content, not by
// derivation), so everyone who may read the derivation may evaluate it.
export const POST = derivationRoute<Params>("derivation:read", async ({ request, user, derivation }) => {
  await enforceRateLimits([[rateLimits.evaluateByUser, user.id]], "rate_limited:engine", "Too many evaluations in a short time. Wait a moment and try again.");
  const input = parseOrThrow(evaluateSchema, await readOptionalJson(request));
  const document = documentForRequest(input.document, derivation);
  return Response.json(await evaluateDocumentCached({ document, linearization: input.linearization }));
});
