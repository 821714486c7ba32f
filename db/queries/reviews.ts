import "server-only";
import { and, asc, desc, eq, inArray, isNull } from "drizzle-orm";
import { contentHash } from "@/lib/history/content-hash";
import { db, type Executor } from "../client";
import {
  approvals,
  derivations,
  reviewAssignments,
  reviewRequests,
  users,
  type Approval,
  type Derivation,
  type ReviewAssignment,
  type ReviewDecision,
  type ReviewRequest,
  type Revision,
} from "../schema";
import { recordAuditEvent } from "./audit";
import { createNotifications } from "./notifications";
import { returnedRow } from "./returned-row";
import { currentRevision, getLatestRevisionByDerivationId, lockDerivationRow } from "./revisions";

// Review, approval and unlock as single transactions on the locked derivation row,
// so an approval and an edit racing each other resolve one way or the other. Each
// returns a discriminated result; the service (lib/review) turns refusals into HTTP errors.

export type ReviewRefusal =
  | { ok: false; reason: "missing" }
  | { ok: false; reason: "locked"; derivation: Derivation }
  | { ok: false; reason: "not_locked" }
  | { ok: false; reason: "no_open_review" }
  | { ok: false; reason: "not_assigned" }
  | { ok: false; reason: "no_revision" }
  | { ok: false; reason: "not_latest"; latest: Revision }
  | { ok: false; reason: "changed_since"; latest: Revision }
  | { ok: false; reason: "own_changes"; latest: Revision }
  | { ok: false; reason: "changes_requested"; latest: Revision };

export async function requestReview({
  derivationId,
  requesterId,
  reviewerIds,
  message,
}: {
  derivationId: string;
  requesterId: string;
  reviewerIds: string[];
  message: string;
}): Promise<{ ok: true; request: ReviewRequest; revision: Revision; derivation: Derivation } | ReviewRefusal> {
  return db.transaction(async (tx) => {
    const derivation = await lockDerivationRow(tx, derivationId);
    if (!derivation) return { ok: false, reason: "missing" } as const;
    if (derivation.lockedAt) return { ok: false, reason: "locked", derivation } as const;
    const revision = await currentRevision(tx, { derivation, kind: "review", createdById: requesterId });
    const now = new Date();
    await tx
      .update(reviewRequests)
      .set({ closedAt: now, updatedAt: now })
      .where(and(eq(reviewRequests.derivationId, derivationId), isNull(reviewRequests.closedAt)));
    const request = returnedRow(
      await tx.insert(reviewRequests).values({ derivationId, revisionId: revision.id, requestedById: requesterId, message }).returning(),
      "review request",
    );
    await tx.insert(reviewAssignments).values(reviewerIds.map((reviewerId) => ({ requestId: request.id, reviewerId })));
    await tx.update(derivations).set({ status: "in_review", updatedAt: now }).where(eq(derivations.id, derivationId));
    await recordAuditEvent(
      {
        teamId: derivation.teamId,
        actorId: requesterId,
        action: "derivation.review_request",
        targetType: "derivation",
        targetId: derivationId,
        details: { revision: revision.number, reviewerIds },
      },
      tx,
    );
    await createNotifications(
      reviewerIds.map((userId) => ({
        userId,
        teamId: derivation.teamId,
        derivationId,
        actorId: requesterId,
        kind: "review_request",
        text: `asked you to review revision ${revision.number} of "${derivation.title}"`,
      })),
      tx,
    );
    return { ok: true, request, revision, derivation } as const;
  });
}

