import { z } from "zod";

const name = z
  .string()
  .regex(/^[A-Za-z_][A-Za-z0-9_]*$/, "Not a name.")
  .max(64);
const finite = z.number().refine(Number.isFinite, "Must be a finite number.");
const values = z.record(name, finite).refine((record) => Object.keys(record).length <= 200, "Too many entries.");

/** Most output points a server run may ask for (time span / output step). */
export const MAX_REQUESTED_POINTS = 200_000;

/**
 * POST /api/derivations/[id]/runs: a simulation of the derivation's current
 * model. Initial values and overrides are by name; inputs are expressions of
 * `t` and the parameters (`0.5*sin(2*t)`), parsed by the engine, never run as code.
 */
export const runSettingsSchema = z
  .object({
    label: z.string().trim().max(120).optional(),
    initialCoordinates: values.default({}),
    initialRates: values.optional(),
    startTime: finite.default(0),
    endTime: finite,
    outputStep: z.number().positive("Must be positive.").refine(Number.isFinite, "Must be a finite number."),
    relativeTolerance: z.number().min(1e-12).max(0.1).optional(),
    absoluteTolerance: z.number().positive().max(1).optional(),
    inputs: z
      .record(name, z.string().trim().min(1, "Write an expression of t.").max(2000))
      .refine((record) => Object.keys(record).length <= 50, "Too many inputs.")
      .optional(),
    parameters: values.optional(),
    /** Wall-clock limit for the integration; capped by the server's SIMULATION_TIME_LIMIT_MS. */
    timeLimitMs: z.number().int().min(100).max(600_000).optional(),
    energyDriftThreshold: z.number().positive().max(1).optional(),
  })
  .superRefine((settings, ctx) => {
    if (!(settings.endTime > settings.startTime)) {
      ctx.addIssue({ code: "custom", path: ["endTime"], message: "Must be after the start time." });
      return;
    }
    if ((settings.endTime - settings.startTime) / settings.outputStep > MAX_REQUESTED_POINTS) {
      ctx.addIssue({ code: "custom", path: ["outputStep"], message: `Too fine: at most ${MAX_REQUESTED_POINTS} output points per run.` });
    }
  });

export type RunSettingsInput = z.infer<typeof runSettingsSchema>;
