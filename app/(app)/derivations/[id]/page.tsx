import type { Metadata } from "next";
import { CurrentTeam } from "@/components/current-team";
import { NotebookPage } from "@/components/notebook/notebook-page";
import { getTeamById } from "@/db/queries/teams";
import { loadDerivationFor, orNotFound } from "@/lib/auth/access";
import { can } from "@/lib/auth/permissions";
import { requirePageUser } from "@/lib/auth/session";
import { roleLabels } from "@/lib/domain";
import { env } from "@/lib/env";
import { documentFromContent } from "@/lib/evaluation/document-content";

export const metadata: Metadata = { title: "Derivation" };

// The notebook. Someone outside the derivation's team gets the same 404 as for a missing one.
export default async function DerivationPage({ params }: { params: Promise<{ id: string }> }) {
  const { id } = await params;
  const user = await requirePageUser(`/derivations/${id}`);
  const { derivation, membership } = await orNotFound(() => loadDerivationFor(user, id, "derivation:read"));
  const team = await getTeamById({ id: derivation.teamId });
  const document = documentFromContent(derivation.content, derivation.title);
  const canEdit = can(membership.role, "derivation:edit", { status: derivation.status });
  // A role that could edit a draft but not this derivation is held back by its approval.
  const readOnlyReason = canEdit ? undefined : can(membership.role, "derivation:edit", { status: "draft" }) ? "approved" : "role";
  return (
    <>
      <CurrentTeam teamId={derivation.teamId} />
      <NotebookPage
      key={derivation.id}
      derivationId={derivation.id}
      teamId={derivation.teamId}
      teamName={team?.name ?? "Team"}
      status={derivation.status}
      ownerName={derivation.ownerName}
      roleLabel={roleLabels[membership.role]}
      canEdit={canEdit}
      readOnlyReason={readOnlyReason}
      canRename={canEdit && can(membership.role, "derivation:rename", { status: derivation.status })}
      initialDocument={document}
      initialUpdatedAt={derivation.updatedAt.toISOString()}
      rowTitle={derivation.title}
        uploadLimits={{ csvBytes: env.UPLOAD_MAX_CSV_BYTES, imageBytes: env.UPLOAD_MAX_IMAGE_BYTES }}
      />
    </>
  );
}
