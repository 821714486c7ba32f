import "server-only";
import { getReviewStateByDerivationId } from "@/db/queries/reviews";
import { getRevisionsByDerivationId } from "@/db/queries/revisions";
import { getMembersByTeamId } from "@/db/queries/teams";
import type { Derivation, Membership } from "@/db/schema";
import { can } from "@/lib/auth/permissions";
import { currentIsLatest } from "@/lib/history/views";
import type { ReviewPanelData } from "./view";

/** The review panel's data for `userId` looking at `derivation` with `membership`. */
export async function reviewPanelData({
  derivation,
  membership,
  userId,
}: {
  derivation: Derivation;
  membership: Pick<Membership, "role">;
  userId: string;
}): Promise<ReviewPanelData> {
  const [revisions, state, members] = await Promise.all([
    getRevisionsByDerivationId({ derivationId: derivation.id }),
    getReviewStateByDerivationId({ derivationId: derivation.id }),
    getMembersByTeamId({ teamId: derivation.teamId }),
  ]);
  const nameOf = new Map(members.map((member) => [member.userId, member.name]));
  const numberOf = new Map(revisions.map((revision) => [revision.id, revision.number]));
  const latest = revisions[0];
  const locked = derivation.lockedAt !== null;
  const resource = { status: derivation.status, locked };
  const approval = locked ? state.approvals.find((entry) => entry.revisionId === derivation.lockedRevisionId && entry.unlockedAt === null) : undefined;
  const request = state.request;
  return {
    derivationId: derivation.id,
    status: derivation.status,
    myId: userId,
    latest: latest
      ? {
          id: latest.id,
          number: latest.number,
          contentHash: latest.contentHash,
          authorIds: latest.authorIds,
          authorNames: latest.authorIds.map((id) => nameOf.get(id) ?? "a former member"),
        }
      : null,
    currentIsLatest: currentIsLatest(derivation, latest),
    request: request
      ? {
          revisionId: request.revisionId,
          revisionNumber: numberOf.get(request.revisionId) ?? null,
          requestedById: request.requestedById,
          requestedByName: request.requestedByName,
          createdAt: request.createdAt.toISOString(),
          message: request.message,
          open: request.closedAt === null,
          reviewers: state.assignments.map((assignment) => ({
            id: assignment.reviewerId,
            name: assignment.reviewerName ?? "a former member",
            decision: assignment.decision,
            comment: assignment.comment,
            decidedAt: assignment.decidedAt?.toISOString() ?? null,
          })),
        }
      : null,
    lock:
      locked && derivation.lockedRevisionId
        ? {
            revisionId: derivation.lockedRevisionId,
            revisionNumber: numberOf.get(derivation.lockedRevisionId) ?? null,
            contentHash: approval?.contentHash ?? revisions.find((revision) => revision.id === derivation.lockedRevisionId)?.contentHash ?? "",
            approvedByName: approval?.approvedByName ?? (derivation.lockedById ? (nameOf.get(derivation.lockedById) ?? null) : null),
            approvedAt: (approval?.approvedAt ?? derivation.lockedAt!).toISOString(),
          }
        : null,
    candidates: members
      .filter(
        (member): member is typeof member & { role: "reviewer" | "lead" } => (member.role === "reviewer" || member.role === "lead") && member.userId !== userId,
      )
      .map((member) => ({ id: member.userId, name: member.name, role: member.role })),
    can: {
      requestReview: can(membership.role, "derivation:request-review", resource),
      review: can(membership.role, "derivation:review", resource),
      approve: can(membership.role, "derivation:approve", resource),
      unlock: locked && can(membership.role, "derivation:lock", resource),
    },
    reportRevisionId: derivation.lockedRevisionId ?? latest?.id ?? null,
  };
}
