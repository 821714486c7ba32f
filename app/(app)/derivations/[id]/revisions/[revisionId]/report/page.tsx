import "katex/dist/katex.min.css";
import "@/components/notebook/notebook.css";
import "./report.css";
import type { Metadata } from "next";
import Link from "next/link";
import { CurrentTeam } from "@/components/current-team";
import { PrintButton } from "@/components/report/report-client";
import { ReportFileButton } from "@/components/report/report-file";
import { ReportView } from "@/components/report/report-view";
import { getTeamById } from "@/db/queries/teams";
import { loadDerivationFor, orNotFound, uuidPattern } from "@/lib/auth/access";
import { requirePageUser } from "@/lib/auth/session";
import { AppError } from "@/lib/errors";
import { revisionReport } from "@/lib/history/views";
import { evaluationForRequest } from "@/lib/jobs/service";
import { reportThreadsFor } from "@/lib/reports/service";

export const metadata: Metadata = { title: "Derivation report" };

/**
 * The printable report of one revision: the browser prints it or saves it as
 * PDF, or a queue worker renders it to an HTML file to download (a `report` job).
 */
export default async function RevisionReportPage({ params }: { params: Promise<{ id: string; revisionId: string }> }) {
  const { id, revisionId } = await params;
  const user = await requirePageUser(`/derivations/${id}/revisions/${revisionId}/report`);
  const { derivation, membership } = await orNotFound(() => loadDerivationFor(user, id, "derivation:read"));
  const [team, report] = await Promise.all([
    getTeamById({ id: derivation.teamId }),
    orNotFound(() => {
      if (!uuidPattern.test(revisionId)) throw new AppError("not_found:revision", "No such revision of this derivation.");
      // A large model is queued, not derived on the request; the page says so until it is done.
      return revisionReport(derivation, revisionId, (document) => evaluationForRequest({ derivation, userId: user.id, document, wait: false }));
    }),
  ]);
  const threads = await reportThreadsFor({ derivation, membership, user, document: report.document });

  return (
    <div className="mx-auto max-w-4xl space-y-4">
      <CurrentTeam teamId={derivation.teamId} />
      <nav className="flex flex-wrap items-center gap-3 text-sm print:hidden" aria-label="Report">
        <Link href={`/derivations/${derivation.id}`} className="text-action hover:underline">
          ← Notebook
        </Link>
        <Link href={`/derivations/${derivation.id}/history`} className="text-action hover:underline">
          History
        </Link>
        <span className="ml-auto flex flex-wrap items-center gap-2">
          <ReportFileButton derivationId={derivation.id} revisionId={revisionId} />
          <PrintButton />
        </span>
      </nav>
      <div className="rounded border border-line bg-surface p-5 sm:p-8 print:border-0 print:p-0">
        <ReportView report={report} title={derivation.title} teamName={team?.name ?? ""} generatedAt={new Date().toISOString()} threads={threads} />
      </div>
    </div>
  );
}