export async function decideReview({
  derivationId,
  reviewerId,
  decision,
  comment,
}: {
  derivationId: string;
  reviewerId: string;
  decision: Exclude<ReviewDecision, "pending">;
  comment: string;
}): Promise<{ ok: true; request: ReviewRequest; assignment: ReviewAssignment; derivation: Derivation } | ReviewRefusal> {
  return db.transaction(async (tx) => {
    const derivation = await lockDerivationRow(tx, derivationId);
    if (!derivation) return { ok: false, reason: "missing" } as const;
    if (derivation.lockedAt) return { ok: false, reason: "locked", derivation } as const;
    const [request] = await tx
      .select()
      .from(reviewRequests)
      .where(and(eq(reviewRequests.derivationId, derivationId), isNull(reviewRequests.closedAt)))
      .orderBy(desc(reviewRequests.createdAt))
      .limit(1);
    if (!request) return { ok: false, reason: "no_open_review" } as const;
    const now = new Date();
    const [assignment] = await tx
      .update(reviewAssignments)
      .set({ decision, comment, decidedAt: now, updatedAt: now })
      .where(and(eq(reviewAssignments.requestId, request.id), eq(reviewAssignments.reviewerId, reviewerId)))
      .returning();
    if (!assignment) return { ok: false, reason: "not_assigned" } as const;
    if (decision === "changes_requested") {
      // The analyst fixes and asks again; the derivation goes back to draft until then.
      await tx.update(reviewRequests).set({ closedAt: now, updatedAt: now }).where(eq(reviewRequests.id, request.id));
      await tx.update(derivations).set({ status: "draft", updatedAt: now }).where(eq(derivations.id, derivationId));
    }
    await recordAuditEvent(
      {
        teamId: derivation.teamId,
        actorId: reviewerId,
        action: decision === "signed_off" ? "derivation.sign_off" : "derivation.changes_requested",
        targetType: "derivation",
        targetId: derivationId,
        details: { requestId: request.id, comment },
      },
      tx,
    );
    if (request.requestedById) {
      await createNotifications(
        [
          {
            userId: request.requestedById,
            teamId: derivation.teamId,
            derivationId,
            actorId: reviewerId,
            kind: decision,
            text: decision === "signed_off" ? `signed off "${derivation.title}"` : `requested changes to "${derivation.title}"`,
          },
        ],
        tx,
      );
    }
    return { ok: true, request, assignment, derivation } as const;
  });
}

/**
 * Approves and locks `revisionId`, which must be the latest revision and hold
 * exactly the current content, by a lead who is not among its authors.
 */
export async function approveRevision({
  derivationId,
  revisionId,
  approverId,
}: {
  derivationId: string;
  revisionId: string;
  approverId: string;
}): Promise<{ ok: true; approval: Approval; revision: Revision; derivation: Derivation } | ReviewRefusal> {
  return db.transaction(async (tx) => {
    const derivation = await lockDerivationRow(tx, derivationId);
    if (!derivation) return { ok: false, reason: "missing" } as const;
    if (derivation.lockedAt) return { ok: false, reason: "locked", derivation } as const;
    const latest = await getLatestRevisionByDerivationId({ derivationId }, tx);
    if (!latest) return { ok: false, reason: "no_revision" } as const;
    if (latest.id !== revisionId) return { ok: false, reason: "not_latest", latest } as const;
    if (latest.contentHash !== contentHash(derivation.content) || derivation.pendingAuthorIds.length > 0)
      return { ok: false, reason: "changed_since", latest } as const;
    if (latest.authorIds.includes(approverId)) return { ok: false, reason: "own_changes", latest } as const;
    const [open] = await tx
      .select({ id: reviewRequests.id })
      .from(reviewRequests)
      .innerJoin(reviewAssignments, eq(reviewAssignments.requestId, reviewRequests.id))
      .where(and(eq(reviewRequests.derivationId, derivationId), isNull(reviewRequests.closedAt), eq(reviewAssignments.decision, "changes_requested")))
      .limit(1);
    if (open) return { ok: false, reason: "changes_requested", latest } as const;
    const now = new Date();
    const approval = returnedRow(
      await tx.insert(approvals).values({ derivationId, revisionId, contentHash: latest.contentHash, approvedById: approverId, approvedAt: now }).returning(),
      "approval",
    );
    const locked = returnedRow(
      await tx
        .update(derivations)
        .set({ status: "approved", lockedRevisionId: revisionId, lockedAt: now, lockedById: approverId, updatedAt: now })
        .where(eq(derivations.id, derivationId))
        .returning(),
      "derivation",
    );
    await tx
      .update(reviewRequests)
      .set({ closedAt: now, updatedAt: now })
      .where(and(eq(reviewRequests.derivationId, derivationId), isNull(reviewRequests.closedAt)));
    await recordAuditEvent(
      {
        teamId: derivation.teamId,
        actorId: approverId,
        action: "derivation.approve",
        targetType: "derivation",
        targetId: derivationId,
        details: { revision: latest.number, revisionId, contentHash: latest.contentHash },
      },
      tx,
    );
    const notify = [...new Set([derivation.ownerId, ...latest.authorIds].filter((id): id is string => !!id && id !== approverId))];
    await createNotifications(
      notify.map((userId) => ({
        userId,
        teamId: derivation.teamId,
        derivationId,
        actorId: approverId,
        kind: "approved",
        text: `approved revision ${latest.number} of "${derivation.title}"`,
      })),
      tx,
    );
    return { ok: true, approval, revision: latest, derivation: locked } as const;
  });
}

