import { z } from "zod";

export const linearizationSettingsSchema = z.object({
  equilibriumIndex: z.number().int().min(0).max(1000).optional(),
  inputValues: z.record(z.string().max(64), z.union([z.number(), z.string().max(64)])).optional(),
});

/**
 * POST /api/derivations/[id]/evaluate: evaluates the stored document, or the
 * posted one (unsaved edits), optionally with other linearization settings.
 */
export const evaluateSchema = z.object({
  document: z.unknown().optional(),
  linearization: linearizationSettingsSchema.optional(),
});
