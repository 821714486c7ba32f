"use client";

import { useId, useState, type FormEvent } from "react";
import { Button } from "@/components/ui/button";
import { Dialog } from "@/components/ui/dialog";
import { inputClass } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { AppError } from "@/lib/errors";
import { shortHash } from "@/lib/history/format";
import { roleLabels } from "@/lib/domain";
import type { ReviewPanelData } from "@/lib/review/view";
import { requestReviewSchema, reviewDecisionSchema, unlockSchema } from "@/lib/validation/review";

/** Field errors of a failed request (from the server's AppError or the shared schema), by field name. */
export type FieldMessages = Record<string, string | undefined>;

function firstIssues(issues: readonly { path: readonly PropertyKey[]; message: string }[]): FieldMessages {
  const out: FieldMessages = {};
  for (const issue of issues) {
    const key = String(issue.path[0] ?? "_");
    out[key] ??= issue.message;
  }
  return out;
}

export function fieldMessagesOf(error: unknown): FieldMessages {
  if (!(error instanceof AppError) || !error.fieldErrors) return {};
  return Object.fromEntries(Object.entries(error.fieldErrors).map(([key, messages]) => [key, messages?.[0]]));
}

/** A textarea with its label and error, tied together for assistive technology. */
function TextArea({
  label,
  value,
  onChange,
  error,
  hint,
  rows = 4,
  autoFocus,
}: {
  label: string;
  value: string;
  onChange: (value: string) => void;
  error?: string;
  hint?: string;
  rows?: number;
  autoFocus?: boolean;
}) {
  const id = useId();
  return (
    <div className="space-y-1">
      <label htmlFor={id} className="block text-sm font-medium">
        {label}
      </label>
      <textarea
        id={id}
        rows={rows}
        value={value}
        autoFocus={autoFocus}
        onChange={(event) => onChange(event.target.value)}
        aria-invalid={error ? true : undefined}
        aria-describedby={error ? `${id}-error` : hint ? `${id}-hint` : undefined}
        className={inputClass}
      />
      {error ? (
        <p id={`${id}-error`} role="alert" className="text-xs font-medium text-danger">
          {error}
        </p>
      ) : hint ? (
        <p id={`${id}-hint`} className="text-xs text-muted">
          {hint}
        </p>
      ) : null}
    </div>
  );
}

function generalError(error: unknown, fields: FieldMessages): string | null {
  if (!error) return null;
  if (Object.values(fields).some(Boolean)) return null;
  return error instanceof Error ? error.message : "That did not work.";
}

interface RequestReviewProps {
  data: ReviewPanelData;
  pending: boolean;
  error: unknown;
  onSubmit: (input: { reviewerIds: string[]; message: string }) => void;
  onClose: () => void;
}

// Each dialog's form is mounted only while the dialog is open, so it starts afresh every time.

export function RequestReviewDialog({ open, ...props }: RequestReviewProps & { open: boolean }) {
  return (
    <Dialog open={open} onClose={props.onClose} title="Request review">
      <RequestReviewForm {...props} />
    </Dialog>
  );
}

