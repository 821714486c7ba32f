import "server-only";
import {
  createCommentReply,
  createCommentThread,
  getCommentByIdAndThreadId,
  getCommentThreadByIdAndDerivationId,
  getCommentThreadsByDerivationId,
  getMentionEmailChoicesByUserIds,
  markCommentMentionsEmailedByCommentId,
  setCommentThreadStatusById,
  softDeleteCommentById,
  updateCommentBodyById,
  type CommentMentionsInput,
  type CommentThreadRow,
} from "@/db/queries/comments";
import { getLatestRevisionByDerivationId } from "@/db/queries/revisions";
import { getMembersByTeamId, type Member } from "@/db/queries/teams";
import type { Comment, CommentThread, Derivation, Membership } from "@/db/schema";
import { assertCan, can } from "@/lib/auth/permissions";
import type { SessionUser } from "@/lib/auth/session";
import { AppError } from "@/lib/errors";
import { contentHash } from "@/lib/history/content-hash";
import { absoluteUrl } from "@/lib/links";
import { composeLinkMail, sendMail } from "@/lib/mailer";
import type { CreateThreadInput } from "@/lib/validation/comments";
import { mentionsIn, withPlainMentions } from "./mentions";
import { termKey } from "./term-anchor";
import type { ThreadView, ThreadsAnswer } from "./views";

// The comment threads of a derivation: the routes call these after the wrapper
// checked the caller's membership. Each step asks the permission module with the
// authorship it concerns, validates mentions against the team, and tells newly
// mentioned people once: an in-app notification with the comment, and an e-mail
// unless they turned mention e-mails off.

interface Caller {
  derivation: Derivation;
  membership: Membership;
  user: SessionUser;
}

/** The audit log's context of a change by the caller (each write records its own event). */
const auditOf = ({ derivation, user }: Pick<Caller, "derivation" | "user">) => ({ teamId: derivation.teamId, derivationId: derivation.id, actorId: user.id });

const iso = (date: Date | null) => (date ? date.toISOString() : null);
const base64 = (bytes: Uint8Array | null) => (bytes ? Buffer.from(bytes).toString("base64") : "");

function threadView(row: CommentThreadRow, { membership, user }: Pick<Caller, "membership" | "user">): ThreadView {
  const role = membership.role;
  const anchor: ThreadView["anchor"] =
    row.anchorKind === "text"
      ? {
          kind: "text",
          cellId: row.cellId ?? "",
          fieldPath: row.fieldPath ?? "",
          start: base64(row.anchorStart),
          end: base64(row.anchorEnd),
          quote: row.quote ?? "",
        }
      : {
          kind: "term",
          key: row.termKey ?? "",
          ...splitKey(row.termKey ?? ""),
          termText: row.termText ?? "",
          termLatex: row.termLatex ?? "",
        };
  return {
    id: row.id,
    status: row.status,
    authorId: row.authorId,
    authorName: row.authorName,
    createdAt: row.createdAt.toISOString(),
    updatedAt: row.updatedAt.toISOString(),
    resolvedAt: iso(row.resolvedAt),
    resolvedByName: row.resolvedByName,
    anchor,
    writtenOn: { revisionNumber: row.revisionNumber, sameAsRevision: row.revisionContentHash !== null && row.revisionContentHash === row.contentHash },
    comments: row.comments.map((comment) => {
      const own = { isAuthor: comment.authorId === user.id };
      const deleted = comment.deletedAt !== null;
      return {
        id: comment.id,
        authorId: comment.authorId,
        authorName: comment.authorName,
        body: comment.body,
        createdAt: comment.createdAt.toISOString(),
        editedAt: iso(comment.editedAt),
        deleted,
        mayEdit: !deleted && can(role, "comment:edit", own),
        mayDelete: !deleted && can(role, "comment:delete", own),
      };
    }),
    mayReply: can(role, "comment:create"),
    mayResolve: can(role, "comment:resolve", { isAuthor: row.authorId === user.id }),
  };
}

function splitKey(key: string): { cellId: string; coordinate: string; termId: string } {
  const parts = key.split("/");
  const termId = parts.pop() ?? "";
  const coordinate = parts.pop() ?? "";
  return { cellId: parts.join("/"), coordinate, termId };
}

