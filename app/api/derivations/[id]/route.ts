import { deleteDerivationById, updateDerivationById } from "@/db/queries/derivations";
import { apiRoute, readJson } from "@/lib/api/route";
import { loadDerivationFor } from "@/lib/auth/access";
import { assertCan, type Action } from "@/lib/auth/permissions";
import { requireUser } from "@/lib/auth/session";
import { AppError } from "@/lib/errors";
import { validDocumentOrThrow } from "@/lib/evaluation/document-content";
import { updateDerivationSchema } from "@/lib/validation/derivations";
import { uuidField } from "@/lib/validation/fields";
import { parseOrThrow } from "@/lib/validation/parse";

type Params = { id: string };

// An id that is not a uuid cannot exist; answer as for any missing derivation.
async function derivationId(params: Promise<Params>): Promise<string> {
  const parsed = uuidField.safeParse((await params).id);
  if (!parsed.success) throw new AppError("not_found:derivation", "Derivation not found.");
  return parsed.data;
}

export const GET = apiRoute<Params>(async (_request, { params }) => {
  const user = await requireUser();
  const { derivation } = await loadDerivationFor(user, await derivationId(params), "derivation:read");
  return Response.json({ derivation });
});

export const PATCH = apiRoute<Params>(async (request, { params }) => {
  const user = await requireUser();
  const id = await derivationId(params);
  const { derivation, membership } = await loadDerivationFor(user, id, "derivation:read");
  const changes = parseOrThrow(updateDerivationSchema, await readJson(request));
  // Each kind of change needs its own permission; all must hold.
  const needed = new Set<Action>();
  if (changes.title !== undefined) needed.add("derivation:rename");
  if (changes.content !== undefined) needed.add("derivation:edit");
  for (const action of needed) assertCan(membership.role, action, { status: derivation.status, locked: derivation.lockedAt !== null });
  const document = changes.content === undefined ? undefined : validDocumentOrThrow(changes.content, { field: "content", title: derivation.title });
  const updated = await updateDerivationById({ id, actorId: user.id, changes: { title: changes.title, content: document } });
  if (!updated) throw new AppError("locked:derivation", "This derivation was approved and locked meanwhile; nothing was changed.");
  return Response.json({ derivation: updated });
});

export const DELETE = apiRoute<Params>(async (_request, { params }) => {
  const user = await requireUser();
  const id = await derivationId(params);
  await loadDerivationFor(user, id, "derivation:delete");
  await deleteDerivationById({ id, actorId: user.id });
  return new Response(null, { status: 204 });
});
