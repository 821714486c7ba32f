import type { DerivationStatus, MemberRole } from "@/lib/domain";
import type { ReviewDecision } from "@/db/schema";

/**
 * What the notebook's review panel and lock banner show: plain, serialisable
 * data assembled on the server (`reviewPanelData`), so the client component
 * renders it and decides nothing about permissions itself.
 */

export interface ReviewerView {
  id: string;
  name: string;
  decision: ReviewDecision;
  comment: string;
  decidedAt: string | null;
}

export interface ReviewRequestView {
  revisionId: string;
  revisionNumber: number | null;
  requestedById: string | null;
  requestedByName: string | null;
  createdAt: string;
  message: string;
  /** Closed by a request for changes, a newer request or an approval. */
  open: boolean;
  reviewers: ReviewerView[];
}

export interface LockView {
  revisionId: string;
  revisionNumber: number | null;
  contentHash: string;
  approvedByName: string | null;
  approvedAt: string;
}

export interface ReviewPanelData {
  derivationId: string;
  status: DerivationStatus;
  myId: string;
  /** The latest revision, whose content an approval would lock. */
  latest: { id: string; number: number; contentHash: string; authorIds: string[]; authorNames: string[] } | null;
  /** The current content is exactly the latest revision's, with no edits since. */
  currentIsLatest: boolean;
  request: ReviewRequestView | null;
  lock: LockView | null;
  /** Team members who may be asked: reviewers and leads, never the person asking. */
  candidates: { id: string; name: string; role: Extract<MemberRole, "reviewer" | "lead"> }[];
  can: { requestReview: boolean; review: boolean; approve: boolean; unlock: boolean };
  /** The revision the printable report shows from the notebook: the locked one, else the latest. */
  reportRevisionId: string | null;
}

/** Why the approve button is disabled, or null when the current user may approve now. */
export function approvalBlocker(data: ReviewPanelData): string | null {
  if (!data.can.approve) return "Only a lead can approve.";
  if (data.lock) return "Already approved and locked.";
  const latest = data.latest;
  if (!latest) return "There is no revision to approve yet. Request a review first.";
  if (!data.currentIsLatest) return `The derivation changed after revision ${latest.number}. Ask for review of the current content first.`;
  if (latest.authorIds.includes(data.myId)) return `You made changes in revision ${latest.number}; a second person must approve them.`;
  if (data.request?.open && data.request.reviewers.some((reviewer) => reviewer.decision === "changes_requested"))
    return "A reviewer has requested changes to this revision.";
  return null;
}

/** The current user's own assignment in the open review request, if any. */
export function myAssignment(data: ReviewPanelData): ReviewerView | null {
  if (!data.request?.open) return null;
  return data.request.reviewers.find((reviewer) => reviewer.id === data.myId) ?? null;
}