export async function listCommentThreads(caller: Caller): Promise<ThreadsAnswer> {
  assertCan(caller.membership.role, "comment:read");
  const [rows, members] = await Promise.all([
    getCommentThreadsByDerivationId({ derivationId: caller.derivation.id }),
    getMembersByTeamId({ teamId: caller.derivation.teamId }),
  ]);
  return {
    threads: rows.map((row) => threadView(row, caller)),
    members: members.map((member) => ({ id: member.userId, name: member.name })),
    mayComment: can(caller.membership.role, "comment:create"),
    userId: caller.user.id,
  };
}

async function threadViewById(caller: Caller, threadId: string): Promise<ThreadView> {
  const rows = await getCommentThreadsByDerivationId({ derivationId: caller.derivation.id });
  const row = rows.find((candidate) => candidate.id === threadId);
  if (!row) throw new AppError("not_found:comment", "That comment thread is gone.");
  return threadView(row, caller);
}

/** The members a body mentions (the author left out); a mention of anyone outside the team is refused. */
async function mentionsOf(caller: Caller, body: string): Promise<{ mentioned: Member[]; members: Map<string, Member> }> {
  const members = new Map((await getMembersByTeamId({ teamId: caller.derivation.teamId })).map((member) => [member.userId, member]));
  const mentions = mentionsIn(body);
  const strangers = mentions.filter((mention) => !members.has(mention.userId));
  if (strangers.length > 0) {
    throw new AppError("bad_request:validation", undefined, {
      fieldErrors: { body: [`Only members of this team can be mentioned (${strangers.map((s) => `@${s.name}`).join(", ")} is not).`] },
    });
  }
  const mentioned = mentions.filter((mention) => mention.userId !== caller.user.id).map((mention) => members.get(mention.userId)!);
  return { mentioned, members };
}

function mentionInput(caller: Caller, mentioned: Member[], body: string): CommentMentionsInput {
  const excerpt = excerptOf(body);
  return {
    mentionedUserIds: mentioned.map((member) => member.userId),
    notificationFor: (userId) => ({
      userId,
      teamId: caller.derivation.teamId,
      derivationId: caller.derivation.id,
      actorId: caller.user.id,
      kind: "mention",
      text: `${caller.user.name} mentioned you in a comment on "${caller.derivation.title}": ${excerpt}`,
    }),
  };
}

function excerptOf(body: string): string {
  const plain = withPlainMentions(body).replace(/\s+/g, " ").trim();
  return plain.length > 160 ? `${plain.slice(0, 157)}…` : plain;
}

/**
 * E-mails the people newly mentioned in a comment who want mention e-mails. The
 * comment is stored already; a mail server that is down must not undo it, so a
 * failed delivery is logged (by the mailer) and the mention stays un-mailed.
 */
async function mailMentions(caller: Caller, comment: Comment, newlyMentioned: string[], members: Map<string, Member>): Promise<void> {
  if (newlyMentioned.length === 0) return;
  const choices = await getMentionEmailChoicesByUserIds({ userIds: newlyMentioned });
  const recipients = newlyMentioned.filter((id) => choices.get(id) === true && members.has(id));
  const link = absoluteUrl(`/derivations/${caller.derivation.id}?thread=${comment.threadId}`);
  const results = await Promise.allSettled(
    recipients.map(async (id) => {
      await sendMail(
        composeLinkMail({
          to: members.get(id)!.email,
          subject: `${caller.user.name} mentioned you: ${caller.derivation.title}`,
          intro: `${caller.user.name} mentioned you in a comment on "${caller.derivation.title}":\n\n${excerptOf(comment.body)}`,
          linkLabel: "Open the thread",
          link,
          footnote: "You receive this because you were mentioned in Holonomy. Turn these e-mails off under your notification settings.",
        }),
      );
      return id;
    }),
  );
  const mailed = results.flatMap((result) => (result.status === "fulfilled" ? [result.value] : []));
  await markCommentMentionsEmailedByCommentId({ commentId: comment.id, userIds: mailed });
}

