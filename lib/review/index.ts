import "server-only";
import { approveRevision, decideReview, requestReview, unlockDerivation, type ReviewRefusal } from "@/db/queries/reviews";
import { getMembersByTeamId } from "@/db/queries/teams";
import type { Derivation, ReviewDecision } from "@/db/schema";
import { AppError } from "@/lib/errors";
import { absoluteUrl } from "@/lib/links";
import { composeLinkMail, sendMail } from "@/lib/mailer";

// The review workflow: draft → in review → approved (locked) → unlocked (draft).
// The queries run each step as one transaction on the locked derivation row; this
// module checks who may be asked, turns refusals into HTTP errors and sends the e-mails.

function refusal(result: ReviewRefusal): AppError {
  switch (result.reason) {
    case "missing":
      return new AppError("not_found:derivation", "Derivation not found.");
    case "locked":
      return new AppError("locked:derivation", "This derivation is approved and locked. A lead can unlock it, giving a reason.");
    case "not_locked":
      return new AppError("conflict:derivation", "This derivation is not locked.");
    case "no_open_review":
      return new AppError("conflict:review", "There is no open review request for this derivation.");
    case "not_assigned":
      return new AppError("forbidden:review", "You were not asked to review this revision.");
    case "no_revision":
      return new AppError("conflict:revision", "This derivation has no revision yet. Request a review first.");
    case "not_latest":
      return new AppError("conflict:revision", `Only the latest revision can be approved; the latest is revision ${result.latest.number}.`, {
        details: { latestRevisionId: result.latest.id, latestNumber: result.latest.number },
      });
    case "changed_since":
      return new AppError(
        "conflict:revision",
        `The derivation changed after revision ${result.latest.number}. Review the current content before approving it.`,
        {
          details: { latestRevisionId: result.latest.id, latestNumber: result.latest.number },
        },
      );
    case "own_changes":
      return new AppError("forbidden:review", `You made changes in revision ${result.latest.number}; a second person must approve them.`);
    case "changes_requested":
      return new AppError("conflict:review", "A reviewer has requested changes to this revision.");
  }
}

/** Asks `reviewerIds` (reviewers or leads of the team, not the requester) to review the current content. */
export async function askForReview({
  derivation,
  requesterId,
  reviewerIds,
  message,
}: {
  derivation: Derivation;
  requesterId: string;
  reviewerIds: string[];
  message: string;
}) {
  const members = await getMembersByTeamId({ teamId: derivation.teamId });
  const byId = new Map(members.map((member) => [member.userId, member]));
  const unique = [...new Set(reviewerIds)];
  const problems = unique.flatMap((id) => {
    const member = byId.get(id);
    if (!member) return ["Everyone asked must be a member of this team."];
    if (id === requesterId) return ["You cannot review your own request; choose someone else."];
    if (member.role !== "reviewer" && member.role !== "lead")
      return [`${member.name} is ${member.role === "analyst" ? "an analyst" : "a viewer"}; ask reviewers or leads.`];
    return [];
  });
  if (problems.length > 0) throw new AppError("bad_request:validation", undefined, { fieldErrors: { reviewerIds: [...new Set(problems)] } });
  const result = await requestReview({ derivationId: derivation.id, requesterId, reviewerIds: unique, message });
  if (!result.ok) throw refusal(result);
  const requester = byId.get(requesterId);
  const link = absoluteUrl(`/derivations/${derivation.id}`);
  // The request is stored; a mail server that is down must not undo it, so failures are logged only.
  await Promise.allSettled(
    unique.map((id) => {
      const reviewer = byId.get(id);
      if (!reviewer) return Promise.resolve();
      return sendMail(
        composeLinkMail({
          to: reviewer.email,
          subject: `Review requested: ${derivation.title}`,
          intro: `${requester?.name ?? "A colleague"} asked you to review revision ${result.revision.number} of "${derivation.title}".${message ? `\n\n"${message}"` : ""}`,
          linkLabel: "Open the derivation",
          link,
          footnote: "You receive this because you were chosen as a reviewer in Holonomy.",
        }),
      );
    }),
  );
  return result;
}

export async function recordReviewDecision(input: { derivationId: string; reviewerId: string; decision: Exclude<ReviewDecision, "pending">; comment: string }) {
  const result = await decideReview(input);
  if (!result.ok) throw refusal(result);
  return result;
}

export async function approve(input: { derivationId: string; revisionId: string; approverId: string }) {
  const result = await approveRevision(input);
  if (!result.ok) throw refusal(result);
  return result;
}

export async function unlock(input: { derivationId: string; actorId: string; reason: string }) {
  const result = await unlockDerivation(input);
  if (!result.ok) throw refusal(result);
  return result;
}
