import { z } from "zod";

/**
 * POST /api/derivations/[id]/files, multipart/form-data:
 * - `file`: the upload (a measured-data CSV, or a PNG, JPEG or WebP image);
 * - `kind` (optional): `measured_csv` or `image`; without it, images are told
 *   apart by their first bytes and anything else is read as a CSV.
 */
export const uploadFieldsSchema = z.object({
  kind: z.enum(["measured_csv", "image"]).optional(),
});

/** Room for the multipart framing around the file itself. */
export const MULTIPART_OVERHEAD_BYTES = 64 * 1024;
