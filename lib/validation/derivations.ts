import { z } from "zod";
import { statusField, uuidField } from "./fields";

export const derivationTitleField = z.string().trim().min(1, "Give the derivation a title.").max(160, "Use at most 160 characters.");

// A notebook document of any schema version; the handler migrates and validates it in full
// (validDocumentOrThrow in lib/evaluation/document-content.ts), so field errors carry its paths.
const contentField = z.record(z.string(), z.unknown());

// Template ids are the notebook's (lib/notebook/templates.ts); the short
// names are accepted as aliases.
export const derivationTemplates = ["blank", "single-pendulum", "cart-with-pendulum", "two-mass-spring-chain", "n-link-chain"] as const;
export const derivationTemplateAliases = { "crane-trolley": "cart-with-pendulum", "two-mass-chain": "two-mass-spring-chain", chain: "n-link-chain" } as const;
const templateField = z
  .enum([...derivationTemplates, ...(Object.keys(derivationTemplateAliases) as (keyof typeof derivationTemplateAliases)[])], {
    error: "Choose blank, single-pendulum, cart-with-pendulum, two-mass-spring-chain or n-link-chain.",
  })
  .transform(
    (id) =>
      (id in derivationTemplateAliases ? derivationTemplateAliases[id as keyof typeof derivationTemplateAliases] : id) as (typeof derivationTemplates)[number],
  );

export const createDerivationSchema = z
  .object({
    title: derivationTitleField,
    content: contentField.optional(),
    template: templateField.optional(),
    links: z
      .number({ error: "Give the number of links as a whole number." })
      .int("Give the number of links as a whole number.")
      .min(1, "A chain has at least 1 link.")
      .max(8, "A chain has at most 8 links.")
      .optional(),
  })
  .refine((value) => !(value.content && value.template), { message: "Send either content or a template, not both.", path: ["template"] });
export type CreateDerivationInput = z.infer<typeof createDerivationSchema>;

export const updateDerivationSchema = z
  .object({
    title: derivationTitleField.optional(),
    content: contentField.optional(),
    // The status moves only through review: request review, sign off or request changes, approve, unlock.
    status: z.never({ error: "The status changes through review: request review, then a lead approves (or unlocks)." }).optional(),
  })
  .refine((value) => value.title !== undefined || value.content !== undefined, {
    message: "Change at least one of title or content.",
  });
export type UpdateDerivationInput = z.infer<typeof updateDerivationSchema>;

export const listDerivationsQuerySchema = z.object({
  status: statusField.optional(),
  ownerId: uuidField.optional(),
  search: z.string().trim().max(160).optional(),
  sort: z
    .enum(["title", "status", "owner", "updatedAt", "createdAt", "coordinates"], {
      error: "Sort by title, status, owner, updatedAt, createdAt or coordinates.",
    })
    .optional(),
  direction: z.enum(["asc", "desc"], { error: "Choose asc or desc." }).optional(),
  page: z.coerce.number().int().min(1, "Pages start at 1.").default(1),
  pageSize: z.coerce.number().int().min(1).max(200, "At most 200 per page.").default(50),
});
