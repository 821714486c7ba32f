import type { Metadata } from "next";
import Link from "next/link";
import { StatusBadge } from "@/components/ui/status-badge";
import { getTeamById } from "@/db/queries/teams";
import { loadDerivationFor, orNotFound } from "@/lib/auth/access";
import { requirePageUser } from "@/lib/auth/session";
import { roleLabels, safetyNote } from "@/lib/domain";

export const metadata: Metadata = { title: "Derivation" };

const dateFormat = new Intl.DateTimeFormat("en-GB", { dateStyle: "medium", timeStyle: "short" });

// The record and its model file, read-only. The notebook replaces the content view.
export default async function DerivationPage({ params }: { params: Promise<{ id: string }> }) {
  const { id } = await params;
  const user = await requirePageUser(`/derivations/${id}`);
  const { derivation, membership } = await orNotFound(() => loadDerivationFor(user, id, "derivation:read"));
  const team = await getTeamById({ id: derivation.teamId });
  return (
    <article className="space-y-6">
      <div>
        <Link href={`/teams/${derivation.teamId}`} className="text-sm text-action hover:underline">
          ← {team?.name ?? "Team"}
        </Link>
        <div className="mt-1 flex flex-wrap items-center gap-3">
          <h1 className="text-2xl font-semibold" data-testid="derivation-title">
            {derivation.title}
          </h1>
          <StatusBadge status={derivation.status} />
        </div>
        <p className="text-sm text-muted">
          Owner {derivation.ownerName ?? "—"} · created {dateFormat.format(derivation.createdAt)} · last change{" "}
          {dateFormat.format(derivation.updatedAt)} · you are {roleLabels[membership.role].toLowerCase()}
        </p>
      </div>
      {derivation.status === "approved" ? (
        <p className="rounded border border-seal/50 bg-seal-soft px-3 py-2 text-sm">
          <strong className="text-seal">Approved.</strong> {safetyNote}
        </p>
      ) : null}
      <section aria-labelledby="model-heading">
        <h2 id="model-heading" className="mb-2 text-base font-semibold">
          Model file
        </h2>
        <pre className="max-h-[60vh] overflow-auto rounded border border-line bg-surface p-4 font-mono text-[13px] leading-relaxed" data-testid="derivation-content">
          {JSON.stringify(derivation.content, null, 2)}
        </pre>
      </section>
    </article>
  );
}
