/**
 * What the team routes answer (/api/teams, …/members, …/invites): types and
 * pure functions, shared by the routes and the team pages.
 */
import type { Member, TeamWithRole } from "@/db/queries/teams";
import type { Invite, Team } from "@/db/schema";
import type { Jsonified } from "@/lib/api/json";

export type TeamJson = Jsonified<Team>;
export type TeamWithRoleJson = Jsonified<TeamWithRole>;
export type MemberJson = Jsonified<Member>;

/** An open invite as the team's leads see it (never its token). */
export interface InviteJson {
  id: string;
  email: string;
  role: Invite["role"];
  /** ISO 8601. */
  expiresAt: string;
  /** ISO 8601. */
  createdAt: string;
  /** When the invitation was last sent (created, replaced or re-sent); ISO 8601. */
  sentAt: string;
}

export function inviteView({
  id,
  email,
  role,
  expiresAt,
  createdAt,
  updatedAt,
}: Pick<Invite, "id" | "email" | "role" | "expiresAt" | "createdAt" | "updatedAt">): InviteJson {
  return { id, email, role, expiresAt: expiresAt.toISOString(), createdAt: createdAt.toISOString(), sentAt: updatedAt.toISOString() };
}
