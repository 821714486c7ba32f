"use client";

/**
 * The notebook's review and approval panel: where the derivation stands
 * (draft → in review → approved), who was asked and what they decided, and the
 * step the signed-in person may take next. What each role may do comes from
 * the server (lib/review/panel-data.ts); the API refuses the rest anyway.
 */
import clsx from "clsx";
import Link from "next/link";
import { useRouter } from "next/navigation";
import { useState } from "react";
import { mayLeave } from "@/components/collab/use-leave-guard";
import { useShortcut } from "@/components/shortcuts";
import { Button, buttonClass } from "@/components/ui/button";
import { formatRecordTime, shortHash } from "@/lib/history/format";
import { approvalBlocker, myAssignment, type ReviewPanelData, type ReviewerView } from "@/lib/review/view";
import { ApproveDialog, DecisionDialog, RequestReviewDialog, type DecisionKind } from "./review-dialogs";
import { useReviewAction } from "./use-review-action";

const decisionText: Record<ReviewerView["decision"], string> = {
  pending: "Not yet reviewed",
  signed_off: "Signed off",
  changes_requested: "Changes requested",
};

const decisionStyle: Record<ReviewerView["decision"], string> = {
  pending: "border-line bg-sunken text-muted",
  signed_off: "border-action/40 bg-action-soft text-action",
  changes_requested: "border-danger/50 bg-danger-soft text-danger",
};

const decisionMark: Record<ReviewerView["decision"], string> = { pending: "○", signed_off: "✓", changes_requested: "✕" };

export function historyHref(derivationId: string): string {
  return `/derivations/${derivationId}/history`;
}

export function reportHref(derivationId: string, revisionId: string): string {
  return `/derivations/${derivationId}/revisions/${revisionId}/report`;
}

function Summary({ data }: { data: ReviewPanelData }) {
  const request = data.request;
  const revision = (number: number | null) => (number !== null ? `revision ${number}` : "a revision");
  if (data.lock) {
    // The lock banner above names the approval; here, only where the review stands.
    return (
      <p>
        <strong className="font-semibold text-seal">Approved</strong> — the review of {revision(data.lock.revisionNumber)} is closed.
      </p>
    );
  }
  if (data.status === "approved") {
    // Marked approved before approvals locked a revision: there is nothing to name.
    return (
      <p>
        <strong className="font-semibold text-seal">Approved</strong> — no revision is locked, so there is no approval record to show.
      </p>
    );
  }
  if (data.status === "in_review" && request?.open) {
    const decided = request.reviewers.filter((reviewer) => reviewer.decision === "signed_off").length;
    return (
      <p>
        <strong className="font-semibold text-review">In review</strong> — {revision(request.revisionNumber)}, asked by{" "}
        {request.requestedByName ?? "a former member"} on {formatRecordTime(request.createdAt)}; {decided} of {request.reviewers.length} signed off.
      </p>
    );
  }
  const changes = request && !request.open ? request.reviewers.filter((reviewer) => reviewer.decision === "changes_requested") : [];
  if (changes.length > 0) {
    return (
      <p>
        <strong className="font-semibold">Draft</strong> — changes were requested on {revision(request!.revisionNumber)}. Fix them, then request review again.
      </p>
    );
  }
  return (
    <p>
      <strong className="font-semibold">Draft</strong> — {data.latest ? `latest revision ${data.latest.number}` : "no revision yet"}. Request review when it is
      ready.
    </p>
  );
}

function ReviewerList({ reviewers }: { reviewers: ReviewerView[] }) {
  return (
    <ul className="space-y-2" aria-label="Reviewers" data-testid="reviewer-list">
      {reviewers.map((reviewer) => (
        <li key={reviewer.id} className="flex flex-wrap items-baseline gap-x-2 gap-y-1 text-sm" data-testid="reviewer" data-decision={reviewer.decision}>
          <span className="font-medium">{reviewer.name}</span>
          <span className={clsx("inline-flex items-center gap-1 rounded-sm border px-1.5 text-xs", decisionStyle[reviewer.decision])}>
            <span aria-hidden>{decisionMark[reviewer.decision]}</span>
            {decisionText[reviewer.decision]}
          </span>
          {reviewer.decidedAt ? <span className="text-xs text-muted">{formatRecordTime(reviewer.decidedAt)}</span> : null}
          {reviewer.comment ? (
            <blockquote className="basis-full border-l-2 border-line pl-2 whitespace-pre-line text-ink" data-testid="reviewer-comment">
              {reviewer.comment}
            </blockquote>
          ) : null}
        </li>
      ))}
    </ul>
  );
}

