import { z } from "zod";
import { emailField, nameField, roleField } from "./fields";

export const createTeamSchema = z.object({ name: nameField });
export type CreateTeamInput = z.infer<typeof createTeamSchema>;

export const inviteMemberSchema = z.object({ email: emailField, role: roleField });
export type InviteMemberInput = z.infer<typeof inviteMemberSchema>;

export const changeRoleSchema = z.object({ role: roleField });
export type ChangeRoleInput = z.infer<typeof changeRoleSchema>;

/** A new team API token: a name people recognise and an optional lifetime (blank: no expiry). */
export const createApiTokenSchema = z.object({
  name: z.string().trim().min(1, "Give the token a name, e.g. the build that uses it.").max(80, "At most 80 characters."),
  expiresInDays: z
    .number({ error: "Choose how long the token lasts." })
    .int()
    .min(1, "At least one day.")
    .max(730, "At most two years; create a new token then.")
    .nullable(),
});
export type CreateApiTokenInput = z.infer<typeof createApiTokenSchema>;
