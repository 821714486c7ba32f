import { z } from "zod";
import { AppError } from "@/lib/errors";
import { viewPreferencesSchema, type ViewPreferences } from "@/lib/notebook/view-preferences";

/** PUT /api/derivations/[id]/view-preferences: the caller's whole view of the derivation. */
export const saveViewPreferencesSchema = z.object({ preferences: z.unknown() });

/** Posted preferences, validated; a 400 with field errors keyed `preferences.<path>` otherwise. */
export function validViewPreferencesOrThrow(input: unknown): ViewPreferences {
  const parsed = viewPreferencesSchema.safeParse(input);
  if (parsed.success) return parsed.data;
  const fieldErrors: Record<string, string[]> = {};
  for (const issue of parsed.error.issues.slice(0, 50)) {
    const key = ["preferences", ...issue.path.map(String)].join(".");
    (fieldErrors[key] ??= []).push(issue.message);
  }
  throw new AppError("bad_request:validation", "The view preferences are not valid.", { fieldErrors });
}
