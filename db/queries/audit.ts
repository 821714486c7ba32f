import "server-only";
import { and, desc, eq, gte, inArray, isNull, like, lt, or, sql } from "drizzle-orm";
import { currentClientAddress } from "@/lib/request-context";
import { db, type Executor } from "../client";
import { auditLog, memberships, users, type AuditLogEntry } from "../schema";

/**
 * Appends one event to the audit log. The client address comes from the request
 * being served (lib/request-context) unless the caller names one.
 */
export async function recordAuditEvent(
  event: {
    teamId: string | null;
    actorId: string | null;
    action: string;
    targetType: string;
    targetId?: string | null;
    details?: Record<string, unknown>;
    address?: string | null;
  },
  executor: Executor = db,
): Promise<void> {
  await executor.insert(auditLog).values({
    teamId: event.teamId,
    actorId: event.actorId,
    action: event.action,
    targetType: event.targetType,
    targetId: event.targetId ?? null,
    details: event.details ?? {},
    address: event.address !== undefined ? event.address : currentClientAddress(),
  });
}

export async function getAuditEventsByTeamId({ teamId, limit = 50 }: { teamId: string; limit?: number }, executor: Executor = db): Promise<AuditLogEntry[]> {
  return executor.select().from(auditLog).where(eq(auditLog.teamId, teamId)).orderBy(desc(auditLog.createdAt)).limit(limit);
}

/** What a lead filters the team's audit log by; every field is optional. */
export interface AuditFilters {
  /** An action, or a prefix ending in "." such as "derivation." */
  action?: string;
  actorId?: string;
  /** Inclusive lower and exclusive upper bounds on the event time. */
  from?: Date;
  to?: Date;
}

export type AuditRow = AuditLogEntry & { actorName: string | null; actorEmail: string | null };

/**
 * The team's audit log, newest first: the team's own events plus the account
 * events (sign-ins, failed sign-ins, password resets) of its current members,
 * which belong to no team.
 */
export async function getAuditRowsByTeamId(
  { teamId, filters = {}, limit = 200, offset = 0 }: { teamId: string; filters?: AuditFilters; limit?: number; offset?: number },
  executor: Executor = db,
): Promise<AuditRow[]> {
  const members = executor.select({ id: memberships.userId }).from(memberships).where(eq(memberships.teamId, teamId));
  const conditions = [or(eq(auditLog.teamId, teamId), and(isNull(auditLog.teamId), inArray(auditLog.actorId, members)))];
  if (filters.action) {
    conditions.push(filters.action.endsWith(".") ? like(auditLog.action, `${escapeLike(filters.action)}%`) : eq(auditLog.action, filters.action));
  }
  if (filters.actorId) conditions.push(eq(auditLog.actorId, filters.actorId));
  if (filters.from) conditions.push(gte(auditLog.createdAt, filters.from));
  if (filters.to) conditions.push(lt(auditLog.createdAt, filters.to));
  const rows = await executor
    .select({ entry: auditLog, actorName: users.name, actorEmail: users.email })
    .from(auditLog)
    .leftJoin(users, eq(users.id, auditLog.actorId))
    .where(and(...conditions))
    .orderBy(desc(auditLog.createdAt), desc(auditLog.id))
    .limit(limit)
    .offset(offset);
  return rows.map(({ entry, actorName, actorEmail }) => ({ ...entry, actorName, actorEmail }));
}

/** The distinct actions recorded for a team, for the filter list. */
export async function getAuditActionsByTeamId({ teamId }: { teamId: string }, executor: Executor = db): Promise<string[]> {
  const rows = await executor
    .selectDistinct({ action: auditLog.action })
    .from(auditLog)
    .where(
      or(eq(auditLog.teamId, teamId), and(isNull(auditLog.teamId), sql`${auditLog.actorId} in (select user_id from memberships where team_id = ${teamId})`)),
    )
    .orderBy(auditLog.action);
  return rows.map((row) => row.action);
}

function escapeLike(text: string): string {
  return text.replace(/[\\%_]/g, (c) => `\\${c}`);
}
