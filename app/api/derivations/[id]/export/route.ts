import { auditExport } from "@/lib/api/audit-export";
import { derivationRoute } from "@/lib/api/resource-route";
import { documentFromContent, modelFromDocument } from "@/lib/evaluation/document-content";
import { downloadResponse, fileBaseName } from "@/lib/api/download";
import { evaluationForRequest } from "@/lib/jobs/service";
import { latexDocument } from "@/lib/evaluation/latex-document";
import { parseOrThrow } from "@/lib/validation/parse";
import { exportQuerySchema } from "./schema";

type Params = { id: string };

/** Downloads the derivation as a model file, or its equations as a LaTeX document. */
export const GET = derivationRoute<Params>("derivation:read", async ({ request, user, derivation }) => {
  const { format } = parseOrThrow(exportQuerySchema, Object.fromEntries(new URL(request.url).searchParams));
  const document = documentFromContent(derivation.content, derivation.title);
  const model = modelFromDocument(document);
  if (!model.title.trim()) model.title = derivation.title;
  const base = fileBaseName(model.title || derivation.title);
  if (format === "model") {
    await auditExport({ actorId: user.id, derivation, format });
    return downloadResponse(`${JSON.stringify(model, null, 2)}\n`, { filename: `${base}.model.json`, contentType: "application/json" });
  }
  // The equations come from the (cached) evaluation, a queued one for a large model; a model that does not derive is a 422.
  const { result } = await evaluationForRequest({ derivation, userId: user.id, document });
  await auditExport({ actorId: user.id, derivation, format });
  return downloadResponse(latexDocument(model, result), { filename: `${base}.tex`, contentType: "application/x-tex" });
});
