import { idOrNotFound } from "@/lib/auth/access";
import { derivationRoute } from "@/lib/api/resource-route";
import { readJson } from "@/lib/api/route";
import { deleteComment, editComment } from "@/lib/comments/service";
import { editCommentSchema } from "@/lib/validation/comments";
import { parseOrThrow } from "@/lib/validation/parse";

type Params = { id: string; threadId: string; commentId: string };

// One's own comment only: the service asks the permission module with the authorship.

function idsOf(params: Params) {
  return {
    threadId: idOrNotFound(params.threadId, "comment", "That comment thread is gone."),
    commentId: idOrNotFound(params.commentId, "comment", "That comment is gone."),
  };
}

export const PATCH = derivationRoute<Params>("comment:read", async ({ request, params, user, derivation, membership }) => {
  const { threadId, commentId } = idsOf(params);
  const { body } = parseOrThrow(editCommentSchema, await readJson(request));
  return Response.json({ thread: await editComment({ user, derivation, membership }, threadId, commentId, body) });
});

export const DELETE = derivationRoute<Params>("comment:read", async ({ params, user, derivation, membership }) => {
  const { threadId, commentId } = idsOf(params);
  return Response.json({ thread: await deleteComment({ user, derivation, membership }, threadId, commentId) });
});
