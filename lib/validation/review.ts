import { z } from "zod";
import { uuidField } from "./fields";

export const checkpointSchema = z.object({
  name: z.string().trim().min(1, "Name the checkpoint, e.g. what it is for.").max(120, "At most 120 characters."),
});

export const requestReviewSchema = z.object({
  reviewerIds: z.array(uuidField).min(1, "Choose at least one reviewer or lead.").max(20, "At most 20 reviewers."),
  message: z.string().trim().max(2000, "At most 2000 characters.").default(""),
});

export const reviewDecisionSchema = z
  .object({
    decision: z.enum(["signed_off", "changes_requested"], { error: "Sign off or request changes." }),
    comment: z.string().trim().max(4000, "At most 4000 characters.").default(""),
  })
  .refine((value) => value.decision !== "changes_requested" || value.comment.length > 0, {
    message: "Say what needs to change.",
    path: ["comment"],
  });

export const approveSchema = z.object({ revisionId: uuidField });

export const unlockSchema = z.object({
  reason: z.string().trim().min(10, "Give the reason in a sentence (at least 10 characters); it stays in the history.").max(2000, "At most 2000 characters."),
});
