import { countDerivationsByTeamId, createDerivation, getDerivationsByTeamId } from "@/db/queries/derivations";
import { validDocumentOrThrow } from "@/lib/evaluation/document-content";
import { blankDocument } from "@/lib/notebook/document";
import { templateDocument } from "@/lib/notebook/templates";
import { apiRoute, readJson } from "@/lib/api/route";
import { loadTeamFor } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";
import { createDerivationSchema, listDerivationsQuerySchema } from "@/lib/validation/derivations";
import { parseOrThrow } from "@/lib/validation/parse";

type Params = { teamId: string };

export const GET = apiRoute<Params>(async (request, { params }) => {
  const user = await requireUser();
  const teamId = (await params).teamId;
  await loadTeamFor(user, teamId, "derivation:read");
  const query = Object.fromEntries(new URL(request.url).searchParams);
  const filters = parseOrThrow(listDerivationsQuerySchema, query);
  const { page, pageSize, sort, direction, ...where } = filters;
  const [derivations, total] = await Promise.all([
    getDerivationsByTeamId({ teamId, ...where, sort, direction, page, pageSize }),
    countDerivationsByTeamId({ teamId, ...where }),
  ]);
  return Response.json({ derivations, page, pageSize, total });
});

export const POST = apiRoute<Params>(async (request, { params }) => {
  const user = await requireUser();
  const teamId = (await params).teamId;
  await loadTeamFor(user, teamId, "derivation:create");
  const input = parseOrThrow(createDerivationSchema, await readJson(request));
  // A new derivation starts as a notebook document: blank, or from a template.
  const content = validDocumentOrThrow(
    input.content ??
      (input.template && input.template !== "blank"
        ? { ...templateDocument(input.template, { links: input.links }), title: input.title }
        : blankDocument(input.title)),
    { field: "content", title: input.title },
  );
  const derivation = await createDerivation({ teamId, title: input.title, ownerId: user.id, content });
  return Response.json({ derivation }, { status: 201 });
});
