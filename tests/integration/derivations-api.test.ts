import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";

vi.mock("@/lib/auth/session", async () => (await import("./support/session")).sessionModule);

import * as derivationRoute from "@/app/api/derivations/[id]/route";
import * as teamDerivationsRoute from "@/app/api/teams/[teamId]/derivations/route";
import { closeDatabase } from "@/db/client";
import { getAuditEventsByTeamId } from "@/db/queries/audit";
import { jsonRequest, makeTeam, params, resetDatabase, type TeamFixture } from "./support/fixtures";
import { signInAs, signOut } from "./support/session";

let kestrel: TeamFixture;
let otherTeam: TeamFixture;

async function createAs(fixture: TeamFixture, role: keyof TeamFixture["members"], title: string) {
  signInAs(fixture.members[role]);
  return teamDerivationsRoute.POST(jsonRequest(`/api/teams/${fixture.team.id}/derivations`, "POST", { title }), params({ teamId: fixture.team.id }));
}

beforeAll(async () => {
  await resetDatabase();
  kestrel = await makeTeam("Kestrel rig bay");
  otherTeam = await makeTeam("Another firm");
});

beforeEach(() => signOut());

afterAll(async () => {
  await closeDatabase();
});

describe("derivations API", () => {
  it("answers 401 JSON without a session", async () => {
    const response = await teamDerivationsRoute.GET(jsonRequest(`/api/teams/${kestrel.team.id}/derivations`, "GET"), params({ teamId: kestrel.team.id }));
    expect(response.status).toBe(401);
    expect(await response.json()).toEqual({ error: { code: "unauthorized:session", message: "Sign in to continue." } });
  });

  it("lets an analyst create a derivation and records it in the audit log", async () => {
    const response = await createAs(kestrel, "analyst", "Trolley with swinging load");
    expect(response.status).toBe(201);
    const { derivation } = await response.json();
    expect(derivation).toMatchObject({ title: "Trolley with swinging load", status: "draft", ownerId: kestrel.members.analyst.id, teamId: kestrel.team.id });
    const audit = await getAuditEventsByTeamId({ teamId: kestrel.team.id });
    expect(audit.some((event) => event.action === "derivation.create" && event.targetId === derivation.id)).toBe(true);
  });

  it("refuses a viewer and a reviewer with 403", async () => {
    for (const role of ["viewer", "reviewer"] as const) {
      const response = await createAs(kestrel, role, "Not allowed");
      expect(response.status).toBe(403);
      expect((await response.json()).error.code).toBe("forbidden:derivation");
    }
  });

  it("returns field errors for a blank title and keeps nothing", async () => {
    const response = await createAs(kestrel, "analyst", "   ");
    expect(response.status).toBe(400);
    const body = await response.json();
    expect(body.error.code).toBe("bad_request:validation");
    expect(body.error.fieldErrors.title).toEqual(["Give the derivation a title."]);
  });

  it("lists, filters and searches a team's derivations", async () => {
    await createAs(kestrel, "lead", "Seat rig damper sweep");
    signInAs(kestrel.members.viewer);
    const all = await (
      await teamDerivationsRoute.GET(jsonRequest(`/api/teams/${kestrel.team.id}/derivations`, "GET"), params({ teamId: kestrel.team.id }))
    ).json();
    expect(all.derivations.map((d: { title: string }) => d.title).sort()).toEqual(["Seat rig damper sweep", "Trolley with swinging load"]);
    const mine = await (
      await teamDerivationsRoute.GET(
        jsonRequest(`/api/teams/${kestrel.team.id}/derivations?ownerId=${kestrel.members.lead.id}&search=damper`, "GET"),
        params({ teamId: kestrel.team.id }),
      )
    ).json();
    expect(mine.derivations).toHaveLength(1);
    expect(mine.derivations[0]).toMatchObject({ title: "Seat rig damper sweep", ownerName: kestrel.members.lead.name });
    const approved = await (
      await teamDerivationsRoute.GET(jsonRequest(`/api/teams/${kestrel.team.id}/derivations?status=approved`, "GET"), params({ teamId: kestrel.team.id }))
    ).json();
    expect(approved.derivations).toEqual([]);
  });

  it("treats another team's derivation as not found", async () => {
    const created = await (await createAs(otherTeam, "analyst", "Their private model")).json();
    signInAs(kestrel.members.lead);
    const read = await derivationRoute.GET(jsonRequest(`/api/derivations/${created.derivation.id}`, "GET"), params({ id: created.derivation.id }));
    expect(read.status).toBe(404);
    expect((await read.json()).error.code).toBe("not_found:derivation");
    const list = await teamDerivationsRoute.GET(jsonRequest(`/api/teams/${otherTeam.team.id}/derivations`, "GET"), params({ teamId: otherTeam.team.id }));
    expect(list.status).toBe(404);
    const remove = await derivationRoute.DELETE(jsonRequest(`/api/derivations/${created.derivation.id}`, "DELETE"), params({ id: created.derivation.id }));
    expect(remove.status).toBe(404);
  });

  it("renames by PATCH but never changes the status there (review, approve and unlock do)", async () => {
    const { derivation } = await (await createAs(kestrel, "analyst", "Gimbal pitch axis")).json();
    const patch = (body: unknown) => derivationRoute.PATCH(jsonRequest(`/api/derivations/${derivation.id}`, "PATCH", body), params({ id: derivation.id }));

    signInAs(kestrel.members.analyst);
    expect((await patch({ title: "Gimbal pitch axis, offset payload" })).status).toBe(200);
    signInAs(kestrel.members.lead);
    const approval = await patch({ status: "approved" });
    expect(approval.status).toBe(400);
    expect((await approval.json()).error.fieldErrors.status[0]).toMatch(/through review/);

    signInAs(kestrel.members.viewer);
    const read = await (await derivationRoute.GET(jsonRequest(`/api/derivations/${derivation.id}`, "GET"), params({ id: derivation.id }))).json();
    expect(read.derivation).toMatchObject({ title: "Gimbal pitch axis, offset payload", status: "draft", updatedById: kestrel.members.analyst.id });
  });

  it("deletes by permission and then answers 404", async () => {
    const { derivation } = await (await createAs(kestrel, "analyst", "Scratch model")).json();
    signInAs(kestrel.members.reviewer);
    expect((await derivationRoute.DELETE(jsonRequest(`/api/derivations/${derivation.id}`, "DELETE"), params({ id: derivation.id }))).status).toBe(403);
    signInAs(kestrel.members.analyst);
    expect((await derivationRoute.DELETE(jsonRequest(`/api/derivations/${derivation.id}`, "DELETE"), params({ id: derivation.id }))).status).toBe(204);
    expect((await derivationRoute.GET(jsonRequest(`/api/derivations/${derivation.id}`, "GET"), params({ id: derivation.id }))).status).toBe(404);
  });

  it("answers malformed JSON and malformed ids without crashing", async () => {
    signInAs(kestrel.members.analyst);
    const badJson = await teamDerivationsRoute.POST(
      jsonRequest(`/api/teams/${kestrel.team.id}/derivations`, "POST", "{title:"),
      params({ teamId: kestrel.team.id }),
    );
    expect(badJson.status).toBe(400);
    expect((await badJson.json()).error.code).toBe("bad_request:validation");
    const badId = await derivationRoute.GET(jsonRequest("/api/derivations/../../etc", "GET"), params({ id: "../../etc" }));
    expect(badId.status).toBe(404);
  });
});
