import { z } from "zod";

const dateOnly = z
  .string()
  .regex(/^\d{4}-\d{2}-\d{2}$/, "Use a date written as YYYY-MM-DD.")
  .refine((text) => !Number.isNaN(Date.parse(`${text}T00:00:00Z`)), "Not a calendar date.");

/** Filters of the team audit log, as the page's form and the API's query string carry them. */
export const auditQuerySchema = z.object({
  action: z
    .string()
    .trim()
    .max(80)
    .regex(/^[a-z_.]*$/, "An action is lower-case words joined by dots, e.g. derivation.create or derivation.")
    .optional()
    .transform((value) => value || undefined),
  actor: z
    .uuid("Not a member id.")
    .optional()
    .or(z.literal("").transform(() => undefined)),
  from: dateOnly.optional().or(z.literal("").transform(() => undefined)),
  to: dateOnly.optional().or(z.literal("").transform(() => undefined)),
  format: z.enum(["json", "csv"]).default("json"),
});
export type AuditQuery = z.infer<typeof auditQuerySchema>;
