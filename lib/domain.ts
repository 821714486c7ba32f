// Vocabulary shared by the database schema, the permission module and the UI.
// Plain data so client components can import it without pulling in the ORM.

export const memberRoles = ["lead", "analyst", "reviewer", "viewer"] as const;
export type MemberRole = (typeof memberRoles)[number];

export const roleLabels: Record<MemberRole, string> = {
  lead: "Lead",
  analyst: "Analyst",
  reviewer: "Reviewer",
  viewer: "Viewer",
};

export const roleDescriptions: Record<MemberRole, string> = {
  lead: "Manages members and roles, approves and locks derivations.",
  analyst: "Creates and edits derivations, comments.",
  reviewer: "Reads and comments.",
  viewer: "Reads.",
};

export const derivationStatuses = ["draft", "in_review", "approved"] as const;
export type DerivationStatus = (typeof derivationStatuses)[number];

export const statusLabels: Record<DerivationStatus, string> = {
  draft: "Draft",
  in_review: "In review",
  approved: "Approved",
};

/** Days a deleted derivation stays in its team's trash, restorable, before it is removed for good. */
export const TRASH_RETENTION_DAYS = 30;

export const safetyNote =
  "Derived equations are a model. Before they drive real hardware or a safety-relevant decision, validate them against tests and the applicable codes and standards, under a qualified engineer's responsibility.";
