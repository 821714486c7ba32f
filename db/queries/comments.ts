import "server-only";
import { and, asc, eq, inArray, isNull } from "drizzle-orm";
import { alias } from "drizzle-orm/pg-core";
import { db, type Executor } from "../client";
import {
  commentMentions,
  comments,
  commentThreads,
  notificationSettings,
  revisions,
  users,
  type Comment,
  type CommentThread,
  type CommentThreadStatus,
  type NewCommentThread,
} from "../schema";
import { recordAuditEvent } from "./audit";
import { createNotifications, type NewNotification } from "./notifications";
import { returnedRow } from "./returned-row";

export type CommentRow = Comment & { authorName: string | null };
export type CommentThreadRow = CommentThread & {
  authorName: string | null;
  resolvedByName: string | null;
  revisionNumber: number | null;
  revisionContentHash: string | null;
  comments: CommentRow[];
};

const resolvers = alias(users, "resolvers");

/** Every thread of a derivation, oldest first, each with its comments (deleted ones included, without their body). */
export async function getCommentThreadsByDerivationId({ derivationId }: { derivationId: string }, executor: Executor = db): Promise<CommentThreadRow[]> {
  const threadRows = await executor
    .select({
      thread: commentThreads,
      authorName: users.name,
      resolvedByName: resolvers.name,
      revisionNumber: revisions.number,
      revisionContentHash: revisions.contentHash,
    })
    .from(commentThreads)
    .leftJoin(users, eq(users.id, commentThreads.authorId))
    .leftJoin(resolvers, eq(resolvers.id, commentThreads.resolvedById))
    .leftJoin(revisions, eq(revisions.id, commentThreads.revisionId))
    .where(eq(commentThreads.derivationId, derivationId))
    .orderBy(asc(commentThreads.createdAt), asc(commentThreads.id));
  if (threadRows.length === 0) return [];
  const commentRows = await executor
    .select({ comment: comments, authorName: users.name })
    .from(comments)
    .leftJoin(users, eq(users.id, comments.authorId))
    .where(
      inArray(
        comments.threadId,
        threadRows.map((row) => row.thread.id),
      ),
    )
    .orderBy(asc(comments.createdAt), asc(comments.id));
  const byThread = new Map<string, CommentRow[]>();
  for (const { comment, authorName } of commentRows) {
    const list = byThread.get(comment.threadId) ?? [];
    list.push({ ...comment, body: comment.deletedAt ? "" : comment.body, authorName });
    byThread.set(comment.threadId, list);
  }
  return threadRows.map(({ thread, ...rest }) => ({ ...thread, ...rest, comments: byThread.get(thread.id) ?? [] }));
}

export async function getCommentThreadByIdAndDerivationId(
  { id, derivationId }: { id: string; derivationId: string },
  executor: Executor = db,
): Promise<CommentThread | null> {
  const [row] = await executor
    .select()
    .from(commentThreads)
    .where(and(eq(commentThreads.id, id), eq(commentThreads.derivationId, derivationId)))
    .limit(1);
  return row ?? null;
}

export async function getCommentByIdAndThreadId({ id, threadId }: { id: string; threadId: string }, executor: Executor = db): Promise<Comment | null> {
  const [row] = await executor
    .select()
    .from(comments)
    .where(and(eq(comments.id, id), eq(comments.threadId, threadId)))
    .limit(1);
  return row ?? null;
}

/** What a new comment carries besides its text: the people it mentions and the notifications they get. */
export interface CommentMentionsInput {
  /** Team members mentioned in the body (the author excluded by the caller). */
  mentionedUserIds: string[];
  /** The in-app notification for one newly mentioned person. */
  notificationFor: (userId: string) => NewNotification;
}

/**
 * Records the mentions of a comment that were not recorded before and writes one
 * notification to each newly mentioned person; returns their ids. A person already
 * mentioned in this comment (an edit that keeps the mention) is left alone.
 */
