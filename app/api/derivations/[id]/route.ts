import { trashDerivationById, updateDerivationById } from "@/db/queries/derivations";
import { derivationRoute } from "@/lib/api/resource-route";
import { readJson } from "@/lib/api/route";
import { purgeExpiredTrash } from "@/lib/derivations/trash";
import { assertCan, type Action } from "@/lib/auth/permissions";
import { AppError } from "@/lib/errors";
import { validDocumentOrThrow } from "@/lib/evaluation/document-content";
import { updateDerivationSchema } from "@/lib/validation/derivations";
import { parseOrThrow } from "@/lib/validation/parse";

type Params = { id: string };

export const GET = derivationRoute<Params>("derivation:read", async ({ derivation }) => {
  return Response.json({ derivation });
});

export const PATCH = derivationRoute<Params>("derivation:read", async ({ request, user, derivation, membership }) => {
  const changes = parseOrThrow(updateDerivationSchema, await readJson(request));
  // Each kind of change needs its own permission; all must hold.
  const needed = new Set<Action>();
  if (changes.title !== undefined) needed.add("derivation:rename");
  if (changes.content !== undefined) needed.add("derivation:edit");
  for (const action of needed) assertCan(membership.role, action, { status: derivation.status, locked: derivation.lockedAt !== null });
  const document = changes.content === undefined ? undefined : validDocumentOrThrow(changes.content, { field: "content", title: derivation.title });
  const updated = await updateDerivationById({ id: derivation.id, actorId: user.id, changes: { title: changes.title, content: document } });
  if (!updated) throw new AppError("locked:derivation", "This derivation was approved and locked meanwhile; nothing was changed.");
  return Response.json({ derivation: updated });
});

/** Moves the derivation to its team's trash (owner or lead; restorable for TRASH_RETENTION_DAYS). */
export const DELETE = derivationRoute<Params>("derivation:delete", async ({ user, derivation }) => {
  if (!(await trashDerivationById({ id: derivation.id, actorId: user.id }))) throw new AppError("not_found:derivation", "Derivation not found.");
  await purgeExpiredTrash({ teamId: derivation.teamId });
  return new Response(null, { status: 204 });
});