function RequestReviewForm({ data, pending, error, onSubmit, onClose }: RequestReviewProps) {
  // Asking the same people again is the usual case after changes were requested.
  const [chosen, setChosen] = useState<string[]>(
    () => data.request?.reviewers.map((reviewer) => reviewer.id).filter((id) => data.candidates.some((candidate) => candidate.id === id)) ?? [],
  );
  const [message, setMessage] = useState("");
  const [local, setLocal] = useState<FieldMessages>({});
  const fields = { ...fieldMessagesOf(error), ...local };
  const groupId = useId();

  function submit(event: FormEvent) {
    event.preventDefault();
    const parsed = requestReviewSchema.safeParse({ reviewerIds: chosen, message });
    if (!parsed.success) return setLocal(firstIssues(parsed.error.issues));
    setLocal({});
    onSubmit({ reviewerIds: parsed.data.reviewerIds, message: parsed.data.message });
  }

  return (
    <form onSubmit={submit} noValidate className="space-y-4" data-testid="request-review-form">
      {generalError(error, fields) ? <Notice tone="error">{generalError(error, fields)}</Notice> : null}
      <p className="text-sm text-muted">
        The current content becomes a revision; the people you choose get an e-mail and a notification. While it is in review you can keep editing, but the lead
        approves only the latest revision.
      </p>
      <fieldset className="space-y-1" aria-describedby={fields.reviewerIds ? `${groupId}-error` : undefined}>
        <legend className="mb-1 text-sm font-medium">Reviewers and leads</legend>
        {data.candidates.length === 0 ? (
          <p className="text-sm text-muted">Nobody else in this team is a reviewer or a lead. A lead can change roles in the team settings.</p>
        ) : (
          <ul className="space-y-1">
            {data.candidates.map((candidate) => (
              <li key={candidate.id}>
                <label className="flex items-center gap-2 text-sm">
                  <input
                    type="checkbox"
                    className="h-4 w-4 accent-[var(--action)]"
                    checked={chosen.includes(candidate.id)}
                    onChange={(event) =>
                      setChosen((current) => (event.target.checked ? [...current, candidate.id] : current.filter((id) => id !== candidate.id)))
                    }
                  />
                  {candidate.name}
                  <span className="text-xs text-muted">{roleLabels[candidate.role].toLowerCase()}</span>
                </label>
              </li>
            ))}
          </ul>
        )}
        {fields.reviewerIds ? (
          <p id={`${groupId}-error`} role="alert" className="text-xs font-medium text-danger">
            {fields.reviewerIds}
          </p>
        ) : null}
      </fieldset>
      <TextArea label="Message (optional)" value={message} onChange={setMessage} error={fields.message} hint="What should they look at?" rows={3} />
      <div className="flex justify-end gap-2">
        <Button onClick={onClose}>Cancel</Button>
        <Button type="submit" variant="primary" disabled={pending || data.candidates.length === 0}>
          {pending ? "Sending…" : "Send request"}
        </Button>
      </div>
    </form>
  );
}

export type DecisionKind = "signed_off" | "changes_requested";

interface DecisionProps {
  revisionNumber: number | null;
  pending: boolean;
  error: unknown;
  onSubmit: (input: { decision: DecisionKind; comment: string }) => void;
  onClose: () => void;
}

export function DecisionDialog({ decision, ...props }: DecisionProps & { decision: DecisionKind | null }) {
  return (
    <Dialog open={decision !== null} onClose={props.onClose} title={decision === "changes_requested" ? "Request changes" : "Sign off"}>
      {decision ? <DecisionForm decision={decision} {...props} /> : null}
    </Dialog>
  );
}

function DecisionForm({ decision, revisionNumber, pending, error, onSubmit, onClose }: DecisionProps & { decision: DecisionKind }) {
  const [comment, setComment] = useState("");
  const [local, setLocal] = useState<FieldMessages>({});
  const fields = { ...fieldMessagesOf(error), ...local };
  const changes = decision === "changes_requested";
  const revision = revisionNumber !== null ? `revision ${revisionNumber}` : "this revision";

  function submit(event: FormEvent) {
    event.preventDefault();
    const parsed = reviewDecisionSchema.safeParse({ decision, comment });
    if (!parsed.success) return setLocal(firstIssues(parsed.error.issues));
    setLocal({});
    onSubmit({ decision, comment: parsed.data.comment });
  }

  return (
    <form onSubmit={submit} noValidate className="space-y-4" data-testid="decision-form">
      {generalError(error, fields) ? <Notice tone="error">{generalError(error, fields)}</Notice> : null}
      <p className="text-sm text-muted">
        {changes
          ? `Say what needs to change in ${revision}. The derivation goes back to draft; the author fixes it and asks again.`
          : `You confirm you checked ${revision}. A lead approves it afterwards.`}
      </p>
      <TextArea
        label={changes ? "What needs to change" : "Comment (optional)"}
        value={comment}
        onChange={setComment}
        error={fields.comment}
        autoFocus
        rows={changes ? 5 : 3}
      />
      <div className="flex justify-end gap-2">
        <Button onClick={onClose}>Cancel</Button>
        <Button type="submit" variant={changes ? "danger" : "primary"} disabled={pending}>
          {pending ? "Sending…" : changes ? "Request changes" : "Sign off"}
        </Button>
      </div>
    </form>
  );
}

