import { z } from "zod";
import { derivationStatuses, memberRoles } from "@/lib/domain";

export const emailField = z.string().trim().min(1, "Enter your e-mail address.").max(254).pipe(z.email("Enter a valid e-mail address."));
// bcrypt hashes only the first 72 bytes of a password, so anything longer would be
// silently ignored; the limit is on UTF-8 bytes (an accented letter takes 2, many symbols 3 or 4).
export const PASSWORD_MAX_BYTES = 72;
const utf8Length = (value: string) => new TextEncoder().encode(value).length;
export const passwordField = z
  .string()
  .min(10, "Use at least 10 characters.")
  .refine((value) => utf8Length(value) <= PASSWORD_MAX_BYTES, {
    message: `Use at most ${PASSWORD_MAX_BYTES} bytes (about ${PASSWORD_MAX_BYTES} letters; accented letters and symbols count 2–4).`,
  });
export const nameField = z.string().trim().min(1, "Enter a name.").max(120, "Use at most 120 characters.");
export const roleField = z.enum(memberRoles, { error: "Choose lead, analyst, reviewer or viewer." });
export const statusField = z.enum(derivationStatuses, { error: "Choose draft, in review or approved." });
export const uuidField = z.uuid("Not a valid id.");
