import { getFilesByDerivationId } from "@/db/queries/files";
import { formDataOf, readBodyWithin } from "@/lib/api/body";
import { derivationRoute } from "@/lib/api/resource-route";
import { AppError } from "@/lib/errors";
import { largestUploadBytes, storeUpload, uploadTooLarge } from "@/lib/files/service";
import { fileView } from "@/lib/files/views";
import { parseOrThrow } from "@/lib/validation/parse";
import { MULTIPART_OVERHEAD_BYTES, uploadFieldsSchema } from "./schema";
import { enforceRateLimits, rateLimits } from "@/lib/auth/rate-limit";

type Params = { id: string };

/** Files attached to the derivation, newest first. */
export const GET = derivationRoute<Params>("derivation:read", async ({ derivation }) => {
  const files = await getFilesByDerivationId({ derivationId: derivation.id });
  return Response.json({ files: files.map(fileView) });
});

/**
 * Uploads a measured-data CSV or an image. Everything is checked before
 * anything is stored (lib/files/service.ts).
 */
export const POST = derivationRoute<Params>("derivation:attach", async ({ request, user, derivation }) => {
  await enforceRateLimits([[rateLimits.uploadsByUser, user.id]], "rate_limited:file", "Too many uploads in a short time. Wait a few minutes and try again.");
  const largest = largestUploadBytes();
  // Refused before reading when the declared length is missing or too large, and cut off while reading past the limit.
  const body = await readBodyWithin(request, { limit: largest + MULTIPART_OVERHEAD_BYTES, tooLarge: () => uploadTooLarge(largest) });
  let form: FormData;
  try {
    form = await formDataOf(request, body);
  } catch {
    throw new AppError("bad_request:validation", 'Send the file as multipart/form-data in a field named "file".');
  }
  const upload = form.get("file");
  if (!(upload instanceof File)) {
    throw new AppError("bad_request:validation", undefined, { fieldErrors: { file: ["Choose a file to upload."] } });
  }
  const fields = parseOrThrow(uploadFieldsSchema, { kind: form.get("kind") ?? undefined });
  const stored = await storeUpload({ derivation, user, upload, kind: fields.kind });
  return Response.json({ file: fileView(stored) }, { status: 201 });
});