export function ReviewPanel({ data }: { data: ReviewPanelData }) {
  const router = useRouter();
  const action = useReviewAction(data.derivationId);
  const [requesting, setRequesting] = useState(false);
  const [deciding, setDeciding] = useState<DecisionKind | null>(null);
  const [approving, setApproving] = useState(false);
  // Open while a review is under way or has just come back with changes; a reader's toggle holds until the request or status changes.
  const requestKey = `${data.status}:${data.request?.createdAt ?? ""}:${data.request?.open ?? ""}`;
  const [toggled, setToggled] = useState<{ key: string; open: boolean } | null>(null);
  const expanded = toggled?.key === requestKey ? toggled.open : data.status === "in_review" || (data.request !== null && !data.request.open && !data.lock);
  const setExpanded = (open: boolean) => setToggled({ key: requestKey, open });

  const mine = myAssignment(data);
  const blocker = approvalBlocker(data);
  const request = data.request;
  const showApprove = data.can.approve && !data.lock && data.status === "in_review";
  const showRequest = data.can.requestReview && !data.lock;
  const reviewedIsNotLatest = request?.open && data.latest && data.latest.id !== request.revisionId;

  useShortcut("g h", "Open the history of this derivation", () => void mayLeave().then((leave) => leave && router.push(historyHref(data.derivationId))));
  useShortcut(
    "g p",
    "Open the printable report",
    () => {
      const revisionId = data.reportRevisionId;
      if (revisionId) void mayLeave().then((leave) => leave && router.push(reportHref(data.derivationId, revisionId)));
    },
    data.reportRevisionId !== null,
  );
  useShortcut("r", "Request review of this derivation", () => setRequesting(true), showRequest);

  async function requestReview(input: { reviewerIds: string[]; message: string }) {
    if (await action.run("request", "review", input)) setRequesting(false);
  }
  async function decide(input: { decision: DecisionKind; comment: string }) {
    if (await action.run("decision", "review/decision", input)) setDeciding(null);
  }
  async function approve() {
    if (data.latest && (await action.run("approve", "approve", { revisionId: data.latest.id }))) setApproving(false);
  }

  return (
    <section className="rounded border border-line bg-surface text-sm" aria-label="Review and approval" data-testid="review-panel" data-status={data.status}>
      <div className="flex flex-wrap items-center gap-x-4 gap-y-2 px-3 py-2">
        <div className="min-w-0 flex-1 basis-full sm:basis-0" data-testid="review-summary">
          <Summary data={data} />
        </div>
        <nav className="flex flex-wrap items-center gap-2" aria-label="History and report">
          <Link href={historyHref(data.derivationId)} className={buttonClass("ghost", "sm")} title="History (g then h)">
            History
          </Link>
          {data.reportRevisionId ? (
            <Link href={reportHref(data.derivationId, data.reportRevisionId)} className={buttonClass("ghost", "sm")} title="Printable report (g then p)">
              Report
            </Link>
          ) : null}
        </nav>
        <div className="flex flex-wrap items-center gap-2" role="group" aria-label="Review actions">
          {request ? (
            <Button size="sm" variant="ghost" aria-expanded={expanded} aria-controls="review-details" onClick={() => setExpanded(!expanded)}>
              {expanded ? "Hide reviews" : `Reviews (${request.reviewers.length})`}
            </Button>
          ) : null}
          {mine ? (
            <>
              <Button size="sm" variant="primary" onClick={() => setDeciding("signed_off")}>
                Sign off
              </Button>
              <Button size="sm" variant="danger" onClick={() => setDeciding("changes_requested")}>
                Request changes
              </Button>
            </>
          ) : null}
          {showRequest ? (
            <Button size="sm" variant={data.status === "in_review" ? "secondary" : "primary"} onClick={() => setRequesting(true)} title="Request review (r)">
              {data.status === "in_review" ? "New review request…" : "Request review…"}
            </Button>
          ) : null}
          {showApprove ? (
            <Button
              size="sm"
              variant="primary"
              disabled={blocker !== null}
              aria-describedby={blocker ? "approve-blocker" : undefined}
              onClick={() => setApproving(true)}
            >
              Approve revision {data.latest?.number ?? ""}
            </Button>
          ) : null}
        </div>
      </div>

      {showApprove && blocker ? (
        <p id="approve-blocker" className="border-t border-line px-3 py-1.5 text-xs text-muted" data-testid="approve-blocker">
          {blocker}
        </p>
      ) : null}
      {reviewedIsNotLatest ? (
        <p className="border-t border-line px-3 py-1.5 text-xs" data-testid="review-moved-on">
          Revision {data.latest!.number} was saved after the review request for revision {request!.revisionNumber}.{" "}
          <Link className="text-action underline" href={`${historyHref(data.derivationId)}/compare?from=${request!.revisionNumber}&to=${data.latest!.number}`}>
            Compare them
          </Link>
          .
        </p>
      ) : null}

      {request && expanded ? (
        <div id="review-details" className="space-y-2 border-t border-line px-3 py-2">
          <p className="text-xs text-muted">
            Review request for revision {request.revisionNumber ?? "?"} by {request.requestedByName ?? "a former member"}, {formatRecordTime(request.createdAt)}
            {request.open ? "" : " (closed)"}.
          </p>
          {request.message ? <blockquote className="border-l-2 border-action/50 pl-2 whitespace-pre-line">{request.message}</blockquote> : null}
          <ReviewerList reviewers={request.reviewers} />
        </div>
      ) : null}

      {data.latest ? (
        <p className="sr-only">
          Latest revision {data.latest.number}, content hash {shortHash(data.latest.contentHash)}.
        </p>
      ) : null}

      <RequestReviewDialog
        open={requesting}
        data={data}
        pending={action.pending === "request"}
        error={action.errorOf("request")}
        onSubmit={(input) => void requestReview(input)}
        onClose={() => {
          setRequesting(false);
          action.clearError();
        }}
      />
      <DecisionDialog
        decision={deciding}
        revisionNumber={request?.revisionNumber ?? null}
        pending={action.pending === "decision"}
        error={action.errorOf("decision")}
        onSubmit={(input) => void decide(input)}
        onClose={() => {
          setDeciding(null);
          action.clearError();
        }}
      />
      <ApproveDialog
        open={approving}
        latest={data.latest}
        pending={action.pending === "approve"}
        error={action.errorOf("approve")}
        onConfirm={() => void approve()}
        onClose={() => {
          setApproving(false);
          action.clearError();
        }}
      />
    </section>
  );
}
