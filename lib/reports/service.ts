import "server-only";
import { getTeamById, getMembershipByTeamIdAndUserId } from "@/db/queries/teams";
import { getUserById } from "@/db/queries/users";
import type { Derivation, Job, Membership } from "@/db/schema";
import { can } from "@/lib/auth/permissions";
import type { SessionUser } from "@/lib/auth/session";
import { listCommentThreads } from "@/lib/comments/service";
import { AppError } from "@/lib/errors";
import { fileBaseName } from "@/lib/files/names";
import { revisionKindLabels, revisionReport } from "@/lib/history/views";
import type { DerivationDocument } from "@/lib/notebook/document";
import { deleteObject, putObject } from "@/lib/storage";
import { reportHtml } from "./html";
import { reportThreads, type ReportThread } from "./threads";

/** The comment threads the report prints for this reader; null when their role may not read comments. */
export async function reportThreadsFor({
  derivation,
  membership,
  user,
  document,
}: {
  derivation: Derivation;
  membership: Membership;
  user: SessionUser;
  document: DerivationDocument;
}): Promise<ReportThread[] | null> {
  if (!can(membership.role, "comment:read")) return null;
  const { threads } = await listCommentThreads({ derivation, membership, user });
  return reportThreads(threads, document);
}

/** Where a report job's file is kept: under its derivation, named by the job. */
export function reportObjectKey(derivationId: string, jobId: string): string {
  return `reports/${derivationId}/${jobId}.html`;
}

function stopIfCancelled(signal: AbortSignal): void {
  if (signal.aborted) throw new AppError("conflict:job", "The job was cancelled.");
}

/**
 * Renders one revision's report as an HTML file and stores it (a `report`
 * job, in a queue worker). It reads what the person who asked may read, as
 * they are now: a member no longer in the team gets nothing.
 */
export async function renderRevisionReport({
  job,
  derivation,
  revisionId,
  userId,
  signal,
  progress,
}: {
  job: Pick<Job, "id">;
  derivation: Derivation;
  revisionId: string;
  userId: string;
  signal: AbortSignal;
  progress: (fraction: number) => void;
}): Promise<{ objectKey: string; filename: string; contentType: string; size: number }> {
  const [user, membership, team] = await Promise.all([
    getUserById({ id: userId }),
    getMembershipByTeamIdAndUserId({ teamId: derivation.teamId, userId }),
    getTeamById({ id: derivation.teamId }),
  ]);
  if (!user || !membership || !can(membership.role, "derivation:read")) {
    throw new AppError("forbidden:derivation", "The person who asked for this report may no longer read the derivation.");
  }
  progress(0.05);
  // Deriving the revision (cached by model hash) is most of the work.
  const report = await revisionReport(derivation, revisionId);
  stopIfCancelled(signal);
  progress(0.6);
  const threads = await reportThreadsFor({ derivation, membership, user: { id: user.id, name: user.name, email: user.email }, document: report.document });
  stopIfCancelled(signal);
  progress(0.75);
  const html = reportHtml({
    report,
    title: derivation.title,
    teamName: team?.name ?? "",
    generatedAt: new Date().toISOString(),
    threads,
    revisionLabel: report.revision.name ?? revisionKindLabels[report.revision.kind],
  });
  const body = new TextEncoder().encode(html);
  progress(0.9);
  const objectKey = reportObjectKey(derivation.id, job.id);
  await putObject({ key: objectKey, body, contentType: "text/html; charset=utf-8" });
  if (signal.aborted) {
    // Cancelled while storing: the row says cancelled, so nobody will ask for the file.
    await deleteObject({ key: objectKey }).catch(() => undefined);
    stopIfCancelled(signal);
  }
  const filename = `${fileBaseName(report.revision.title || derivation.title)}-revision-${report.revision.number}.report.html`;
  return { objectKey, filename, contentType: "text/html; charset=utf-8", size: body.byteLength };
}