async function recordNewMentions(executor: Executor, commentId: string, input: CommentMentionsInput): Promise<string[]> {
  const unique = [...new Set(input.mentionedUserIds)];
  if (unique.length === 0) return [];
  const inserted = await executor
    .insert(commentMentions)
    .values(unique.map((userId) => ({ commentId, userId })))
    .onConflictDoNothing({ target: [commentMentions.commentId, commentMentions.userId] })
    .returning({ userId: commentMentions.userId });
  const fresh = inserted.map((row) => row.userId);
  await createNotifications(fresh.map(input.notificationFor), executor);
  return fresh;
}

/** Who changed a comment, on which team's derivation: every write below records it in the audit log. */
export interface CommentAuditContext {
  teamId: string;
  derivationId: string;
  actorId: string;
}

/**
 * One audit event of a comment or thread, written in the transaction of the change
 * itself, so the log never misses a stored change nor records one that rolled back.
 * The comment's text is not copied: the log says who did what and when.
 */
async function auditComment(
  executor: Executor,
  audit: CommentAuditContext,
  action: "comment.create" | "comment.edit" | "comment.delete" | "comment.resolve" | "comment.reopen",
  target: { type: "comment" | "comment_thread"; id: string },
  details: Record<string, unknown>,
): Promise<void> {
  await recordAuditEvent(
    {
      teamId: audit.teamId,
      actorId: audit.actorId,
      action,
      targetType: target.type,
      targetId: target.id,
      details: { derivationId: audit.derivationId, ...details },
    },
    executor,
  );
}

/** A new thread with its first comment and that comment's mentions, in one transaction. */
export async function createCommentThread({
  thread,
  body,
  mentions,
  audit,
}: {
  thread: Omit<NewCommentThread, "id" | "status" | "resolvedAt" | "resolvedById" | "createdAt" | "updatedAt">;
  body: string;
  mentions: CommentMentionsInput;
  audit: CommentAuditContext;
}): Promise<{ thread: CommentThread; comment: Comment; newlyMentioned: string[] }> {
  return db.transaction(async (tx) => {
    const created = returnedRow(await tx.insert(commentThreads).values(thread).returning(), "comment thread");
    const comment = returnedRow(await tx.insert(comments).values({ threadId: created.id, authorId: thread.authorId, body }).returning(), "comment");
    const newlyMentioned = await recordNewMentions(tx, comment.id, mentions);
    await auditComment(
      tx,
      audit,
      "comment.create",
      { type: "comment", id: comment.id },
      { threadId: created.id, anchorKind: created.anchorKind, newThread: true },
    );
    return { thread: created, comment, newlyMentioned };
  });
}

/** A reply at the end of a thread; touching the thread's updated_at orders recent activity. */
export async function createCommentReply({
  threadId,
  authorId,
  body,
  mentions,
  audit,
}: {
  threadId: string;
  authorId: string;
  body: string;
  mentions: CommentMentionsInput;
  audit: CommentAuditContext;
}): Promise<{ comment: Comment; newlyMentioned: string[] }> {
  return db.transaction(async (tx) => {
    const comment = returnedRow(await tx.insert(comments).values({ threadId, authorId, body }).returning(), "comment");
    await tx.update(commentThreads).set({ updatedAt: new Date() }).where(eq(commentThreads.id, threadId));
    const newlyMentioned = await recordNewMentions(tx, comment.id, mentions);
    await auditComment(tx, audit, "comment.create", { type: "comment", id: comment.id }, { threadId, newThread: false });
    return { comment, newlyMentioned };
  });
}

/** New text for a comment that is not deleted; mentions it already had are not notified again. Null when it is gone. */
export async function updateCommentBodyById({
  id,
  body,
  mentions,
  audit,
}: {
  id: string;
  body: string;
  mentions: CommentMentionsInput;
  audit: CommentAuditContext;
}): Promise<{ comment: Comment; newlyMentioned: string[] } | null> {
  return db.transaction(async (tx) => {
    const now = new Date();
    const [comment] = await tx
      .update(comments)
      .set({ body, editedAt: now, updatedAt: now })
      .where(and(eq(comments.id, id), isNull(comments.deletedAt)))
      .returning();
    if (!comment) return null;
    const newlyMentioned = await recordNewMentions(tx, comment.id, mentions);
    await auditComment(tx, audit, "comment.edit", { type: "comment", id: comment.id }, { threadId: comment.threadId });
    return { comment, newlyMentioned };
  });
}

