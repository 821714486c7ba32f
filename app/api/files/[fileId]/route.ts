import { deleteFileById, getFileById } from "@/db/queries/files";
import { apiRoute } from "@/lib/api/route";
import { loadDerivationFor } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";
import { AppError } from "@/lib/errors";
import { deleteObject, getObjectStream } from "@/lib/storage";
import { uuidField } from "@/lib/validation/fields";

type Params = { fileId: string };

async function fileFor(params: Promise<Params>) {
  const parsed = uuidField.safeParse((await params).fileId);
  const file = parsed.success ? await getFileById({ id: parsed.data }) : null;
  if (!file) throw new AppError("not_found:file", "File not found.");
  return file;
}

/**
 * Streams an attached file. Images are shown inline with the type read from
 * their bytes at upload; CSVs download. `nosniff` and a sandboxing CSP keep a
 * browser from treating either as a page.
 */
export const GET = apiRoute<Params>(async (_request, { params }) => {
  const user = await requireUser();
  const file = await fileFor(params);
  // Another team's file looks exactly like a missing one.
  await loadDerivationFor(user, file.derivationId, "derivation:read");
  const object = await getObjectStream({ key: file.objectKey });
  if (!object) throw new AppError("not_found:file", "The file's data is missing from storage.");
  const disposition = file.kind === "image" ? "inline" : "attachment";
  const headers = new Headers({
    "content-type": file.contentType,
    "content-disposition": `${disposition}; filename="${file.originalName}"`,
    "x-content-type-options": "nosniff",
    "content-security-policy": "default-src 'none'; sandbox",
    "cache-control": "private, max-age=0, must-revalidate",
  });
  if (object.contentLength !== null) headers.set("content-length", String(object.contentLength));
  return new Response(object.body, { status: 200, headers });
});

/** Removes the file's row (with an audit event), then its object. */
export const DELETE = apiRoute<Params>(async (_request, { params }) => {
  const user = await requireUser();
  const file = await fileFor(params);
  const { derivation } = await loadDerivationFor(user, file.derivationId, "derivation:attach");
  const deleted = await deleteFileById({ id: file.id, actorId: user.id, teamId: derivation.teamId });
  if (!deleted) throw new AppError("not_found:file", "File not found.");
  // The row is gone, so the object is unreachable either way; a failed delete only leaves an orphan to log.
  await deleteObject({ key: deleted.objectKey }).catch((error) => console.error("[holonomy] could not delete a file's object:", error));
  return new Response(null, { status: 204 });
});
