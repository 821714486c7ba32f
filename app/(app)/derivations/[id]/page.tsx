import type { Metadata } from "next";
import { CommentsProvider } from "@/components/comments/comments-context";
import { CurrentTeam } from "@/components/current-team";
import { NotebookPage } from "@/components/notebook/notebook-page";
import { DerivationReview } from "@/components/review/derivation-review";
import { UnreadableContent } from "@/components/notebook/unreadable-content";
import { getTeamById } from "@/db/queries/teams";
import { getViewPreferencesByUserIdAndDerivationId } from "@/db/queries/view-preferences";
import { loadDerivationFor, orNotFound } from "@/lib/auth/access";
import { can } from "@/lib/auth/permissions";
import { requirePageUser } from "@/lib/auth/session";
import { roleLabels } from "@/lib/domain";
import { env } from "@/lib/env";
import { parseStoredDocument, recoverModel } from "@/lib/notebook/document";
import { readViewPreferences } from "@/lib/notebook/view-preferences";
import { reviewPanelData } from "@/lib/review/panel-data";

export const metadata: Metadata = { title: "Derivation" };

// The notebook. Someone outside the derivation's team gets the same 404 as for a missing one.
export default async function DerivationPage({ params }: { params: Promise<{ id: string }> }) {
  const { id } = await params;
  const user = await requirePageUser(`/derivations/${id}`);
  const { derivation, membership } = await orNotFound(() => loadDerivationFor(user, id, "derivation:read"));
  const [team, view, review] = await Promise.all([
    getTeamById({ id: derivation.teamId }),
    getViewPreferencesByUserIdAndDerivationId({ userId: user.id, derivationId: derivation.id }),
    reviewPanelData({ derivation, membership, userId: user.id }),
  ]);
  const stored = parseStoredDocument(derivation.content, { title: derivation.title });
  if (!stored.ok) {
    // Content this version cannot read: say what is wrong and offer what can be saved, never a 500.
    return (
      <UnreadableContent
        derivationId={derivation.id}
        teamId={derivation.teamId}
        teamName={team?.name ?? "Team"}
        title={derivation.title}
        issues={stored.issues}
        newerVersion={stored.newerVersion}
        omitted={recoverModel(derivation.content, derivation.title).omitted}
      />
    );
  }
  const locked = derivation.lockedAt !== null;
  const canEdit = can(membership.role, "derivation:edit", { status: derivation.status, locked });
  // A role that could edit a draft but not this derivation is held back by its approval and lock.
  const readOnlyReason = canEdit ? undefined : can(membership.role, "derivation:edit", { status: "draft" }) ? "approved" : "role";
  return (
    <CommentsProvider derivationId={derivation.id}>
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
        canRename={canEdit && can(membership.role, "derivation:rename", { status: derivation.status, locked })}
        canSimulate={can(membership.role, "derivation:simulate", { status: derivation.status, locked })}
        initialDocument={stored.document}
        initialViewPreferences={readViewPreferences(view?.preferences)}
        initialUpdatedAt={derivation.updatedAt.toISOString()}
        rowTitle={derivation.title}
        uploadLimits={{ csvBytes: env.UPLOAD_MAX_CSV_BYTES, imageBytes: env.UPLOAD_MAX_IMAGE_BYTES }}
        review={<DerivationReview data={review} />}
        locked={locked}
      />
    </CommentsProvider>
  );
}