/** Marks a comment deleted (its text is no longer answered); the thread keeps its place. */
export async function softDeleteCommentById({ id, audit }: { id: string; audit: CommentAuditContext }): Promise<Comment | null> {
  return db.transaction(async (tx) => {
    const now = new Date();
    const [row] = await tx
      .update(comments)
      .set({ deletedAt: now, updatedAt: now })
      .where(and(eq(comments.id, id), isNull(comments.deletedAt)))
      .returning();
    if (!row) return null;
    await auditComment(tx, audit, "comment.delete", { type: "comment", id: row.id }, { threadId: row.threadId, authorId: row.authorId });
    return row;
  });
}

/** Resolves or reopens a thread (the actor is the one who resolved it); null when it is gone. */
export async function setCommentThreadStatusById({
  id,
  status,
  audit,
}: {
  id: string;
  status: CommentThreadStatus;
  audit: CommentAuditContext;
}): Promise<CommentThread | null> {
  return db.transaction(async (tx) => {
    const now = new Date();
    const [row] = await tx
      .update(commentThreads)
      .set(
        status === "resolved"
          ? { status, resolvedAt: now, resolvedById: audit.actorId, updatedAt: now }
          : { status, resolvedAt: null, resolvedById: null, updatedAt: now },
      )
      .where(eq(commentThreads.id, id))
      .returning();
    if (!row) return null;
    await auditComment(tx, audit, status === "resolved" ? "comment.resolve" : "comment.reopen", { type: "comment_thread", id: row.id }, {});
    return row;
  });
}

export async function markCommentMentionsEmailedByCommentId(
  { commentId, userIds }: { commentId: string; userIds: string[] },
  executor: Executor = db,
): Promise<void> {
  if (userIds.length === 0) return;
  const now = new Date();
  await executor
    .update(commentMentions)
    .set({ emailedAt: now, updatedAt: now })
    .where(and(eq(commentMentions.commentId, commentId), inArray(commentMentions.userId, userIds)));
}

// ---------------------------------------------------------------------------
// Notification settings

export interface NotificationSettingsView {
  mentionEmails: boolean;
}

const defaultSettings: NotificationSettingsView = { mentionEmails: true };

export async function getNotificationSettingsByUserId({ userId }: { userId: string }, executor: Executor = db): Promise<NotificationSettingsView> {
  const [row] = await executor.select().from(notificationSettings).where(eq(notificationSettings.userId, userId)).limit(1);
  return row ? { mentionEmails: row.mentionEmails } : defaultSettings;
}

/** Who among `userIds` wants mention e-mails (no row: the default, yes). */
export async function getMentionEmailChoicesByUserIds({ userIds }: { userIds: string[] }, executor: Executor = db): Promise<Map<string, boolean>> {
  const choices = new Map(userIds.map((id) => [id, defaultSettings.mentionEmails]));
  if (userIds.length === 0) return choices;
  const rows = await executor.select().from(notificationSettings).where(inArray(notificationSettings.userId, userIds));
  for (const row of rows) choices.set(row.userId, row.mentionEmails);
  return choices;
}

export async function upsertNotificationSettingsByUserId(
  { userId, mentionEmails }: { userId: string; mentionEmails: boolean },
  executor: Executor = db,
): Promise<NotificationSettingsView> {
  const now = new Date();
  const [row] = await executor
    .insert(notificationSettings)
    .values({ userId, mentionEmails })
    .onConflictDoUpdate({ target: notificationSettings.userId, set: { mentionEmails, updatedAt: now } })
    .returning();
  return { mentionEmails: row?.mentionEmails ?? mentionEmails };
}