export async function startCommentThread(caller: Caller, input: CreateThreadInput): Promise<ThreadView> {
  assertCan(caller.membership.role, "comment:create");
  const { mentioned, members } = await mentionsOf(caller, input.body);
  const latest = await getLatestRevisionByDerivationId({ derivationId: caller.derivation.id });
  const written = { revisionId: latest?.id ?? null, contentHash: contentHash(caller.derivation.content) };
  const { anchor } = input;
  const thread =
    anchor.kind === "text"
      ? {
          derivationId: caller.derivation.id,
          authorId: caller.user.id,
          anchorKind: "text" as const,
          cellId: anchor.cellId,
          fieldPath: anchor.fieldPath,
          anchorStart: new Uint8Array(Buffer.from(anchor.start, "base64")),
          anchorEnd: new Uint8Array(Buffer.from(anchor.end, "base64")),
          quote: anchor.quote,
          ...written,
        }
      : {
          derivationId: caller.derivation.id,
          authorId: caller.user.id,
          anchorKind: "term" as const,
          termKey: termKey(anchor),
          termText: anchor.termText,
          termLatex: anchor.termLatex,
          ...written,
        };
  const created = await createCommentThread({
    thread,
    body: input.body,
    mentions: mentionInput(caller, mentioned, input.body),
    audit: auditOf(caller),
  });
  await mailMentions(caller, created.comment, created.newlyMentioned, members);
  return threadViewById(caller, created.thread.id);
}

async function threadOf(caller: Caller, threadId: string): Promise<CommentThread> {
  const thread = await getCommentThreadByIdAndDerivationId({ id: threadId, derivationId: caller.derivation.id });
  if (!thread) throw new AppError("not_found:comment", "That comment thread is gone.");
  return thread;
}

async function commentOf(caller: Caller, threadId: string, commentId: string): Promise<Comment> {
  const thread = await threadOf(caller, threadId);
  const comment = await getCommentByIdAndThreadId({ id: commentId, threadId: thread.id });
  if (!comment || comment.deletedAt) throw new AppError("not_found:comment", "That comment is gone.");
  return comment;
}

export async function replyToThread(caller: Caller, threadId: string, body: string): Promise<ThreadView> {
  assertCan(caller.membership.role, "comment:create");
  const thread = await threadOf(caller, threadId);
  const { mentioned, members } = await mentionsOf(caller, body);
  const created = await createCommentReply({
    threadId: thread.id,
    authorId: caller.user.id,
    body,
    mentions: mentionInput(caller, mentioned, body),
    audit: auditOf(caller),
  });
  await mailMentions(caller, created.comment, created.newlyMentioned, members);
  return threadViewById(caller, thread.id);
}

export async function editComment(caller: Caller, threadId: string, commentId: string, body: string): Promise<ThreadView> {
  const comment = await commentOf(caller, threadId, commentId);
  assertCan(caller.membership.role, "comment:edit", { isAuthor: comment.authorId === caller.user.id });
  const { mentioned, members } = await mentionsOf(caller, body);
  const updated = await updateCommentBodyById({ id: comment.id, body, mentions: mentionInput(caller, mentioned, body), audit: auditOf(caller) });
  if (!updated) throw new AppError("not_found:comment", "That comment is gone.");
  await mailMentions(caller, updated.comment, updated.newlyMentioned, members);
  return threadViewById(caller, threadId);
}

export async function deleteComment(caller: Caller, threadId: string, commentId: string): Promise<ThreadView> {
  const comment = await commentOf(caller, threadId, commentId);
  assertCan(caller.membership.role, "comment:delete", { isAuthor: comment.authorId === caller.user.id });
  await softDeleteCommentById({ id: comment.id, audit: auditOf(caller) });
  return threadViewById(caller, threadId);
}

export async function setThreadStatus(caller: Caller, threadId: string, status: "open" | "resolved"): Promise<ThreadView> {
  const thread = await threadOf(caller, threadId);
  assertCan(caller.membership.role, "comment:resolve", { isAuthor: thread.authorId === caller.user.id });
  if (thread.status !== status) await setCommentThreadStatusById({ id: thread.id, status, audit: auditOf(caller) });
  return threadViewById(caller, thread.id);
}
