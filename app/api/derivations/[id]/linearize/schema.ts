import { z } from "zod";

/**
 * POST /api/derivations/[id]/linearize: the equilibrium (index into the list
 * the engine found) and input values at the operating point. The document is
 * the stored one unless a document is posted.
 */
export const linearizeSchema = z.object({
  equilibriumIndex: z.number().int().min(0).max(1000).default(0),
  inputValues: z.record(z.string().max(64), z.union([z.number(), z.string().max(64)])).default({}),
  document: z.unknown().optional(),
});
