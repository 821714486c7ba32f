"use client";

/**
 * The brass banner of an approved derivation: which revision is locked, who
 * approved it and when, and the content hash a downstream build can check.
 * A lead unlocks it here, in a dialog that asks for the reason.
 */
import Link from "next/link";
import { useState } from "react";
import { Button, buttonClass } from "@/components/ui/button";
import { formatRecordTime, shortHash } from "@/lib/history/format";
import type { LockView } from "@/lib/review/view";
import { UnlockDialog } from "./review-dialogs";
import { reportHref } from "./review-panel";
import { useReviewAction } from "./use-review-action";

function LockMark() {
  return (
    <svg aria-hidden viewBox="0 0 20 20" className="h-5 w-5 shrink-0 text-seal" fill="none" stroke="currentColor" strokeWidth="1.6">
      <rect x="4" y="9" width="12" height="8.5" rx="1.5" />
      <path d="M7 9V6.5a3 3 0 0 1 6 0V9" />
      <circle cx="10" cy="13.2" r="1.1" fill="currentColor" stroke="none" />
    </svg>
  );
}

export function LockBanner({ derivationId, lock, canUnlock }: { derivationId: string; lock: LockView; canUnlock: boolean }) {
  const action = useReviewAction(derivationId);
  const [unlocking, setUnlocking] = useState(false);
  const revision = lock.revisionNumber !== null ? `revision ${lock.revisionNumber}` : "the approved revision";

  async function unlock(reason: string) {
    if (await action.run("unlock", "unlock", { reason })) setUnlocking(false);
  }

  return (
    <section
      className="flex flex-wrap items-start gap-3 rounded border border-l-4 border-seal/60 border-l-seal bg-seal-soft px-3 py-2.5 text-sm text-ink"
      aria-label="Approved and locked"
      data-testid="lock-banner"
    >
      <LockMark />
      <div className="min-w-0 flex-1 space-y-0.5">
        <p>
          <strong className="font-semibold text-seal">Approved and locked</strong> at <span data-testid="lock-revision">{revision}</span> by{" "}
          <span data-testid="lock-approver">{lock.approvedByName ?? "a former member"}</span> on{" "}
          <time dateTime={lock.approvedAt}>{formatRecordTime(lock.approvedAt)}</time>.
        </p>
        <p className="text-muted">
          Read-only for everyone, leads included, until a lead unlocks it with a reason. Content hash{" "}
          <code className="font-mono text-xs text-ink" title={lock.contentHash}>
            {shortHash(lock.contentHash)}
          </code>
          .
        </p>
      </div>
      <div className="flex w-full flex-wrap gap-2 pl-8 sm:w-auto sm:pl-0">
        <Link href={reportHref(derivationId, lock.revisionId)} className={buttonClass("secondary", "sm")}>
          Report
        </Link>
        {canUnlock ? (
          <Button size="sm" onClick={() => setUnlocking(true)}>
            Unlock…
          </Button>
        ) : null}
      </div>
      <UnlockDialog
        open={unlocking}
        revisionNumber={lock.revisionNumber}
        pending={action.pending === "unlock"}
        error={action.errorOf("unlock")}
        onSubmit={(reason) => void unlock(reason)}
        onClose={() => {
          setUnlocking(false);
          action.clearError();
        }}
      />
    </section>
  );
}
