import { z } from "zod";

/** GET /api/derivations/[id]/export?format=model|latex */
export const exportQuerySchema = z.object({
  format: z.enum(["model", "latex"], { error: "Choose format=model or format=latex." }),
});
