import type { Metadata } from "next";
import Link from "next/link";
import { CurrentTeam } from "@/components/current-team";
import { CheckpointForm, RestoreButton } from "@/components/history/history-actions";
import { buttonClass } from "@/components/ui/button";
import { inputClass } from "@/components/ui/field";
import { StatusBadge } from "@/components/ui/status-badge";
import { loadDerivationFor, orNotFound } from "@/lib/auth/access";
import { can } from "@/lib/auth/permissions";
import { requirePageUser } from "@/lib/auth/session";
import { formatRecordTime, shortHash } from "@/lib/history/format";
import { derivationHistory, revisionKindLabels, type ApprovalView } from "@/lib/history/views";

export const metadata: Metadata = { title: "History" };

function ApprovalNote({ approval }: { approval: ApprovalView }) {
  return (
    <p className="text-xs" data-testid="revision-approval">
      <span className="font-semibold text-seal">Approved</span> by {approval.approvedByName ?? "a former member"}, {formatRecordTime(approval.approvedAt)}
      {approval.unlockedAt ? (
        <span className="text-muted">
          {" "}
          · unlocked by {approval.unlockedByName ?? "a former member"}, {formatRecordTime(approval.unlockedAt)}: “{approval.unlockReason}”
        </span>
      ) : null}
    </p>
  );
}

/** A derivation's revisions, newest first: compare any two, name a checkpoint, restore, open a revision's report. */
export default async function HistoryPage({ params }: { params: Promise<{ id: string }> }) {
  const { id } = await params;
  const user = await requirePageUser(`/derivations/${id}/history`);
  const { derivation, membership } = await orNotFound(() => loadDerivationFor(user, id, "derivation:read"));
  const history = await derivationHistory(derivation);
  const locked = derivation.lockedAt !== null;
  const canEdit = can(membership.role, "derivation:edit", { status: derivation.status, locked });
  const revisions = history.revisions;
  const latest = revisions[0];
  const previous = revisions[1];

  return (
    <div className="space-y-6" data-testid="history-page">
      <CurrentTeam teamId={derivation.teamId} />
      <div className="space-y-1">
        <Link href={`/derivations/${derivation.id}`} className="text-sm text-action hover:underline">
          ← Back to the notebook
        </Link>
        <div className="flex flex-wrap items-center gap-3">
          <h1 className="min-w-0 text-2xl font-semibold">History</h1>
          <StatusBadge status={derivation.status} />
        </div>
        <p className="text-sm text-muted">
          <strong className="font-medium text-ink">{derivation.title}</strong>: every revision is a full copy of the notebook with the SHA-256 of its content.
          Revisions are never rewritten; a restore adds one.
        </p>
      </div>

      {revisions.length >= 2 ? (
        <form
          method="get"
          action={`/derivations/${derivation.id}/history/compare`}
          className="flex flex-wrap items-end gap-3 rounded border border-line bg-surface p-3"
          aria-label="Compare two revisions"
        >
          <label className="space-y-1 text-sm">
            <span className="block font-medium">From</span>
            <select name="from" defaultValue={previous?.number} className={inputClass}>
              {revisions.map((revision) => (
                <option key={revision.id} value={revision.number}>
                  Revision {revision.number}
                  {revision.name ? ` — ${revision.name}` : ""}
                </option>
              ))}
            </select>
          </label>
          <label className="space-y-1 text-sm">
            <span className="block font-medium">To</span>
            <select name="to" defaultValue={latest?.number} className={inputClass}>
              {revisions.map((revision) => (
                <option key={revision.id} value={revision.number}>
                  Revision {revision.number}
                  {revision.name ? ` — ${revision.name}` : ""}
                </option>
              ))}
            </select>
          </label>
          <button type="submit" className={buttonClass("primary")}>
            Compare
          </button>
        </form>
      ) : null}

      {canEdit ? (
        <div className="rounded border border-line bg-surface p-3">
          <CheckpointForm derivationId={derivation.id} />
        </div>
      ) : null}

      {history.unrevisedChanges ? (
        <p className="rounded border border-line bg-surface px-3 py-2 text-sm" data-testid="unrevised-changes">
          The notebook has changes since revision {latest?.number}. They become a revision after a pause in editing, when someone requests review, or when you
          name a checkpoint.
        </p>
      ) : null}

      {revisions.length === 0 ? (
        <p className="text-sm text-muted">No revisions yet. The first save of the notebook becomes revision 1.</p>
      ) : (
        <ol className="divide-y divide-line rounded border border-line bg-surface" aria-label="Revisions" data-testid="revision-list">
          {revisions.map((revision, index) => {
            const isLocked = history.lockedRevisionId === revision.id;
            const older = revisions[index + 1];
            return (
              <li
                key={revision.id}
                className={isLocked ? "border-l-4 border-l-seal bg-seal-soft/40" : undefined}
                data-testid="revision"
                data-number={revision.number}
              >
                <div className="flex flex-wrap items-start gap-x-4 gap-y-2 px-3 py-2.5">
                  <div className="w-14 shrink-0 font-mono text-sm font-semibold">r{revision.number}</div>
                  <div className="min-w-0 flex-1 basis-60 space-y-0.5">
                    <p className="text-sm">
                      <span className="font-medium">{revision.name ?? revisionKindLabels[revision.kind]}</span>
                      {revision.name ? <span className="text-muted"> · {revisionKindLabels[revision.kind]}</span> : null}
                      {isLocked ? (
                        <span className="ml-2 rounded-sm border border-seal/60 bg-seal-soft px-1.5 text-xs font-medium text-seal">Locked</span>
                      ) : null}
                    </p>
                    <p className="text-xs text-muted">
                      {formatRecordTime(revision.createdAt)}
                      {revision.createdByName ? ` · by ${revision.createdByName}` : ""}
                      {revision.authorNames.length > 0 ? ` · changes by ${revision.authorNames.join(", ")}` : ""}
                      {" · "}
                      <code className="font-mono" title={revision.contentHash}>
                        {shortHash(revision.contentHash)}
                      </code>
                    </p>
                    {revision.approvals.map((approval) => (
                      <ApprovalNote key={approval.id} approval={approval} />
                    ))}
                  </div>
                  <div className="flex flex-wrap items-center gap-1">
                    {older ? (
                      <Link
                        className={buttonClass("ghost", "sm")}
                        href={`/derivations/${derivation.id}/history/compare?from=${older.number}&to=${revision.number}`}
                      >
                        Changes
                      </Link>
                    ) : null}
                    <Link className={buttonClass("ghost", "sm")} href={`/derivations/${derivation.id}/revisions/${revision.id}/report`}>
                      Report
                    </Link>
                    {canEdit && (index > 0 || history.unrevisedChanges) ? (
                      <RestoreButton derivationId={derivation.id} revision={{ id: revision.id, number: revision.number }} />
                    ) : null}
                  </div>
                </div>
              </li>
            );
          })}
        </ol>
      )}
    </div>
  );
}
