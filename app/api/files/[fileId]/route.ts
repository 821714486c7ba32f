import { deleteFileById } from "@/db/queries/files";
import { fileRoute } from "@/lib/api/resource-route";
import { AppError } from "@/lib/errors";
import { contentDisposition } from "@/lib/files/names";
import { deleteObject, getObjectStream } from "@/lib/storage";

type Params = { fileId: string };

/**
 * Streams an attached file. Images are shown inline with the type read from
 * their bytes at upload; CSVs download. `nosniff` and a sandboxing CSP keep a
 * browser from treating either as a page.
 */
export const GET = fileRoute<Params>("derivation:read", async ({ file }) => {
  const object = await getObjectStream({ key: file.objectKey });
  if (!object) throw new AppError("not_found:file", "The file's data is missing from storage.");
  const headers = new Headers({
    "content-type": file.contentType,
    "content-disposition": contentDisposition(file.kind === "image" ? "inline" : "attachment", file.originalName),
    "x-content-type-options": "nosniff",
    "content-security-policy": "default-src 'none'; sandbox",
    "cache-control": "private, max-age=0, must-revalidate",
  });
  if (object.contentLength !== null) headers.set("content-length", String(object.contentLength));
  return new Response(object.body, { status: 200, headers });
});

/** Removes the file's row (with an audit event), then its object. */
export const DELETE = fileRoute<Params>("derivation:attach", async ({ user, derivation, file }) => {
  const deleted = await deleteFileById({ id: file.id, actorId: user.id, teamId: derivation.teamId });
  if (!deleted) throw new AppError("not_found:file", "File not found.");
  // The row is gone, so the object is unreachable either way; a failed delete only leaves an orphan to log.
  await deleteObject({ key: deleted.objectKey }).catch((error) => console.error("[holonomy] could not delete a file's object:", error));
  return new Response(null, { status: 204 });
});
