import "server-only";
import { desc, eq } from "drizzle-orm";
import { db, type Executor } from "../client";
import { auditLog, type AuditLogEntry } from "../schema";

export async function recordAuditEvent(
  event: {
    teamId: string | null;
    actorId: string | null;
    action: string;
    targetType: string;
    targetId?: string | null;
    details?: Record<string, unknown>;
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
  });
}

export async function getAuditEventsByTeamId(
  { teamId, limit = 50 }: { teamId: string; limit?: number },
  executor: Executor = db,
): Promise<AuditLogEntry[]> {
  return executor.select().from(auditLog).where(eq(auditLog.teamId, teamId)).orderBy(desc(auditLog.createdAt)).limit(limit);
}
