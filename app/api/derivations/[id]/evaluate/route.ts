import { apiRoute } from "@/lib/api/route";
import { loadDerivationFor } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";
import { evaluateDocumentCached } from "@/lib/evaluation/service";
import { readOptionalJson } from "@/lib/api/optional-json";
import { parseOrThrow } from "@/lib/validation/parse";
import { documentForRequest } from "../content/schema";
import { derivationIdOf } from "../derivation-id";
import { evaluateSchema } from "./schema";

type Params = { id: string };

// Evaluating changes nothing stored (the cache is keyed by content, not by
// derivation), so everyone who may read the derivation may evaluate it.
export const POST = apiRoute<Params>(async (request, { params }) => {
  const user = await requireUser();
  const id = await derivationIdOf(params);
  const { derivation } = await loadDerivationFor(user, id, "derivation:read");
  const input = parseOrThrow(evaluateSchema, await readOptionalJson(request));
  const document = documentForRequest(input.document, derivation);
  return Response.json(await evaluateDocumentCached({ document, linearization: input.linearization }));
});
