import { describe, expect, it } from "vitest";
import { actions, allowedActions, assertCan, can, type Action } from "@/lib/auth/permissions";
import { memberRoles, type MemberRole } from "@/lib/domain";
import { AppError } from "@/lib/errors";

// The product's role model (issue 2 / DESIGN.md): lead manages members and roles,
// approves and locks; analyst creates and edits derivations and comments;
// reviewer reads and comments; viewer reads. An approved derivation is frozen
// for analysts (our own rule, stated in lib/auth/permissions.ts).
const expected: Record<Action, { draft: MemberRole[]; approved: MemberRole[] }> = {
  "team:read": { draft: ["lead", "analyst", "reviewer", "viewer"], approved: ["lead", "analyst", "reviewer", "viewer"] },
  "team:manage-members": { draft: ["lead"], approved: ["lead"] },
  "team:invite": { draft: ["lead"], approved: ["lead"] },
  "team:audit": { draft: ["lead"], approved: ["lead"] },
  "team:manage-tokens": { draft: ["lead"], approved: ["lead"] },
  "derivation:read": { draft: ["lead", "analyst", "reviewer", "viewer"], approved: ["lead", "analyst", "reviewer", "viewer"] },
  "derivation:create": { draft: ["lead", "analyst"], approved: ["lead", "analyst"] },
  "derivation:edit": { draft: ["lead", "analyst"], approved: ["lead"] },
  "derivation:rename": { draft: ["lead", "analyst"], approved: ["lead"] },
  "derivation:delete": { draft: ["lead", "analyst"], approved: ["lead"] },
  "derivation:comment": { draft: ["lead", "analyst", "reviewer"], approved: ["lead", "analyst", "reviewer"] },
  "derivation:approve": { draft: ["lead"], approved: ["lead"] },
  "derivation:lock": { draft: ["lead"], approved: ["lead"] },
  "derivation:attach": { draft: ["lead", "analyst"], approved: ["lead"] },
  "derivation:simulate": { draft: ["lead", "analyst", "reviewer"], approved: ["lead", "analyst", "reviewer"] },
  "derivation:request-review": { draft: ["lead", "analyst"], approved: ["lead", "analyst"] },
  "derivation:review": { draft: ["lead", "reviewer"], approved: ["lead", "reviewer"] },
};

describe("permission table", () => {
  it("has an expectation for every action", () => {
    expect(Object.keys(expected).sort()).toEqual([...actions].sort());
  });

  const cases = actions.flatMap((action) =>
    memberRoles.flatMap((role) =>
      (["draft", "approved"] as const).map((status) => ({ action, role, status, allowed: expected[action][status].includes(role) })),
    ),
  );

  it.each(cases)("$role on a $status derivation: $action → $allowed", ({ action, role, status, allowed }) => {
    expect(can(role, action, { status })).toBe(allowed);
    if (allowed) expect(() => assertCan(role, action, { status })).not.toThrow();
    else expect(() => assertCan(role, action, { status })).toThrowError(AppError);
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
    expect(allowedActions("viewer")).toEqual(["team:read", "derivation:read"]);
    expect(allowedActions("lead")).toEqual([...actions]);
  });
});
