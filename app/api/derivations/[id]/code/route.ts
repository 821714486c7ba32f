import { auditExport } from "@/lib/api/audit-export";
import { readOptionalJson } from "@/lib/api/optional-json";
import { derivationRoute } from "@/lib/api/resource-route";
import { documentFromContent, documentForRequest } from "@/lib/evaluation/document-content";
import { downloadResponse } from "@/lib/api/download";
import { engineCodeLanguage } from "@/lib/evaluation/evaluate";
import { codeOfDocument } from "@/lib/evaluation/service";
import { evaluationForRequest } from "@/lib/jobs/service";
import { parseOrThrow } from "@/lib/validation/parse";
import { codeQuerySchema, codeRequestSchema } from "./schema";
import { enforceRateLimits, rateLimits } from "@/lib/auth/rate-limit";

type Params = { id: string };

/**
 * Downloads M, f, the accelerations and A, B as code. The engine writes the
 * safety note into the file's comment header.
 */
export const GET = derivationRoute<Params>("derivation:read", async ({ request, user, derivation }) => {
  const query = parseOrThrow(codeQuerySchema, Object.fromEntries(new URL(request.url).searchParams));
  const document = documentFromContent(derivation.content, derivation.title);
  const code = await codeOfDocument({
    document,
    language: engineCodeLanguage(query.language),
    fallbackTitle: derivation.title,
    evaluate: (doc) => evaluationForRequest({ derivation, userId: user.id, document: doc }),
  });
  await auditExport({ actorId: user.id, derivation, format: "code", details: { language: code.language } });
  return downloadResponse(code.source, { filename: code.filename, contentType: "text/plain" });
});

/**
 * The same code as JSON, for the notebook's code cell when a person picks a
 * language the document's evaluation does not hold. The document is the stored
 * one unless one is posted (unsaved edits); nothing is stored or derived again.
 */
export const POST = derivationRoute<Params>("derivation:read", async ({ request, user, derivation }) => {
  await enforceRateLimits([[rateLimits.evaluateByUser, user.id]], "rate_limited:engine", "Too many evaluations in a short time. Wait a moment and try again.");
  const input = parseOrThrow(codeRequestSchema, await readOptionalJson(request));
  const document = documentForRequest(input.document, derivation);
  const code = await codeOfDocument({
    document,
    language: engineCodeLanguage(input.language),
    fallbackTitle: derivation.title,
    evaluate: (doc) => evaluationForRequest({ derivation, userId: user.id, document: doc }),
  });
  return Response.json({ language: input.language, filename: code.filename, source: code.source });
});
