import { countDerivationsByTeamId, createDerivation, getDerivationsByTeamId } from "@/db/queries/derivations";
import { validDocumentOrThrow } from "@/lib/evaluation/document-content";
import { blankDocument } from "@/lib/notebook/document";
import { templateDocument } from "@/lib/notebook/templates";
import { beginCreateOnce, createdResponse, requestFingerprint } from "@/lib/api/idempotency";
import { teamRoute } from "@/lib/api/resource-route";
import { readJson } from "@/lib/api/route";
import { createDerivationSchema, listDerivationsQuerySchema } from "@/lib/validation/derivations";
import { parseOrThrow } from "@/lib/validation/parse";

type Params = { teamId: string };

export const GET = teamRoute<Params>("derivation:read", async ({ request, params: { teamId } }) => {
  const query = Object.fromEntries(new URL(request.url).searchParams);
  const filters = parseOrThrow(listDerivationsQuerySchema, query);
  const { page, pageSize, sort, direction, ...where } = filters;
  const [derivations, total] = await Promise.all([
    getDerivationsByTeamId({ teamId, ...where, sort, direction, page, pageSize }),
    countDerivationsByTeamId({ teamId, ...where }),
  ]);
  return Response.json({ derivations, page, pageSize, total });
});

export const POST = teamRoute<Params>("derivation:create", async ({ request, params: { teamId }, user }) => {
  const input = parseOrThrow(createDerivationSchema, await readJson(request));
  // With an Idempotency-Key, a repeated request (a double click, a retry) answers with the first derivation.
  const once = await beginCreateOnce({
    request,
    userId: user.id,
    operation: "derivation.create",
    fingerprint: requestFingerprint(teamId, JSON.stringify(input)),
  });
  if (once.earlier) return createdResponse({ derivation: once.earlier, replayed: true });
  // A new derivation starts as a notebook document: blank, or from a template.
  const content = validDocumentOrThrow(
    input.content ??
      (input.template && input.template !== "blank"
        ? { ...templateDocument(input.template, { links: input.links }), title: input.title }
        : blankDocument(input.title)),
    { field: "content", title: input.title },
  );
  return createdResponse(await once.create((idempotency) => createDerivation({ teamId, title: input.title, ownerId: user.id, content, idempotency })));
});
