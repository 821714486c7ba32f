/**
 * What the comment routes answer: threads with their anchors and comments,
 * each carrying what the caller may do with it (decided by the permission
 * module on the server, never by the client). Client-safe types only.
 */

export interface TextAnchorView {
  kind: "text";
  cellId: string;
  fieldPath: string;
  /** Encoded Yjs relative positions, base64. */
  start: string;
  end: string;
  quote: string;
}

export interface TermAnchorView {
  kind: "term";
  /** "<cellId>/<coordinate>/<term id>" (lib/comments/term-anchor.ts). */
  key: string;
  cellId: string;
  coordinate: string;
  termId: string;
  termText: string;
  termLatex: string;
}

export type AnchorView = TextAnchorView | TermAnchorView;

export interface CommentView {
  id: string;
  authorId: string | null;
  authorName: string | null;
  /** Markdown with @[Name](id) mentions; empty once deleted. */
  body: string;
  createdAt: string;
  editedAt: string | null;
  deleted: boolean;
  mayEdit: boolean;
  mayDelete: boolean;
}

export interface ThreadView {
  id: string;
  status: "open" | "resolved";
  authorId: string | null;
  authorName: string | null;
  createdAt: string;
  updatedAt: string;
  resolvedAt: string | null;
  resolvedByName: string | null;
  anchor: AnchorView;
  /** The latest revision when the thread was started, and whether the content then was exactly that revision. */
  writtenOn: { revisionNumber: number | null; sameAsRevision: boolean };
  comments: CommentView[];
  mayReply: boolean;
  mayResolve: boolean;
}

export interface MemberOption {
  id: string;
  name: string;
}

export interface ThreadsAnswer {
  threads: ThreadView[];
  /** Team members, for the @mention autocomplete. */
  members: MemberOption[];
  mayComment: boolean;
  /** The caller, for the "mine" filter. */
  userId: string;
}
