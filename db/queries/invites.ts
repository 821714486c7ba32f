import "server-only";
import { returnedRow } from "./returned-row";
import { and, desc, eq, gt, isNull, ne } from "drizzle-orm";
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
 * An open invite to the same address for the same team is replaced: its link
 * stops working and only the new one is listed.
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
}): Promise<Invite & { replaced: number }> {
  return db.transaction(async (tx) => {
    const replaced = await tx
      .delete(invites)
      .where(and(eq(invites.teamId, teamId), eq(invites.email, normaliseEmail(email)), isNull(invites.usedAt)))
      .returning({ id: invites.id, expiresAt: invites.expiresAt, role: invites.role });
    const open = replaced.filter((old) => inviteState({ usedAt: null, expiresAt: old.expiresAt }) === "open");
    const invite = await insertInvite(tx, { teamId, email, role, tokenHash, invitedById, expiresAt });
    if (open.length > 0) {
      await recordAuditEvent(
        {
          teamId,
          actorId: invitedById,
          action: "invite.replace",
          targetType: "invite",
          targetId: invite.id,
          details: { email: invite.email, replacedIds: open.map((old) => old.id), previousRoles: open.map((old) => old.role) },
        },
        tx,
      );
    }
    if (deliver) await deliver(invite);
    return { ...invite, replaced: open.length };
  });
}

/** An open invite of the team, locked for the rest of the transaction; not found when used, expired or withdrawn. */
async function lockOpenInvite(executor: Executor, teamId: string, inviteId: string): Promise<Invite> {
  const [invite] = await executor
    .select()
    .from(invites)
    .where(and(eq(invites.id, inviteId), eq(invites.teamId, teamId)))
    .for("update")
    .limit(1);
  if (!invite || inviteState(invite) !== "open") {
    throw new NotFoundError("invite", "That invitation is no longer open: it was accepted, withdrawn or replaced, or it expired.");
  }
  return invite;
}

/** Withdraws an open invite: its link stops working and it leaves the list. */
export async function revokeInviteById({ teamId, inviteId, actorId }: { teamId: string; inviteId: string; actorId: string }): Promise<Invite> {
  return db.transaction(async (tx) => {
    const invite = await lockOpenInvite(tx, teamId, inviteId);
    await tx.delete(invites).where(eq(invites.id, invite.id));
    await recordAuditEvent(
      { teamId, actorId, action: "invite.revoke", targetType: "invite", targetId: invite.id, details: { email: invite.email, role: invite.role } },
      tx,
    );
    return invite;
  });
}

/**
 * Sends an open invite again with a new link and a fresh expiry. Only a hash
 * of each token is stored, so the old link cannot be re-sent: it stops working.
 */
export async function resendInviteById({
  teamId,
  inviteId,
  actorId,
  tokenHash,
  expiresAt,
  deliver,
}: {
  teamId: string;
  inviteId: string;
  actorId: string;
  tokenHash: string;
  expiresAt: Date;
  deliver?: (invite: Invite) => Promise<void>;
}): Promise<Invite> {
  return db.transaction(async (tx) => {
    const open = await lockOpenInvite(tx, teamId, inviteId);
    const invite = returnedRow(
      await tx.update(invites).set({ tokenHash, expiresAt, updatedAt: new Date() }).where(eq(invites.id, open.id)).returning(),
      "invite",
    );
    await recordAuditEvent(
      { teamId, actorId, action: "invite.resend", targetType: "invite", targetId: invite.id, details: { email: invite.email, role: invite.role } },
      tx,
    );
    if (deliver) await deliver(invite);
    return invite;
  });
}

async function insertInvite(
  executor: Executor,
  {
    teamId,
    email,
    role,
    tokenHash,
    invitedById,
    expiresAt,
  }: { teamId: string; email: string; role: MemberRole; tokenHash: string; invitedById: string; expiresAt: Date },
): Promise<Invite> {
  const invite = returnedRow(
    await executor
      .insert(invites)
      .values({ teamId, email: normaliseEmail(email), role, tokenHash, invitedById, expiresAt })
      .returning(),
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
    if (!invite) throw new NotFoundError("invite", "This invite link is not valid: it may have been withdrawn or replaced by a newer invitation.");
    const state = inviteState(invite);
    if (state === "used") throw new ConflictError("invite", "This invite has already been used.");
    if (state === "expired") throw new ConflictError("invite", "This invite has expired. Ask a team lead for a new one.");
    if (invite.email !== normaliseEmail(userEmail)) {
      throw new NotPermittedError("invite", `This invite was sent to ${invite.email}. Sign in with that address to accept it.`);
    }
    await tx.update(invites).set({ usedAt: new Date(), usedById: userId, updatedAt: new Date() }).where(eq(invites.id, invite.id));
    // Other open invites to the same address for this team are settled by this one.
    await tx.delete(invites).where(and(eq(invites.teamId, invite.teamId), eq(invites.email, invite.email), isNull(invites.usedAt), ne(invites.id, invite.id)));
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
