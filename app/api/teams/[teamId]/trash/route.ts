import { getTrashedDerivationsByTeamId } from "@/db/queries/derivations";
import { apiRoute } from "@/lib/api/route";
import { loadTeamFor } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";
import { purgeDateOf, purgeExpiredTrash, trashCutoff } from "@/lib/derivations/trash";
import { TRASH_RETENTION_DAYS } from "@/lib/domain";

type Params = { teamId: string };

/**
 * The team's trash: derivations deleted in the last TRASH_RETENTION_DAYS, most
 * recent first, each with the moment it leaves the trash for good. Reading it
 * first removes what has run out.
 */
export const GET = apiRoute<Params>(async (_request, { params }) => {
  const user = await requireUser();
  const { team } = await loadTeamFor(user, (await params).teamId, "derivation:read-trash");
  await purgeExpiredTrash({ teamId: team.id });
  const trashed = await getTrashedDerivationsByTeamId({ teamId: team.id, deletedAfter: trashCutoff() });
  return Response.json({
    retentionDays: TRASH_RETENTION_DAYS,
    derivations: trashed.map((row) => ({
      id: row.id,
      title: row.title,
      status: row.status,
      ownerId: row.ownerId,
      ownerName: row.ownerName,
      deletedAt: row.deletedAt.toISOString(),
      deletedBy: row.deletedById ? { id: row.deletedById, name: row.deletedByName } : null,
      purgeAt: purgeDateOf(row.deletedAt).toISOString(),
    })),
  });
});