/** Unlocks an approved derivation (back to draft), keeping the approval with who unlocked it and why. */
export async function unlockDerivation({
  derivationId,
  actorId,
  reason,
}: {
  derivationId: string;
  actorId: string;
  reason: string;
}): Promise<{ ok: true; derivation: Derivation; approval: Approval | null } | ReviewRefusal> {
  return db.transaction(async (tx) => {
    const derivation = await lockDerivationRow(tx, derivationId);
    if (!derivation) return { ok: false, reason: "missing" } as const;
    if (!derivation.lockedAt) return { ok: false, reason: "not_locked" } as const;
    const now = new Date();
    const [approval] = await tx
      .update(approvals)
      .set({ unlockedAt: now, unlockedById: actorId, unlockReason: reason, updatedAt: now })
      .where(and(eq(approvals.derivationId, derivationId), isNull(approvals.unlockedAt)))
      .returning();
    const unlocked = returnedRow(
      await tx
        .update(derivations)
        .set({ status: "draft", lockedRevisionId: null, lockedAt: null, lockedById: null, updatedAt: now })
        .where(eq(derivations.id, derivationId))
        .returning(),
      "derivation",
    );
    await recordAuditEvent(
      {
        teamId: derivation.teamId,
        actorId,
        action: "derivation.unlock",
        targetType: "derivation",
        targetId: derivationId,
        details: { reason, revisionId: derivation.lockedRevisionId },
      },
      tx,
    );
    return { ok: true, derivation: unlocked, approval: approval ?? null } as const;
  });
}

export type ReviewState = {
  request: (ReviewRequest & { requestedByName: string | null }) | null;
  assignments: (ReviewAssignment & { reviewerName: string | null })[];
  approvals: (Approval & { approvedByName: string | null })[];
};

/** The open (or latest) review request with its reviewers, and every approval, newest first. */
export async function getReviewStateByDerivationId({ derivationId }: { derivationId: string }, executor: Executor = db): Promise<ReviewState> {
  const [latest] = await executor
    .select({ request: reviewRequests, requestedByName: users.name })
    .from(reviewRequests)
    .leftJoin(users, eq(users.id, reviewRequests.requestedById))
    .where(eq(reviewRequests.derivationId, derivationId))
    .orderBy(desc(reviewRequests.createdAt))
    .limit(1);
  const assignments = latest
    ? (
        await executor
          .select({ assignment: reviewAssignments, reviewerName: users.name })
          .from(reviewAssignments)
          .leftJoin(users, eq(users.id, reviewAssignments.reviewerId))
          .where(eq(reviewAssignments.requestId, latest.request.id))
          .orderBy(asc(users.name))
      ).map(({ assignment, reviewerName }) => ({ ...assignment, reviewerName }))
    : [];
  const approvalRows = await executor
    .select({ approval: approvals, approvedByName: users.name })
    .from(approvals)
    .leftJoin(users, eq(users.id, approvals.approvedById))
    .where(eq(approvals.derivationId, derivationId))
    .orderBy(desc(approvals.approvedAt));
  return {
    request: latest ? { ...latest.request, requestedByName: latest.requestedByName } : null,
    assignments,
    approvals: approvalRows.map(({ approval, approvedByName }) => ({ ...approval, approvedByName })),
  };
}

export async function getApprovalsByRevisionIds({ revisionIds }: { revisionIds: string[] }, executor: Executor = db): Promise<Approval[]> {
  if (revisionIds.length === 0) return [];
  return executor.select().from(approvals).where(inArray(approvals.revisionId, revisionIds));
}
