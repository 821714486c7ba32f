import { z } from "zod";
import { uuidField } from "@/lib/validation/fields";

const name = z
  .string()
  .regex(/^[A-Za-z_][A-Za-z0-9_]*$/, "Not a name.")
  .max(64);
const finite = z.number().refine(Number.isFinite, "Must be a finite number.");
const values = z.record(name, finite).refine((record) => Object.keys(record).length <= 200, "Too many entries.");

/**
 * POST /api/derivations/[id]/fit: fit chosen parameters of the current model
 * to an attached measured-data file. The time span and output times come from
 * the file; initial coordinates default to its first row.
 */
export const fitSchema = z.object({
  fileId: uuidField,
  parameters: z
    .array(
      z
        .object({ name, initial: finite.optional(), min: finite.optional(), max: finite.optional() })
        .refine((p) => p.min === undefined || p.max === undefined || p.min < p.max, { message: "min must be below max.", path: ["max"] }),
    )
    .min(1, "Choose at least one parameter to fit.")
    .max(12),
  settings: z
    .object({
      initialCoordinates: values.optional(),
      initialRates: values.optional(),
      relativeTolerance: z.number().min(1e-12).max(0.1).optional(),
      absoluteTolerance: z.number().positive().max(1).optional(),
      inputs: z.record(name, z.string().trim().min(1).max(2000)).optional(),
      parameters: values.optional(),
    })
    .optional(),
  coordinateScales: z.record(name, z.number().positive()).optional(),
  maxIterations: z.number().int().min(1).max(500).optional(),
  /** Wall-clock limit; capped by the server's FIT_TIME_LIMIT_MS. */
  timeLimitMs: z.number().int().min(500).max(600_000).optional(),
  /** Write the fitted values into the Parameters cell as well (needs the right to edit). */
  apply: z.boolean().default(false),
});

/** The request body as a client sends it (defaults not yet applied). */
export type FitRequestBody = z.input<typeof fitSchema>;
