import { createCheckpoint, getLatestRevisionByDerivationId, getRevisionsByDerivationId } from "@/db/queries/revisions";
import { derivationRoute } from "@/lib/api/resource-route";
import { readJson } from "@/lib/api/route";
import { AppError } from "@/lib/errors";
import { contentHash } from "@/lib/history/content-hash";
import { parseOrThrow } from "@/lib/validation/parse";
import { checkpointSchema } from "@/lib/validation/review";

type Params = { id: string };

/** The derivation's revisions, newest first, and whether the current content differs from the latest. */
export const GET = derivationRoute<Params>("derivation:read", async ({ derivation }) => {
  const [revisions, latest] = await Promise.all([
    getRevisionsByDerivationId({ derivationId: derivation.id }),
    getLatestRevisionByDerivationId({ derivationId: derivation.id }),
  ]);
  const currentHash = contentHash(derivation.content);
  return Response.json({
    revisions: revisions.map((revision) => ({ ...revision, createdAt: revision.createdAt.toISOString(), updatedAt: revision.updatedAt.toISOString() })),
    current: {
      contentHash: currentHash,
      inHistory: latest?.contentHash === currentHash && latest.title === derivation.title,
      lockedRevisionId: derivation.lockedRevisionId,
    },
  });
});

/** Names the current content as a checkpoint. */
export const POST = derivationRoute<Params>("derivation:edit", async ({ request, user, derivation }) => {
  const { name } = parseOrThrow(checkpointSchema, await readJson(request));
  const result = await createCheckpoint({ derivationId: derivation.id, name, actorId: user.id });
  if (!result.ok) throw new AppError(result.reason === "locked" ? "locked:derivation" : "not_found:derivation");
  return Response.json({ revision: result.revision }, { status: 201 });
});
