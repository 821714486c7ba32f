import { z } from "zod";
import { CODE_EXPORT_LANGUAGES } from "@/lib/notebook/document";

/** GET /api/v1/derivations/[id]/approved?language=c|python|typescript|julia|octave (optional). */
export const approvedQuerySchema = z.object({
  language: z.enum(CODE_EXPORT_LANGUAGES, { error: `Choose language ${CODE_EXPORT_LANGUAGES.join(", ")}, or leave it out for no code.` }).optional(),
});
