import { z } from "zod";
import { uuidField } from "@/lib/validation/fields";

/**
 * POST /api/derivations/[id]/fit/apply: write fitted values into the
 * Parameters cell. `fileId` names the measured file they came from (audit log);
 * `baseUpdatedAt` guards against overwriting a newer save (409).
 */
export const applyFitSchema = z.object({
  values: z
    .record(
      z
        .string()
        .regex(/^[A-Za-z_][A-Za-z0-9_]*$/, "Not a name.")
        .max(64),
      z.number().refine(Number.isFinite, "Must be a finite number."),
    )
    .refine((record) => Object.keys(record).length > 0, "Give at least one value.")
    .refine((record) => Object.keys(record).length <= 50, "Too many values."),
  fileId: uuidField.optional(),
  baseUpdatedAt: z.iso.datetime({ offset: true }).optional(),
});
