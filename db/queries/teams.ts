import "server-only";
import { returnedRow } from "./returned-row";
import { and, asc, count, eq, sql } from "drizzle-orm";
import { db, type Executor } from "../client";
import { ConflictError, NotFoundError } from "../errors";
import { memberships, teams, users, type MemberRole, type Membership, type Team } from "../schema";
import { recordAuditEvent } from "./audit";
import { notifyAccessChanged } from "./collab";

export interface TeamWithRole extends Team {
  role: MemberRole;
  memberCount: number;
}

export interface Member {
  userId: string;
  email: string;
  name: string;
  role: MemberRole;
  joinedAt: Date;
}

function slugify(name: string): string {
  const base = name
    .toLowerCase()
    .normalize("NFKD")
    .replace(/[^a-z0-9]+/g, "-")
    .replace(/^-+|-+$/g, "")
    .slice(0, 48);
  return base || "team";
}

/** Creates a team and makes `leadUserId` its first lead, in one transaction. */
export async function createTeamWithLead({ name, leadUserId }: { name: string; leadUserId: string }): Promise<Team> {
  return db.transaction(async (tx) => {
    const base = slugify(name);
    const { taken } = returnedRow(
      await tx
        .select({ taken: count() })
        .from(teams)
        .where(sql`${teams.slug} = ${base} or ${teams.slug} like ${base + "-%"}`),
      "team slug count",
    );
    const slug = taken === 0 ? base : `${base}-${crypto.randomUUID().slice(0, 8)}`;
    const team = returnedRow(await tx.insert(teams).values({ name: name.trim(), slug }).returning(), "team");
    await tx.insert(memberships).values({ teamId: team.id, userId: leadUserId, role: "lead" });
    await recordAuditEvent({ teamId: team.id, actorId: leadUserId, action: "team.create", targetType: "team", targetId: team.id }, tx);
    return team;
  });
}

export async function getTeamById({ id }: { id: string }, executor: Executor = db): Promise<Team | null> {
  const [team] = await executor.select().from(teams).where(eq(teams.id, id)).limit(1);
  return team ?? null;
}

export async function getTeamBySlug({ slug }: { slug: string }, executor: Executor = db): Promise<Team | null> {
  const [team] = await executor.select().from(teams).where(eq(teams.slug, slug)).limit(1);
  return team ?? null;
}

/** The teams a user belongs to, with their role in each, by name. */
export async function getTeamsByUserId({ userId }: { userId: string }): Promise<TeamWithRole[]> {
  const memberCounts = db
    .select({ teamId: memberships.teamId, memberCount: count().as("member_count") })
    .from(memberships)
    .groupBy(memberships.teamId)
    .as("member_counts");
  const rows = await db
    .select({ team: teams, role: memberships.role, memberCount: memberCounts.memberCount })
    .from(memberships)
    .innerJoin(teams, eq(teams.id, memberships.teamId))
    .innerJoin(memberCounts, eq(memberCounts.teamId, teams.id))
    .where(eq(memberships.userId, userId))
    .orderBy(asc(teams.name));
  return rows.map((row) => ({ ...row.team, role: row.role, memberCount: Number(row.memberCount) }));
}

export async function getMembershipByTeamIdAndUserId(
  { teamId, userId }: { teamId: string; userId: string },
  executor: Executor = db,
): Promise<Membership | null> {
  const [membership] = await executor
    .select()
    .from(memberships)
    .where(and(eq(memberships.teamId, teamId), eq(memberships.userId, userId)))
    .limit(1);
  return membership ?? null;
}

export async function getMembersByTeamId({ teamId }: { teamId: string }): Promise<Member[]> {
  return db
    .select({
      userId: users.id,
      email: users.email,
      name: users.name,
      role: memberships.role,
      joinedAt: memberships.createdAt,
    })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.teamId, teamId))
    .orderBy(asc(users.name));
}

/**
 * Adds a member, or changes the role of an existing one (used by invite
 * acceptance and the seed). Returns the membership.
 */
export async function upsertMembership(
  { teamId, userId, role }: { teamId: string; userId: string; role: MemberRole },
  executor: Executor = db,
): Promise<Membership> {
  return returnedRow(
    await executor
      .insert(memberships)
      .values({ teamId, userId, role })
      .onConflictDoUpdate({
        target: [memberships.teamId, memberships.userId],
        set: { role, updatedAt: new Date() },
      })
      .returning(),
    "membership",
  );
}

// Locks the team's membership rows so two concurrent changes cannot both remove
// "the other" lead. Returns the number of leads after the lock is taken.
async function lockLeadCount(executor: Executor, teamId: string): Promise<number> {
  const rows = await executor.select({ role: memberships.role }).from(memberships).where(eq(memberships.teamId, teamId)).for("update");
  return rows.filter((row) => row.role === "lead").length;
}

/** Changes a member's role; refuses to demote the team's last lead. */
export async function updateMemberRoleByTeamIdAndUserId({
  teamId,
  userId,
  role,
  actorId,
}: {
  teamId: string;
  userId: string;
  role: MemberRole;
  actorId: string;
}): Promise<Membership> {
  return db.transaction(async (tx) => {
    const leads = await lockLeadCount(tx, teamId);
    const current = await getMembershipByTeamIdAndUserId({ teamId, userId }, tx);
    if (!current) throw new NotFoundError("member", "That person is not a member of this team.");
    if (current.role === "lead" && role !== "lead" && leads <= 1) {
      throw new ConflictError("member", "A team needs at least one lead. Make someone else lead first.");
    }
    const updated = returnedRow(
      await tx.update(memberships).set({ role, updatedAt: new Date() }).where(eq(memberships.id, current.id)).returning(),
      "membership",
    );
    await recordAuditEvent(
      { teamId, actorId, action: "member.role_change", targetType: "user", targetId: userId, details: { from: current.role, to: role } },
      tx,
    );
    // Open co-editing connections are judged again against the new role once this commits.
    await notifyAccessChanged(tx, userId);
    return updated;
  });
}

/** Removes a member; refuses to remove the team's last lead. */
export async function deleteMembershipByTeamIdAndUserId({ teamId, userId, actorId }: { teamId: string; userId: string; actorId: string }): Promise<void> {
  await db.transaction(async (tx) => {
    const leads = await lockLeadCount(tx, teamId);
    const current = await getMembershipByTeamIdAndUserId({ teamId, userId }, tx);
    if (!current) throw new NotFoundError("member", "That person is not a member of this team.");
    if (current.role === "lead" && leads <= 1) {
      throw new ConflictError("member", "A team needs at least one lead. Make someone else lead first.");
    }
    await tx.delete(memberships).where(eq(memberships.id, current.id));
    await recordAuditEvent({ teamId, actorId, action: "member.remove", targetType: "user", targetId: userId, details: { role: current.role } }, tx);
    await notifyAccessChanged(tx, userId);
  });
}
