import { randomUUID } from "node:crypto";
import { createFile, getFilesByDerivationId } from "@/db/queries/files";
import type { MeasuredFileSummary, StoredFile } from "@/db/schema";
import { fileView } from "@/lib/runs/views";
import { formDataOf, readBodyWithin } from "@/lib/api/body";
import { apiRoute } from "@/lib/api/route";
import { loadDerivationFor } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";
import { env } from "@/lib/env";
import { AppError } from "@/lib/errors";
import { MeasuredDataError } from "@/lib/simulate/errors";
import { coordinatesOfDocument, documentOf } from "@/lib/runs/service";
import { decodeCsv, imageTypeOf, looksLikeMarkup, safeFileName, summariseMeasuredCsv, UploadError } from "@/lib/runs/uploads";
import { deleteObject, putObject } from "@/lib/storage";
import { parseOrThrow } from "@/lib/validation/parse";
import { derivationIdOf } from "../derivation-id";
import { MULTIPART_OVERHEAD_BYTES, uploadFieldsSchema } from "./schema";

type Params = { id: string };

function tooLarge(limit: number): AppError {
  return new AppError("too_large:file", `The file is larger than the limit of ${(limit / (1024 * 1024)).toFixed(1)} MB.`, { details: { limitBytes: limit } });
}

/** Files attached to the derivation, newest first. */
export const GET = apiRoute<Params>(async (_request, { params }) => {
  const user = await requireUser();
  const id = await derivationIdOf(params);
  await loadDerivationFor(user, id, "derivation:read");
  const files = await getFilesByDerivationId({ derivationId: id });
  return Response.json({ files: files.map(fileView) });
});

/**
 * Uploads a measured-data CSV or an image. Everything is checked before
 * anything is stored; the object is written first and the row second, and the
 * object is removed again if the row cannot be written.
 */
export const POST = apiRoute<Params>(async (request, { params }) => {
  const user = await requireUser();
  const id = await derivationIdOf(params);
  const { derivation } = await loadDerivationFor(user, id, "derivation:attach");

  const largestLimit = Math.max(env.UPLOAD_MAX_CSV_BYTES, env.UPLOAD_MAX_IMAGE_BYTES);
  // Refused before reading when the declared length is missing or too large, and cut off while reading past the limit.
  const body = await readBodyWithin(request, { limit: largestLimit + MULTIPART_OVERHEAD_BYTES, tooLarge: () => tooLarge(largestLimit) });

  let form: FormData;
  try {
    form = await formDataOf(request, body);
  } catch {
    throw new AppError("bad_request:validation", "Send the file as multipart/form-data in a field named \"file\".");
  }
  const upload = form.get("file");
  if (!(upload instanceof File)) {
    throw new AppError("bad_request:validation", undefined, { fieldErrors: { file: ["Choose a file to upload."] } });
  }
  const fields = parseOrThrow(uploadFieldsSchema, { kind: form.get("kind") ?? undefined });
  if (upload.size > largestLimit) throw tooLarge(largestLimit);
  const bytes = new Uint8Array(await upload.arrayBuffer());
  const imageType = imageTypeOf(bytes);
  const kind = fields.kind ?? (imageType ? "image" : "measured_csv");

  let contentType: string;
  let summary: MeasuredFileSummary | null = null;
  if (kind === "image") {
    if (bytes.byteLength > env.UPLOAD_MAX_IMAGE_BYTES) throw tooLarge(env.UPLOAD_MAX_IMAGE_BYTES);
    if (!imageType) {
      const message = looksLikeMarkup(bytes)
        ? "SVG and other markup images are not accepted (they can carry scripts); export the sketch as PNG, JPEG or WebP."
        : "The file is not a PNG, JPEG or WebP image.";
      throw new AppError("unprocessable:file", message, { fieldErrors: { file: [message] }, details: { code: "image_type" } });
    }
    contentType = imageType;
  } else {
    if (bytes.byteLength > env.UPLOAD_MAX_CSV_BYTES) throw tooLarge(env.UPLOAD_MAX_CSV_BYTES);
    try {
      const text = decodeCsv(bytes);
      summary = summariseMeasuredCsv(text, coordinatesOfDocument(documentOf(derivation)), env.UPLOAD_MAX_CSV_BYTES);
    } catch (error) {
      if (error instanceof MeasuredDataError) {
        if (error.code === "too_large") throw tooLarge(env.UPLOAD_MAX_CSV_BYTES);
        throw new AppError("unprocessable:file", error.toLine(), {
          fieldErrors: { file: [error.toLine()] },
          details: { code: error.code, line: error.line, column: error.column },
        });
      }
      if (error instanceof UploadError) {
        throw new AppError("unprocessable:file", error.message, { fieldErrors: { file: [error.message] }, details: { code: error.code } });
      }
      throw error;
    }
    contentType = "text/csv; charset=utf-8";
  }

  const fileId = randomUUID();
  const objectKey = `derivations/${id}/files/${fileId}`;
  const originalName = safeFileName(upload.name, kind === "image" ? "image" : "measured.csv");
  await putObject({ key: objectKey, body: bytes, contentType });
  let stored: StoredFile;
  try {
    stored = await createFile({
      teamId: derivation.teamId,
      file: { id: fileId, derivationId: id, kind, objectKey, originalName, contentType, sizeBytes: bytes.byteLength, uploadedById: user.id, summary },
    });
  } catch (error) {
    await deleteObject({ key: objectKey }).catch((cleanup) => console.error("[holonomy] could not remove an orphaned upload:", cleanup));
    throw error;
  }
  return Response.json({ file: fileView({ ...stored, uploadedByName: user.name }) }, { status: 201 });
});
