import "server-only";
import { returnedRow } from "./returned-row";
import { and, desc, eq, gt, isNull } from "drizzle-orm";
import { db, type Executor } from "../client";
import { ConflictError, NotFoundError, NotPermittedError } from "../errors";
import { invites, teams, type Invite, type MemberRole, type Membership } from "../schema";
import { recordAuditEvent } from "./audit";
import { upsertMembership } from "./teams";
import { normaliseEmail } from "./users";

export type InviteState = "open" | "used" | "expired";

export interface InviteWithTeam extends Invite {
  teamName: string;
  state: InviteState;
}

export function inviteState(invite: Pick<Invite, "usedAt" | "expiresAt">, now = new Date()): InviteState {
  if (invite.usedAt) return "used";
  if (invite.expiresAt.getTime() <= now.getTime()) return "expired";
  return "open";
}

/**
 * Stores an invite and runs `deliver` (sending the e-mail) inside the same
 * transaction: if the e-mail cannot be sent, no orphan invite is left behind.
 */
export async function createInvite({
  teamId,
  email,
  role,
  tokenHash,
  invitedById,
  expiresAt,
  deliver,
}: {
  teamId: string;
  email: string;
  role: MemberRole;
  tokenHash: string;
  invitedById: string;
  expiresAt: Date;
  deliver?: (invite: Invite) => Promise<void>;
}): Promise<Invite> {
  return db.transaction(async (tx) => {
    const invite = await insertInvite(tx, { teamId, email, role, tokenHash, invitedById, expiresAt });
    if (deliver) await deliver(invite);
    return invite;
  });
}

async function insertInvite(
  executor: Executor,
  { teamId, email, role, tokenHash, invitedById, expiresAt }: { teamId: string; email: string; role: MemberRole; tokenHash: string; invitedById: string; expiresAt: Date },
): Promise<Invite> {
  const invite = returnedRow(
    await executor.insert(invites).values({ teamId, email: normaliseEmail(email), role, tokenHash, invitedById, expiresAt }).returning(),
    "invite",
  );
  await recordAuditEvent(
    { teamId, actorId: invitedById, action: "invite.create", targetType: "invite", targetId: invite.id, details: { email: invite.email, role } },
    executor,
  );
  return invite;
}

export async function getInviteByTokenHash({ tokenHash }: { tokenHash: string }): Promise<InviteWithTeam | null> {
  const [row] = await db
    .select({ invite: invites, teamName: teams.name })
    .from(invites)
    .innerJoin(teams, eq(teams.id, invites.teamId))
    .where(eq(invites.tokenHash, tokenHash))
    .limit(1);
  if (!row) return null;
  return { ...row.invite, teamName: row.teamName, state: inviteState(row.invite) };
}

export async function getOpenInvitesByTeamId({ teamId }: { teamId: string }): Promise<Invite[]> {
  return db
    .select()
    .from(invites)
    .where(and(eq(invites.teamId, teamId), isNull(invites.usedAt), gt(invites.expiresAt, new Date())))
    .orderBy(desc(invites.createdAt));
}

/**
 * Marks the invite used by `userId` and adds them to the team with the invited
 * role, atomically. Only the invited address may accept. Someone who is already
 * a member keeps their current role.
 */
export async function acceptInviteByTokenHash({
  tokenHash,
  userId,
  userEmail,
}: {
  tokenHash: string;
  userId: string;
  userEmail: string;
}): Promise<{ invite: Invite; membership: Membership }> {
  return db.transaction(async (tx) => {
    const [invite] = await tx.select().from(invites).where(eq(invites.tokenHash, tokenHash)).for("update").limit(1);
    if (!invite) throw new NotFoundError("invite", "This invite link is not valid.");
    const state = inviteState(invite);
    if (state === "used") throw new ConflictError("invite", "This invite has already been used.");
    if (state === "expired") throw new ConflictError("invite", "This invite has expired. Ask a team lead for a new one.");
    if (invite.email !== normaliseEmail(userEmail)) {
      throw new NotPermittedError("invite", `This invite was sent to ${invite.email}. Sign in with that address to accept it.`);
    }
    await tx.update(invites).set({ usedAt: new Date(), usedById: userId, updatedAt: new Date() }).where(eq(invites.id, invite.id));
    const existing = await tx.query.memberships.findFirst({
      where: (m, { and: both, eq: equals }) => both(equals(m.teamId, invite.teamId), equals(m.userId, userId)),
    });
    const membership = existing ?? (await upsertMembership({ teamId: invite.teamId, userId, role: invite.role }, tx));
    await recordAuditEvent(
      { teamId: invite.teamId, actorId: userId, action: "invite.accept", targetType: "invite", targetId: invite.id, details: { role: membership.role } },
      tx,
    );
    return { invite, membership };
  });
}
