import { z } from "zod";
import { DOCUMENT_LIMITS } from "@/lib/notebook/document";
import { TERM_ID_PATTERN } from "@/lib/comments/term-anchor";
import { QUOTE_LIMIT } from "@/lib/comments/text-anchor";

export const COMMENT_BODY_LIMIT = 10_000;

export const commentBodyField = z
  .string()
  .trim()
  .min(1, "Write something first.")
  .max(COMMENT_BODY_LIMIT, `At most ${COMMENT_BODY_LIMIT.toLocaleString("en")} characters.`);

// An encoded Yjs relative position is a few dozen bytes; base64 in JSON.
const relativePosition = z
  .string()
  .min(4, "Not an anchor position.")
  .max(1024, "Not an anchor position.")
  .regex(/^[A-Za-z0-9+/]+={0,2}$/, "Not an anchor position.");
const cellIdField = z.string().min(1, "Name the cell.").max(DOCUMENT_LIMITS.id, "Not a cell id.");

export const textAnchorSchema = z.object({
  kind: z.literal("text"),
  cellId: cellIdField,
  // The field inside the cell, e.g. "expr" or "rows/<row id>/value".
  fieldPath: z
    .string()
    .min(1, "Name the field.")
    .max(200, "Not a field path.")
    .regex(/^[A-Za-z0-9_./:-]+$/, "Not a field path."),
  start: relativePosition,
  end: relativePosition,
  quote: z.string().min(1, "Select some text to comment on.").max(QUOTE_LIMIT, `Quote at most ${QUOTE_LIMIT} characters.`),
});

export const termAnchorSchema = z.object({
  kind: z.literal("term"),
  cellId: cellIdField,
  coordinate: z
    .string()
    .min(1)
    .max(DOCUMENT_LIMITS.name, "Not a coordinate.")
    .regex(/^[A-Za-z_][A-Za-z0-9_]*$/, "Not a coordinate."),
  termId: z.string().regex(TERM_ID_PATTERN, "Not a term id."),
  termText: z.string().min(1).max(4000, "The term is too long to quote."),
  termLatex: z.string().min(1).max(8000, "The term is too long to quote."),
});

export const createThreadSchema = z.object({
  anchor: z.discriminatedUnion("kind", [textAnchorSchema, termAnchorSchema], { error: "Anchor the thread to text or to a term." }),
  body: commentBodyField,
});

export const replySchema = z.object({ body: commentBodyField });
export const editCommentSchema = z.object({ body: commentBodyField });
export const threadStatusSchema = z.object({ status: z.enum(["open", "resolved"], { error: "Choose open or resolved." }) });
export const notificationSettingsSchema = z.object({ mentionEmails: z.boolean({ error: "Choose on or off." }) });

export type CreateThreadInput = z.infer<typeof createThreadSchema>;
