import { z } from "zod";
import { derivationStatuses, memberRoles } from "@/lib/domain";

export const emailField = z.string().trim().min(1, "Enter your e-mail address.").max(254).pipe(z.email("Enter a valid e-mail address."));
export const passwordField = z
  .string()
  .min(10, "Use at least 10 characters.")
  .max(200, "Use at most 200 characters.");
export const nameField = z.string().trim().min(1, "Enter a name.").max(120, "Use at most 120 characters.");
export const roleField = z.enum(memberRoles, { error: "Choose lead, analyst, reviewer or viewer." });
export const statusField = z.enum(derivationStatuses, { error: "Choose draft, in review or approved." });
export const uuidField = z.uuid("Not a valid id.");
