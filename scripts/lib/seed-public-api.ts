// The demo's public-API data: one derivation approved through the real review
// flow, and a read-only team API token with a fixed, documented value. Both are
// idempotent: an approved derivation and an existing token are left as they are.
import { createApiToken, getApiTokenByHash } from "@/db/queries/api-tokens";
import { updateDerivationContentById } from "@/db/queries/derivations";
import { approveRevision, decideReview, getReviewStateByDerivationId, requestReview, type ReviewRefusal } from "@/db/queries/reviews";
import { apiTokenPrefix, apiTokenState } from "@/lib/auth/api-tokens";
import { hashToken } from "@/lib/auth/tokens";
import { approvedDerivation } from "@/lib/public-api/approved";
import type { DerivationDocument } from "@/lib/notebook/document";
import { closeEnginePool } from "@/lib/workers/engine-pool";

function refused(step: string, result: ReviewRefusal): never {
  throw new Error(`demo approval: ${step} was refused (${result.reason})`);
}

/**
 * The analyst saves the notebook (so the revision names them as its author),
 * asks the reviewer, the reviewer signs off, and the lead approves: the same
 * transactions the routes run.
 */
export async function approveDemoDerivation({
  derivationId,
  content,
  analystId,
  reviewerId,
  leadId,
}: {
  derivationId: string;
  content: DerivationDocument;
  analystId: string;
  reviewerId: string;
  leadId: string;
}): Promise<string> {
  const { approvals } = await getReviewStateByDerivationId({ derivationId });
  if (approvals.length > 0) return "already approved";
  const saved = await updateDerivationContentById({ id: derivationId, actorId: analystId, content });
  if (saved.status !== "saved") throw new Error(`demo approval: the analyst's save was refused (${saved.status})`);
  const request = await requestReview({
    derivationId,
    requesterId: analystId,
    reviewerIds: [reviewerId],
    message: "Trolley and load swing for the anti-sway controller; the C export feeds the drive firmware.",
  });
  if (!request.ok) refused("the review request", request);
  const decision = await decideReview({
    derivationId,
    reviewerId,
    decision: "signed_off",
    comment: "Checked the pendulum term and the small-swing frequency against the note.",
  });
  if (!decision.ok) refused("the sign-off", decision);
  const approval = await approveRevision({ derivationId, revisionId: request.revision.id, approverId: leadId });
  if (!approval.ok) refused("the approval", approval);
  return `approved revision ${approval.revision.number}`;
}

/** Creates the demo token once (its hash only); an existing one, even revoked, is left alone. */
export async function ensureDemoApiToken({ teamId, leadId, secret, name }: { teamId: string; leadId: string; secret: string; name: string }): Promise<string> {
  const tokenHash = hashToken(secret);
  const existing = await getApiTokenByHash({ tokenHash });
  if (existing) {
    if (existing.teamId !== teamId) throw new Error("the demo API token belongs to another team");
    return `API token "${existing.name}" already there (${apiTokenState(existing)})`;
  }
  await createApiToken({ teamId, name, tokenHash, prefix: apiTokenPrefix(secret), createdById: leadId, expiresAt: null });
  return `API token "${name}" created`;
}

/** Derives the approved revision's equations and C code once, so the first pull of the demo only reads. */
export async function prefillApprovedResults({ teamId, derivationId }: { teamId: string; derivationId: string }): Promise<string> {
  try {
    const { stored } = await approvedDerivation({ teamId, derivationId, language: "c" });
    return stored ? "approved equations already stored" : "approved equations derived and stored";
  } finally {
    await closeEnginePool();
  }
}
