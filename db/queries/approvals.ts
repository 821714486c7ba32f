import "server-only";
import { and, desc, eq } from "drizzle-orm";
import { db, type Executor } from "../client";
import { approvals, derivations, revisions, users, type Approval, type DerivationStatus, type Revision } from "../schema";

/**
 * A derivation's latest approval, which stays in force for downstream builds
 * until the next one: unlocking for edits does not withdraw it.
 */
export interface LatestApproval {
  approval: Approval;
  approvedByName: string | null;
  revisionNumber: number;
  derivation: { id: string; title: string; status: DerivationStatus; lockedAt: Date | null };
}

/** Every derivation of the team that has an approval, with its latest one; most recently approved first. */
export async function getLatestApprovalsByTeamId({ teamId }: { teamId: string }, executor: Executor = db): Promise<LatestApproval[]> {
  const rows = await executor
    .selectDistinctOn([approvals.derivationId], {
      approval: approvals,
      approvedByName: users.name,
      revisionNumber: revisions.number,
      derivation: { id: derivations.id, title: derivations.title, status: derivations.status, lockedAt: derivations.lockedAt },
    })
    .from(approvals)
    .innerJoin(derivations, eq(derivations.id, approvals.derivationId))
    .innerJoin(revisions, eq(revisions.id, approvals.revisionId))
    .leftJoin(users, eq(users.id, approvals.approvedById))
    .where(eq(derivations.teamId, teamId))
    .orderBy(approvals.derivationId, desc(approvals.approvedAt), desc(approvals.createdAt));
  return rows.sort((a, b) => b.approval.approvedAt.getTime() - a.approval.approvedAt.getTime() || a.derivation.id.localeCompare(b.derivation.id));
}

/** The derivation's latest approval with the full approved revision, or null when it was never approved. */
export async function getLatestApprovalByDerivationId(
  { derivationId }: { derivationId: string },
  executor: Executor = db,
): Promise<{ approval: Approval; approvedByName: string | null; revision: Revision } | null> {
  const [row] = await executor
    .select({ approval: approvals, approvedByName: users.name, revision: revisions })
    .from(approvals)
    .innerJoin(revisions, and(eq(revisions.id, approvals.revisionId), eq(revisions.derivationId, approvals.derivationId)))
    .leftJoin(users, eq(users.id, approvals.approvedById))
    .where(eq(approvals.derivationId, derivationId))
    .orderBy(desc(approvals.approvedAt), desc(approvals.createdAt))
    .limit(1);
  return row ?? null;
}
