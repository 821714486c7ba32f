import { z } from "zod";

/** GET /api/derivations/[id]/code?language=c|python|julia|matlab|typescript ("octave" is read as matlab). */
export const codeQuerySchema = z.object({
  language: z.enum(["c", "python", "julia", "matlab", "octave", "typescript"], { error: "Choose language c, python, julia, matlab or typescript." }),
});
