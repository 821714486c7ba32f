import { z } from "zod";

/** Most bytes of the POST body: it names one cell, and a body far past that is refused unread (413). */
export const QUEUE_STUDY_BODY_LIMIT = 4 * 1024;

/** POST /api/derivations/[id]/studies: which study cell of the derivation's current content to run. */
export const queueStudySchema = z.object({ cellId: z.string().trim().min(1, "Choose a study cell.").max(64) });

/** GET /api/derivations/[id]/studies?cellId=…: the cell whose studies to list. */
export const studyListQuerySchema = z.object({ cellId: z.string().trim().min(1, "Name the study cell.").max(64) });
