import { createDerivation } from "@/db/queries/derivations";
import { formDataOf, readBodyWithin } from "@/lib/api/body";
import { assertJsonContentType } from "@/lib/api/request-checks";
import { beginCreateOnce, createdResponse, requestFingerprint } from "@/lib/api/idempotency";
import { teamRoute } from "@/lib/api/resource-route";
import { modelIssuesToAppError, validDocumentOrThrow } from "@/lib/evaluation/document-content";
import { engineErrorToAppError } from "@/lib/evaluation/service";
import { getEnginePool } from "@/lib/workers/engine-pool";
import { collectModelIssues, readModelFile } from "@/lib/mechanics";
import { AppError } from "@/lib/errors";
import { parseOrThrow } from "@/lib/validation/parse";
import { importOptionsSchema, MAX_MODEL_FILE_LENGTH } from "./schema";
import { enforceRateLimits, rateLimits } from "@/lib/auth/rate-limit";

type Params = { teamId: string };

function fileProblem(reason: string): AppError {
  return new AppError("unprocessable:model", `file: ${reason}`, {
    fieldErrors: { file: [reason] },
    details: { diagnostics: [{ code: "schema", field: "file", column: null, length: 1, message: reason }] },
  });
}

// A model file of MAX_MODEL_FILE_LENGTH characters (UTF-16 code units) takes at most
// 3 bytes per unit in UTF-8, plus room for the multipart framing around it.
const MAX_IMPORT_BODY_BYTES = 3 * MAX_MODEL_FILE_LENGTH + 64 * 1024;

async function readUpload(request: Request): Promise<{ text: string; title?: string } | { model: unknown; title?: string }> {
  const type = request.headers.get("content-type") ?? "";
  const bytes = await readBodyWithin(request, {
    limit: MAX_IMPORT_BODY_BYTES,
    tooLarge: () => new AppError("too_large:model", `The upload is larger than the limit of ${MAX_IMPORT_BODY_BYTES} bytes.`),
  });
  if (type.startsWith("multipart/form-data")) {
    const form = await formDataOf(request, bytes).catch(() => {
      throw new AppError("bad_request:validation", "The upload could not be read.");
    });
    const file = form.get("file");
    if (!file || typeof file === "string") throw new AppError("bad_request:validation", undefined, { fieldErrors: { file: ["Choose a .model.json file."] } });
    if (file.size > MAX_MODEL_FILE_LENGTH) throw fileProblem(`the file is ${file.size} bytes; the limit is ${MAX_MODEL_FILE_LENGTH}`);
    const title = form.get("title");
    return { text: await file.text(), title: typeof title === "string" && title.trim() !== "" ? title : undefined };
  }
  assertJsonContentType(request);
  const text = new TextDecoder().decode(bytes);
  if (text.length > MAX_MODEL_FILE_LENGTH) throw fileProblem(`the body is ${text.length} characters; the limit is ${MAX_MODEL_FILE_LENGTH}`);
  let body: unknown;
  try {
    body = JSON.parse(text);
  } catch {
    throw new AppError("bad_request:validation", "The request body must be a JSON object.");
  }
  if (body !== null && typeof body === "object" && "model" in body) {
    const { model, title } = body as { model: unknown; title?: unknown };
    return { model, title: typeof title === "string" ? title : undefined };
  }
  return { model: body };
}

/**
 * Imports a model file as a new derivation. The file is validated in full
 * (schema with field and reason, then units) before anything is written, and
 * the derivation is created in one transaction.
 */
export const POST = teamRoute<Params>("derivation:create", async ({ request, params: { teamId }, user }) => {
  await enforceRateLimits([[rateLimits.uploadsByUser, user.id]], "rate_limited:file", "Too many uploads in a short time. Wait a few minutes and try again.");
  const upload = await readUpload(request);
  // A repeated request with the same Idempotency-Key answers with the first import, before any checking.
  const fingerprint = requestFingerprint(teamId, "text" in upload ? upload.text : JSON.stringify(upload.model ?? null), upload.title ?? "");
  const once = await beginCreateOnce({ request, userId: user.id, operation: "derivation.import", fingerprint });
  if (once.earlier) return createdResponse({ derivation: once.earlier, replayed: true });
  const options = parseOrThrow(importOptionsSchema, { title: upload.title });
  const { model, issues } = "text" in upload ? readModelFile(upload.text) : collectModelIssues(upload.model);
  if (!model) throw modelIssuesToAppError(issues);
  try {
    await getEnginePool().run("checkUnits", { model });
  } catch (error) {
    throw engineErrorToAppError(error);
  }
  const title = (options.title ?? model.title).trim().slice(0, 160) || "Imported derivation";
  // The model file is the oldest stored version: the migrations turn it into a notebook document.
  const document = validDocumentOrThrow({ ...model, title }, { field: "file" });
  return createdResponse(await once.create((idempotency) => createDerivation({ teamId, title, ownerId: user.id, content: document, idempotency })));
});
