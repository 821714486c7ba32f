import { z } from "zod";

const language = z.enum(["c", "python", "julia", "matlab", "octave", "typescript"], { error: "Choose language c, python, julia, matlab or typescript." });

/** GET /api/derivations/[id]/code?language=c|python|julia|matlab|typescript ("octave" is read as matlab). */
export const codeQuerySchema = z.object({ language });

/** POST /api/derivations/[id]/code: the language, and the document when it is not the stored one. */
export const codeRequestSchema = z.object({ language, document: z.unknown().optional() });