export function ApproveDialog({
  open,
  latest,
  pending,
  error,
  onConfirm,
  onClose,
}: {
  open: boolean;
  latest: ReviewPanelData["latest"];
  pending: boolean;
  error: unknown;
  onConfirm: () => void;
  onClose: () => void;
}) {
  return (
    <Dialog open={open} onClose={onClose} title="Approve and lock">
      <div className="space-y-4" data-testid="approve-form">
        {error ? <Notice tone="error">{error instanceof Error ? error.message : "The approval failed."}</Notice> : null}
        {latest ? (
          <p className="text-sm">
            Approve <strong>revision {latest.number}</strong> (content hash <code className="font-mono text-xs">{shortHash(latest.contentHash)}</code>)? The
            derivation is locked at exactly this revision: nobody can change it, leads included, until a lead unlocks it with a written reason. Your name and
            the time are recorded with the approval.
          </p>
        ) : null}
        <div className="flex justify-end gap-2">
          <Button onClick={onClose}>Cancel</Button>
          <Button variant="primary" onClick={onConfirm} disabled={pending || !latest} autoFocus>
            {pending ? "Approving…" : `Approve and lock revision ${latest?.number ?? ""}`.trim()}
          </Button>
        </div>
      </div>
    </Dialog>
  );
}

interface UnlockProps {
  revisionNumber: number | null;
  pending: boolean;
  error: unknown;
  onSubmit: (reason: string) => void;
  onClose: () => void;
}

export function UnlockDialog({ open, ...props }: UnlockProps & { open: boolean }) {
  return (
    <Dialog open={open} onClose={props.onClose} title="Unlock for changes">
      <UnlockForm {...props} />
    </Dialog>
  );
}

function UnlockForm({ revisionNumber, pending, error, onSubmit, onClose }: UnlockProps) {
  const [reason, setReason] = useState("");
  const [local, setLocal] = useState<FieldMessages>({});
  const fields = { ...fieldMessagesOf(error), ...local };

  function submit(event: FormEvent) {
    event.preventDefault();
    const parsed = unlockSchema.safeParse({ reason });
    if (!parsed.success) return setLocal(firstIssues(parsed.error.issues));
    setLocal({});
    onSubmit(parsed.data.reason);
  }

  return (
    <form onSubmit={submit} noValidate className="space-y-4" data-testid="unlock-form">
      {generalError(error, fields) ? <Notice tone="error">{generalError(error, fields)}</Notice> : null}
      <p className="text-sm text-muted">
        Unlocking returns the derivation to draft so it can be changed. The approval of{" "}
        {revisionNumber !== null ? `revision ${revisionNumber}` : "the locked revision"} stays in the history, with your name, the time and your reason.
      </p>
      <TextArea
        label="Reason for unlocking"
        value={reason}
        onChange={setReason}
        error={fields.reason}
        autoFocus
        hint="At least a sentence; it is kept on record."
      />
      <div className="flex justify-end gap-2">
        <Button onClick={onClose}>Cancel</Button>
        <Button type="submit" variant="danger" disabled={pending}>
          {pending ? "Unlocking…" : "Unlock"}
        </Button>
      </div>
    </form>
  );
}
