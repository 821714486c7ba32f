import { z } from "zod";
import { statusField, uuidField } from "./fields";

export const derivationTitleField = z.string().trim().min(1, "Give the derivation a title.").max(160, "Use at most 160 characters.");

// Content is the model file (DESIGN.md) for now; the notebook issue narrows it.
const contentField = z.record(z.string(), z.unknown());

export const createDerivationSchema = z.object({
  title: derivationTitleField,
  content: contentField.optional(),
});
export type CreateDerivationInput = z.infer<typeof createDerivationSchema>;

export const updateDerivationSchema = z
  .object({
    title: derivationTitleField.optional(),
    status: statusField.optional(),
    content: contentField.optional(),
  })
  .refine((value) => Object.values(value).some((field) => field !== undefined), {
    message: "Change at least one of title, status or content.",
  });
export type UpdateDerivationInput = z.infer<typeof updateDerivationSchema>;

export const listDerivationsQuerySchema = z.object({
  status: statusField.optional(),
  ownerId: uuidField.optional(),
  search: z.string().trim().max(160).optional(),
});
