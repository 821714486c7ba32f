import { z } from "zod";
import { derivationTitleField } from "@/lib/validation/derivations";

/** Largest accepted model file, in characters (the engine's expression limit is 100 000). */
export const MAX_MODEL_FILE_LENGTH = 500_000;

/**
 * POST /api/teams/[teamId]/derivations/import, either multipart/form-data with
 * `file` (the .model.json) and an optional `title`, or JSON: the model file
 * itself, or `{ "model": {…}, "title"?: "…" }`.
 */
export const importOptionsSchema = z.object({ title: derivationTitleField.optional() });
