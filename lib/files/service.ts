import "server-only";
import { randomUUID } from "node:crypto";
import { createFile } from "@/db/queries/files";
import type { Derivation, FileKind, MeasuredFileSummary, StoredFile } from "@/db/schema";
import type { SessionUser } from "@/lib/auth/session";
import { env } from "@/lib/env";
import { AppError } from "@/lib/errors";
import { coordinatesOfDocument, documentOf } from "@/lib/runs/service";
import { MeasuredDataError } from "@/lib/simulate";
import { deleteObject, putObject } from "@/lib/storage";
import { decodeCsv, imageTypeOf, looksLikeMarkup, summariseMeasuredCsv, UploadError } from "./checks";
import { safeFileName } from "./names";

/** The largest upload of either kind: the body is read up to this (plus the multipart framing). */
export function largestUploadBytes(): number {
  return Math.max(env.UPLOAD_MAX_CSV_BYTES, env.UPLOAD_MAX_IMAGE_BYTES);
}

export function uploadTooLarge(limit: number): AppError {
  return new AppError("too_large:file", `The file is larger than the limit of ${(limit / (1024 * 1024)).toFixed(1)} MB.`, { details: { limitBytes: limit } });
}

interface CheckedUpload {
  kind: FileKind;
  contentType: string;
  summary: MeasuredFileSummary | null;
}

/** An image must be PNG, JPEG or WebP by its bytes; markup (SVG) is refused by name. */
function checkImage(bytes: Uint8Array): CheckedUpload {
  if (bytes.byteLength > env.UPLOAD_MAX_IMAGE_BYTES) throw uploadTooLarge(env.UPLOAD_MAX_IMAGE_BYTES);
  const imageType = imageTypeOf(bytes);
  if (!imageType) {
    const message = looksLikeMarkup(bytes)
      ? "SVG and other markup images are not accepted (they can carry scripts); export the sketch as PNG, JPEG or WebP."
      : "The file is not a PNG, JPEG or WebP image.";
    throw new AppError("unprocessable:file", message, { fieldErrors: { file: [message] }, details: { code: "image_type" } });
  }
  return { kind: "image", contentType: imageType, summary: null };
}

/** A measured-data CSV must read in full against the derivation's coordinates; the problem names its line. */
function checkMeasuredCsv(bytes: Uint8Array, derivation: Pick<Derivation, "content" | "title">): CheckedUpload {
  if (bytes.byteLength > env.UPLOAD_MAX_CSV_BYTES) throw uploadTooLarge(env.UPLOAD_MAX_CSV_BYTES);
  try {
    const summary = summariseMeasuredCsv(decodeCsv(bytes), coordinatesOfDocument(documentOf(derivation)), env.UPLOAD_MAX_CSV_BYTES);
    return { kind: "measured_csv", contentType: "text/csv; charset=utf-8", summary };
  } catch (error) {
    if (error instanceof MeasuredDataError) {
      if (error.code === "too_large") throw uploadTooLarge(env.UPLOAD_MAX_CSV_BYTES);
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
}

/**
 * Checks an upload completely and stores it: the object first, the row
 * second, and the object is removed again if the row cannot be written.
 * Without `kind`, images are told apart by their first bytes and anything
 * else is read as a measured-data CSV.
 */
export async function storeUpload({
  derivation,
  user,
  upload,
  kind: requestedKind,
}: {
  derivation: Derivation;
  user: SessionUser;
  upload: File;
  kind?: FileKind;
}): Promise<StoredFile & { uploadedByName: string }> {
  if (upload.size > largestUploadBytes()) throw uploadTooLarge(largestUploadBytes());
  const bytes = new Uint8Array(await upload.arrayBuffer());
  const kind = requestedKind ?? (imageTypeOf(bytes) ? "image" : "measured_csv");
  const checked = kind === "image" ? checkImage(bytes) : checkMeasuredCsv(bytes, derivation);

  const fileId = randomUUID();
  const objectKey = `derivations/${derivation.id}/files/${fileId}`;
  const originalName = safeFileName(upload.name, kind === "image" ? "image" : "measured.csv");
  await putObject({ key: objectKey, body: bytes, contentType: checked.contentType });
  let stored: StoredFile;
  try {
    stored = await createFile({
      teamId: derivation.teamId,
      file: {
        id: fileId,
        derivationId: derivation.id,
        kind,
        objectKey,
        originalName,
        contentType: checked.contentType,
        sizeBytes: bytes.byteLength,
        uploadedById: user.id,
        summary: checked.summary,
      },
    });
  } catch (error) {
    await deleteObject({ key: objectKey }).catch((cleanup) => console.error("[holonomy] could not remove an orphaned upload:", cleanup));
    throw error;
  }
  return { ...stored, uploadedByName: user.name };
}
