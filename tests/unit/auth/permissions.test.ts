import { describe, expect, it } from "vitest";
import { actions, allowedActions, assertCan, can, type Action } from "@/lib/auth/permissions";
import { memberRoles, type MemberRole } from "@/lib/domain";
import { AppError } from "@/lib/errors";

// The product's role model (issue 2 / DESIGN.md): lead manages members and roles,
// approves and locks; analyst creates and edits derivations and comments;
// reviewer reads and comments; viewer reads. An approved derivation is frozen
// for analysts (our own rule, stated in lib/auth/permissions.ts). Deleting moves
// a derivation to the team's trash: only its owner (an analyst, while it is not
// approved) or a lead may do it; the owner or a lead may restore it; only a lead
// may remove it from the trash for good.
type Context = "draft" | "approved" | "ownDraft" | "ownApproved";
const contexts: Record<Context, { status: "draft" | "approved"; isOwner: boolean }> = {
  draft: { status: "draft", isOwner: false },
  approved: { status: "approved", isOwner: false },
  ownDraft: { status: "draft", isOwner: true },
  ownApproved: { status: "approved", isOwner: true },
};

/** Ownership does not matter: the same roles whoever owns the derivation. */
function anyOwner(draft: MemberRole[], approved: MemberRole[] = draft): Record<Context, MemberRole[]> {
  return { draft, approved, ownDraft: draft, ownApproved: approved };
}

const everyone: MemberRole[] = ["lead", "analyst", "reviewer", "viewer"];
const expected: Record<Action, Record<Context, MemberRole[]>> = {
  "team:read": anyOwner(everyone),
  "team:manage-members": anyOwner(["lead"]),
  "team:invite": anyOwner(["lead"]),
  "team:audit": anyOwner(["lead"]),
  "team:manage-tokens": anyOwner(["lead"]),
  "derivation:read": anyOwner(everyone),
  "derivation:create": anyOwner(["lead", "analyst"]),
  "derivation:edit": anyOwner(["lead", "analyst"], ["lead"]),
  "derivation:rename": anyOwner(["lead", "analyst"], ["lead"]),
  "derivation:delete": { draft: ["lead"], approved: ["lead"], ownDraft: ["lead", "analyst"], ownApproved: ["lead"] },
  "derivation:read-trash": anyOwner(["lead", "analyst"]),
  "derivation:restore": { draft: ["lead"], approved: ["lead"], ownDraft: ["lead", "analyst"], ownApproved: ["lead", "analyst"] },
  "derivation:purge": anyOwner(["lead"]),
  "derivation:approve": anyOwner(["lead"]),
  "derivation:lock": anyOwner(["lead"]),
  "derivation:attach": anyOwner(["lead", "analyst"], ["lead"]),
  "derivation:simulate": anyOwner(["lead", "analyst", "reviewer"]),
  "derivation:request-review": anyOwner(["lead", "analyst"]),
  "derivation:review": anyOwner(["lead", "reviewer"]),
  // Issue 9: everyone reads threads, reviewers comment, viewers only read. Without
  // authorship nobody edits or deletes a comment; resolving is for editors and leads.
  "comment:read": anyOwner(everyone),
  "comment:create": anyOwner(["lead", "analyst", "reviewer"]),
  "comment:edit": anyOwner([]),
  "comment:delete": anyOwner([]),
  "comment:resolve": anyOwner(["lead", "analyst"]),
};

describe("permission table", () => {
  it("has an expectation for every action", () => {
    expect(Object.keys(expected).sort()).toEqual([...actions].sort());
  });

  const cases = actions.flatMap((action) =>
    memberRoles.flatMap((role) =>
      (Object.keys(contexts) as Context[]).map((context) => ({ action, role, context, allowed: expected[action][context].includes(role) })),
    ),
  );

  it.each(cases)("$role on a $context derivation: $action → $allowed", ({ action, role, context, allowed }) => {
    const resource = contexts[context];
    expect(can(role, action, resource)).toBe(allowed);
    if (allowed) expect(() => assertCan(role, action, resource)).not.toThrow();
    else expect(() => assertCan(role, action, resource)).toThrowError(AppError);
  });

  it("treats unknown ownership as not the owner", () => {
    expect(can("analyst", "derivation:delete", { status: "draft" })).toBe(false);
    expect(can("analyst", "derivation:restore")).toBe(false);
    expect(can("lead", "derivation:delete")).toBe(true);
  });

  it("refuses everything without a role (not a member)", () => {
    for (const action of actions) {
      expect(can(null, action)).toBe(false);
      expect(can(undefined, action)).toBe(false);
    }
  });

  it("assertCan throws a forbidden AppError named after the resource", () => {
    try {
      assertCan("viewer", "derivation:create");
      expect.unreachable("viewer must not create derivations");
    } catch (error) {
      expect(error).toBeInstanceOf(AppError);
      expect((error as AppError).code).toBe("forbidden:derivation");
      expect((error as AppError).status).toBe(403);
    }
    expect(() => assertCan("analyst", "team:invite")).toThrowError(expect.objectContaining({ code: "forbidden:team" }));
  });

  it("lists allowed actions for client components", () => {
    expect(allowedActions("viewer")).toEqual(["team:read", "derivation:read", "comment:read"]);
    expect(allowedActions("lead", { isAuthor: true })).toEqual([...actions]);
  });
});

describe("comment threads", () => {
  it("lets every role that comments change only its own words", () => {
    for (const role of ["lead", "analyst", "reviewer"] as const) {
      for (const action of ["comment:edit", "comment:delete"] as const) {
        expect(can(role, action, { isAuthor: true })).toBe(true);
        expect(can(role, action, { isAuthor: false })).toBe(false);
      }
    }
    expect(can("viewer", "comment:edit", { isAuthor: true })).toBe(false);
  });

  it("lets a reviewer resolve only a thread they started; editors and leads any", () => {
    expect(can("reviewer", "comment:resolve", { isAuthor: true })).toBe(true);
    expect(can("reviewer", "comment:resolve", { isAuthor: false })).toBe(false);
    expect(can("analyst", "comment:resolve", { isAuthor: false })).toBe(true);
    expect(can("lead", "comment:resolve", { isAuthor: false })).toBe(true);
    expect(can("viewer", "comment:resolve", { isAuthor: true })).toBe(false);
  });

  it("keeps discussion open on an approved, locked derivation", () => {
    const locked = { status: "approved" as const, locked: true };
    expect(can("reviewer", "comment:create", locked)).toBe(true);
    expect(can("analyst", "comment:resolve", locked)).toBe(true);
    expect(() => assertCan("viewer", "comment:create", locked)).toThrowError(expect.objectContaining({ code: "forbidden:comment" }));
  });
});
