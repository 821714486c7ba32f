import { z } from "zod";
import { emailField, nameField, roleField } from "./fields";

export const createTeamSchema = z.object({ name: nameField });
export type CreateTeamInput = z.infer<typeof createTeamSchema>;

export const inviteMemberSchema = z.object({ email: emailField, role: roleField });
export type InviteMemberInput = z.infer<typeof inviteMemberSchema>;

export const changeRoleSchema = z.object({ role: roleField });
export type ChangeRoleInput = z.infer<typeof changeRoleSchema>;
