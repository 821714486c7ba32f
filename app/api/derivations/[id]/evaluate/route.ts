import { apiRoute } from "@/lib/api/route";
import { loadDerivationFor } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";
import { documentFromContent } from "@/lib/engine/document-content";
import { evaluateDocumentCached } from "@/lib/engine/evaluation-service";
import { readOptionalJson } from "@/lib/engine/optional-json";
import { AppError } from "@/lib/errors";
import { parseOrThrow } from "@/lib/validation/parse";
import { documentOrFieldErrors } from "../content/schema";
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
  let document;
  if (input.document !== undefined) {
    const parsed = documentOrFieldErrors(input.document);
    if (!parsed.ok) throw new AppError("bad_request:validation", "The notebook document is not valid.", { fieldErrors: parsed.fieldErrors });
    document = parsed.document;
  } else {
    document = documentFromContent(derivation.content, derivation.title);
  }
  return Response.json(await evaluateDocumentCached({ document, linearization: input.linearization }));
});
