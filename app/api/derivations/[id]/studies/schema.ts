import { z } from "zod";

/** POST /api/derivations/[id]/studies: which study cell of the derivation's current content to run. */
export const queueStudySchema = z.object({ cellId: z.string().trim().min(1, "Choose a study cell.").max(64) });

/** GET /api/derivations/[id]/studies?cellId=…: the cell whose studies to list. */
export const studyListQuerySchema = z.object({ cellId: z.string().trim().min(1, "Name the study cell.").max(64) });
