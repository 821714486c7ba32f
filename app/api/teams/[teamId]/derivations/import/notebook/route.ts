import { formDataOf, readBodyWithin } from "@/lib/api/body";
import { beginCreateOnce, createdResponse, requestFingerprint } from "@/lib/api/idempotency";
import { apiRoute } from "@/lib/api/route";
import { loadTeamFor } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";
import { archiveLimits, checkNotebookArchive, importNotebookArchive } from "@/lib/derivations/archive";
import { AppError } from "@/lib/errors";
import { parseOrThrow } from "@/lib/validation/parse";
import { importOptionsSchema } from "../schema";
import { enforceRateLimits, rateLimits } from "@/lib/auth/rate-limit";

type Params = { teamId: string };

/** Room for the multipart framing and a title around the archive. */
const MULTIPART_OVERHEAD_BYTES = 64 * 1024;

function tooLarge(limit: number): AppError {
  return new AppError("too_large:archive", `The archive is larger than the limit of ${(limit / (1024 * 1024)).toFixed(1)} MB.`, {
    details: { limitBytes: limit },
  });
}

/** The archive's bytes and the optional title, from multipart/form-data (`file`, `title`) or a raw application/zip body (`?title=`). */
async function readArchiveUpload(request: Request): Promise<{ bytes: Uint8Array; title?: string }> {
  const { maxBytes } = archiveLimits();
  const type = request.headers.get("content-type") ?? "";
  const body = await readBodyWithin(request, { limit: maxBytes + MULTIPART_OVERHEAD_BYTES, tooLarge: () => tooLarge(maxBytes) });
  if (type.startsWith("multipart/form-data")) {
    const form = await formDataOf(request, body).catch(() => {
      throw new AppError("bad_request:validation", "The upload could not be read.");
    });
    const file = form.get("file");
    if (!(file instanceof File)) throw new AppError("bad_request:validation", undefined, { fieldErrors: { file: ["Choose a .notebook.zip file."] } });
    if (file.size > maxBytes) throw tooLarge(maxBytes);
    const title = form.get("title");
    return { bytes: new Uint8Array(await file.arrayBuffer()), title: typeof title === "string" && title.trim() !== "" ? title : undefined };
  }
  if (type.startsWith("application/zip") || type.startsWith("application/octet-stream")) {
    if (body.byteLength > maxBytes) throw tooLarge(maxBytes);
    const title = new URL(request.url).searchParams.get("title");
    return { bytes: body, title: title && title.trim() !== "" ? title : undefined };
  }
  throw new AppError("bad_request:validation", 'Send the archive as multipart/form-data (field "file") or as an application/zip body.');
}

/**
 * Imports a notebook archive as a new derivation with its runs and files.
 * The archive is checked completely first (every problem reported at once);
 * then objects are stored and the rows written in one transaction, and a
 * failure removes what was stored. Idempotency-Key works as for create.
 */
export const POST = apiRoute<Params>(async (request, { params }) => {
  const user = await requireUser();
  const teamId = (await params).teamId;
  await loadTeamFor(user, teamId, "derivation:create");
  await enforceRateLimits([[rateLimits.uploadsByUser, user.id]], "rate_limited:file", "Too many uploads in a short time. Wait a few minutes and try again.");
  const upload = await readArchiveUpload(request);
  const options = parseOrThrow(importOptionsSchema, { title: upload.title });
  const fingerprint = requestFingerprint(teamId, upload.bytes, options.title ?? "");
  const once = await beginCreateOnce({ request, userId: user.id, operation: "derivation.import_notebook", fingerprint });
  if (once.earlier) return createdResponse({ derivation: once.earlier, replayed: true });
  const contents = checkNotebookArchive(upload.bytes);
  return createdResponse(await once.create((idempotency) => importNotebookArchive({ contents, teamId, userId: user.id, title: options.title, idempotency })));
});
