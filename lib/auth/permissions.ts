import { AppError, type ErrorSurface } from "@/lib/errors";
import type { DerivationStatus, MemberRole } from "@/lib/domain";

// The one place that decides who may do what. Route handlers, server actions and
// pages ask here; the UI uses the same answers to hide what a role cannot do.

export const actions = [
  "team:read",
  "team:manage-members",
  "team:invite",
  "team:audit",
  "team:manage-tokens",
  "derivation:read",
  "derivation:create",
  "derivation:edit",
  "derivation:rename",
  "derivation:delete",
  "derivation:read-trash",
  "derivation:restore",
  "derivation:purge",
  "derivation:approve",
  "derivation:lock",
  "derivation:attach",
  "derivation:simulate",
  "derivation:request-review",
  "derivation:review",
  "comment:read",
  "comment:create",
  "comment:edit",
  "comment:delete",
  "comment:resolve",
] as const;
export type Action = (typeof actions)[number];

/** What a rule may look at besides the role. */
export interface ResourceContext {
  /** Status of the derivation the action targets. */
  status?: DerivationStatus;
  /** Whether the derivation is approved and locked (then nothing may change it until a lead unlocks it). */
  locked?: boolean;
  /** Whether the member asking owns the derivation (unknown counts as no). */
  isOwner?: boolean;
  /** Whether the member asking wrote the comment (or, for resolving, the thread) the action targets. */
  isAuthor?: boolean;
}

/**
 * Actions that change a derivation's record. While it is locked they are refused
 * for every role with 423, whatever the role allows otherwise; unlocking
 * (`derivation:lock`) is how a lead reopens it.
 */
export const writeActions: ReadonlySet<Action> = new Set<Action>([
  "derivation:edit",
  "derivation:rename",
  "derivation:delete",
  "derivation:attach",
  "derivation:simulate",
  "derivation:request-review",
  "derivation:review",
  "derivation:approve",
]);

type Rule = boolean | ((resource: ResourceContext | undefined) => boolean);

// An approved derivation is frozen for analysts; only a lead may change it
// (for instance to reopen it). Rules as data: one row per action.
const notApproved: Rule = (resource) => resource?.status !== "approved";
// Deleting a colleague's work is a lead's decision; an analyst deletes (and
// restores) only derivations they own.
const ownNotApproved: Rule = (resource) => resource?.isOwner === true && resource.status !== "approved";
const own: Rule = (resource) => resource?.isOwner === true;
const authored: Rule = (resource) => resource?.isAuthor === true;

const rules: Record<Action, Record<MemberRole, Rule>> = {
  "team:read": { lead: true, analyst: true, reviewer: true, viewer: true },
  "team:manage-members": { lead: true, analyst: false, reviewer: false, viewer: false },
  "team:invite": { lead: true, analyst: false, reviewer: false, viewer: false },
  // The audit log names people, addresses and times: leads only.
  "team:audit": { lead: true, analyst: false, reviewer: false, viewer: false },
  // API tokens read the team's approved equations from outside: leads issue and revoke them.
  "team:manage-tokens": { lead: true, analyst: false, reviewer: false, viewer: false },
  "derivation:read": { lead: true, analyst: true, reviewer: true, viewer: true },
  "derivation:create": { lead: true, analyst: true, reviewer: false, viewer: false },
  "derivation:edit": { lead: true, analyst: notApproved, reviewer: false, viewer: false },
  "derivation:rename": { lead: true, analyst: notApproved, reviewer: false, viewer: false },
  // Deleting moves the derivation to the team's trash (restorable for TRASH_RETENTION_DAYS).
  "derivation:delete": { lead: true, analyst: ownNotApproved, reviewer: false, viewer: false },
  "derivation:read-trash": { lead: true, analyst: true, reviewer: false, viewer: false },
  "derivation:restore": { lead: true, analyst: own, reviewer: false, viewer: false },
  // Removing from the trash before the retention period ends cannot be undone.
  "derivation:purge": { lead: true, analyst: false, reviewer: false, viewer: false },
  "derivation:approve": { lead: true, analyst: false, reviewer: false, viewer: false },
  "derivation:lock": { lead: true, analyst: false, reviewer: false, viewer: false },
  // Uploading or removing measured data and images changes the derivation's record.
  "derivation:attach": { lead: true, analyst: notApproved, reviewer: false, viewer: false },
  // Running a simulation or a fit stores a run but leaves the document alone,
  // so reviewers may check a derivation by running it.
  "derivation:simulate": { lead: true, analyst: true, reviewer: true, viewer: false },
  // Whoever may edit asks for review; reviewers and leads sign off or request changes.
  "derivation:request-review": { lead: true, analyst: true, reviewer: false, viewer: false },
  "derivation:review": { lead: true, analyst: false, reviewer: true, viewer: false },
  // Comment threads are discussion beside the record, not the record: they stay
  // open while a derivation is approved and locked. Reviewers comment (that is
  // their job); viewers read. People change only their own words; the thread's
  // author, the editors and the leads close or reopen a thread.
  "comment:read": { lead: true, analyst: true, reviewer: true, viewer: true },
  "comment:create": { lead: true, analyst: true, reviewer: true, viewer: false },
  "comment:edit": { lead: authored, analyst: authored, reviewer: authored, viewer: false },
  "comment:delete": { lead: authored, analyst: authored, reviewer: authored, viewer: false },
  "comment:resolve": { lead: true, analyst: true, reviewer: authored, viewer: false },
};

/** May a member with `role` perform `action` (on `resource`)? No role means no; a locked derivation refuses every write. */
export function can(role: MemberRole | null | undefined, action: Action, resource?: ResourceContext): boolean {
  if (!role) return false;
  if (resource?.locked && writeActions.has(action)) return false;
  const rule = rules[action][role];
  return typeof rule === "function" ? rule(resource) : rule;
}

/**
 * Throws unless `can` says yes: AppError("locked:derivation") (423) for a write to a
 * locked derivation that the role could otherwise make, AppError("forbidden:<surface>") otherwise.
 */
export function assertCan(role: MemberRole | null | undefined, action: Action, resource?: ResourceContext): void {
  if (!can(role, action, resource)) {
    // The lock is the reason when the role could make this change to an unlocked draft.
    if (resource?.locked && writeActions.has(action) && can(role, action, { ...resource, status: "draft", locked: false })) {
      throw new AppError("locked:derivation", "This derivation is approved and locked. A lead can unlock it, giving a reason.");
    }
    const surface = action.split(":")[0] as ErrorSurface;
    throw new AppError(`forbidden:${surface}`, `Your role (${role ?? "none"}) does not allow ${action}.`);
  }
}

/** Every action the role may take, e.g. to pass down to client components. */
export function allowedActions(role: MemberRole | null | undefined, resource?: ResourceContext): Action[] {
  return actions.filter((action) => can(role, action, resource));
}
