import { derivationRoute } from "@/lib/api/resource-route";
import { readJson } from "@/lib/api/route";
import { listCommentThreads, startCommentThread } from "@/lib/comments/service";
import { createThreadSchema } from "@/lib/validation/comments";
import { parseOrThrow } from "@/lib/validation/parse";

type Params = { id: string };

// Comment threads of a derivation: everyone on the team reads them; leads,
// analysts and reviewers start them (on a span of text or on a term).

export const GET = derivationRoute<Params>("comment:read", async ({ user, derivation, membership }) =>
  Response.json(await listCommentThreads({ user, derivation, membership })),
);

export const POST = derivationRoute<Params>("comment:create", async ({ request, user, derivation, membership }) => {
  const input = parseOrThrow(createThreadSchema, await readJson(request));
  const thread = await startCommentThread({ user, derivation, membership }, input);
  return Response.json({ thread }, { status: 201 });
});
