import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";

vi.mock("@/lib/auth/session", async () => (await import("./support/session")).sessionModule);

import * as acceptRoute from "@/app/api/invites/[token]/accept/route";
import * as derivationsRoute from "@/app/api/teams/[teamId]/derivations/route";
import * as importRoute from "@/app/api/teams/[teamId]/derivations/import/route";
import * as invitesRoute from "@/app/api/teams/[teamId]/invites/route";
import * as memberRoute from "@/app/api/teams/[teamId]/members/[userId]/route";
import * as membersRoute from "@/app/api/teams/[teamId]/members/route";
import * as teamsRoute from "@/app/api/teams/route";
import { closeDatabase } from "@/db/client";
import { createInvite } from "@/db/queries/invites";
import { createToken } from "@/lib/auth/tokens";
import { listCapturedMessages } from "@/lib/mailbox";
import { jsonRequest, makeTeam, makeUser, params, resetDatabase, type TeamFixture } from "./support/fixtures";
import { signInAs, signOut } from "./support/session";

let kestrel: TeamFixture;

beforeAll(async () => {
  await resetDatabase();
  kestrel = await makeTeam("Kestrel invites");
});
beforeEach(() => signOut());
afterAll(async () => {
  await closeDatabase();
});

const teamParams = () => params({ teamId: kestrel.team.id });

async function inviteLinkFor(email: string): Promise<string> {
  // The mail fake receives the message over SMTP; poll briefly for it.
  for (let attempt = 0; attempt < 20; attempt += 1) {
    const message = (await listCapturedMessages()).find((m) => m.to.some((to) => to.address === email));
    const link = message?.text.match(/https?:\/\/\S+\/invite\/(\S+)/);
    if (link?.[1]) return link[1];
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
  throw new Error(`no invitation e-mail for ${email}`);
}

describe("teams", () => {
  it("creates a team with its creator as lead", async () => {
    const founder = await makeUser("founder");
    signInAs(founder);
    const response = await teamsRoute.POST(jsonRequest("/api/teams", "POST", { name: "Gimbal works" }), params({}));
    expect(response.status).toBe(201);
    const list = await (await teamsRoute.GET(jsonRequest("/api/teams", "GET"), params({}))).json();
    expect(list.teams).toHaveLength(1);
    expect(list.teams[0]).toMatchObject({ name: "Gimbal works", role: "lead", memberCount: 1 });
  });

  it("lists members for every role", async () => {
    signInAs(kestrel.members.viewer);
    const { members } = await (await membersRoute.GET(jsonRequest("/", "GET"), teamParams())).json();
    expect(members.map((m: { role: string }) => m.role).sort()).toEqual(["analyst", "lead", "reviewer", "viewer"]);
  });
});

describe("invitations", () => {
  it("e-mails an invitation that the invited colleague accepts once", async () => {
    const colleague = await makeUser("colleague");
    signInAs(kestrel.members.lead);
    const response = await invitesRoute.POST(jsonRequest("/", "POST", { email: colleague.email, role: "reviewer" }), teamParams());
    expect(response.status).toBe(201);
    const token = await inviteLinkFor(colleague.email);

    signInAs(colleague);
    const accepted = await acceptRoute.POST(jsonRequest("/", "POST"), params({ token }));
    expect(accepted.status).toBe(200);
    expect(await accepted.json()).toEqual({ teamId: kestrel.team.id, role: "reviewer" });

    const again = await acceptRoute.POST(jsonRequest("/", "POST"), params({ token }));
    expect(again.status).toBe(409);
    expect((await again.json()).error.message).toMatch(/already been used/);
  });

  it("refuses an expired invitation and one meant for someone else", async () => {
    const stranger = await makeUser("stranger");
    const expired = createToken();
    await createInvite({
      teamId: kestrel.team.id,
      email: stranger.email,
      role: "viewer",
      tokenHash: expired.tokenHash,
      invitedById: kestrel.members.lead.id,
      expiresAt: new Date(Date.now() - 1000),
    });
    signInAs(stranger);
    const late = await acceptRoute.POST(jsonRequest("/", "POST"), params({ token: expired.token }));
    expect(late.status).toBe(409);
    expect((await late.json()).error.message).toMatch(/expired/);

    const misdirected = createToken();
    await createInvite({
      teamId: kestrel.team.id,
      email: "someone-else@it.holonomy.test",
      role: "viewer",
      tokenHash: misdirected.tokenHash,
      invitedById: kestrel.members.lead.id,
      expiresAt: new Date(Date.now() + 60_000),
    });
    const wrongPerson = await acceptRoute.POST(jsonRequest("/", "POST"), params({ token: misdirected.token }));
    expect(wrongPerson.status).toBe(403);

    const unknown = await acceptRoute.POST(jsonRequest("/", "POST"), params({ token: "not-a-token" }));
    expect(unknown.status).toBe(404);
  });

  it("only lets leads invite, and not existing members", async () => {
    signInAs(kestrel.members.analyst);
    expect((await invitesRoute.POST(jsonRequest("/", "POST", { email: "new@it.holonomy.test", role: "viewer" }), teamParams())).status).toBe(403);
    signInAs(kestrel.members.lead);
    const duplicate = await invitesRoute.POST(jsonRequest("/", "POST", { email: kestrel.members.viewer.email, role: "viewer" }), teamParams());
    expect(duplicate.status).toBe(409);
    expect((await duplicate.json()).error.fieldErrors.email).toHaveLength(1);
    const invalid = await invitesRoute.POST(jsonRequest("/", "POST", { email: "nope", role: "boss" }), teamParams());
    expect(invalid.status).toBe(400);
    expect(Object.keys((await invalid.json()).error.fieldErrors).sort()).toEqual(["email", "role"]);
  });
});

describe("roles and removal", () => {
  it("lets a lead change roles but never leaves the team without a lead", async () => {
    const team = await makeTeam("Single lead team");
    const memberParams = (userId: string) => params({ teamId: team.team.id, userId });
    signInAs(team.members.lead);

    const demoteSelf = await memberRoute.PATCH(jsonRequest("/", "PATCH", { role: "analyst" }), memberParams(team.members.lead.id));
    expect(demoteSelf.status).toBe(409);
    expect((await demoteSelf.json()).error.message).toMatch(/at least one lead/);
    const removeSelf = await memberRoute.DELETE(jsonRequest("/", "DELETE"), memberParams(team.members.lead.id));
    expect(removeSelf.status).toBe(409);

    const promote = await memberRoute.PATCH(jsonRequest("/", "PATCH", { role: "lead" }), memberParams(team.members.analyst.id));
    expect(promote.status).toBe(200);
    const demoteNow = await memberRoute.PATCH(jsonRequest("/", "PATCH", { role: "viewer" }), memberParams(team.members.lead.id));
    expect(demoteNow.status).toBe(200);

    signInAs(team.members.analyst);
    const remove = await memberRoute.DELETE(jsonRequest("/", "DELETE"), memberParams(team.members.reviewer.id));
    expect(remove.status).toBe(204);
    const { members } = await (await membersRoute.GET(jsonRequest("/", "GET"), params({ teamId: team.team.id }))).json();
    expect(members.map((m: { userId: string; role: string }) => [m.userId, m.role]).sort()).toEqual(
      [
        [team.members.lead.id, "viewer"],
        [team.members.analyst.id, "lead"],
        [team.members.viewer.id, "viewer"],
      ].sort(),
    );
  });

  it("refuses role changes by non-leads and hides other teams", async () => {
    const memberParams = (userId: string) => params({ teamId: kestrel.team.id, userId });
    signInAs(kestrel.members.reviewer);
    expect((await memberRoute.PATCH(jsonRequest("/", "PATCH", { role: "lead" }), memberParams(kestrel.members.reviewer.id))).status).toBe(403);
    const outsider = await makeUser("outsider");
    signInAs(outsider);
    expect((await membersRoute.GET(jsonRequest("/", "GET"), params({ teamId: kestrel.team.id }))).status).toBe(404);
  });

  it("answers malformed team and member ids like missing ones (404), as every other route does", async () => {
    signInAs(kestrel.members.lead);
    const bad = "not-a-uuid";
    const members = await membersRoute.GET(jsonRequest("/", "GET"), params({ teamId: bad }));
    expect(members.status).toBe(404);
    expect((await members.json()).error.code).toBe("not_found:team");
    const badTeam = await memberRoute.PATCH(jsonRequest("/", "PATCH", { role: "viewer" }), params({ teamId: bad, userId: kestrel.members.viewer.id }));
    expect(badTeam.status).toBe(404);
    const badMember = await memberRoute.DELETE(jsonRequest("/", "DELETE"), params({ teamId: kestrel.team.id, userId: bad }));
    expect(badMember.status).toBe(404);
    expect((await badMember.json()).error.code).toBe("not_found:member");
    const imported = await importRoute.POST(jsonRequest("/", "POST", { model: {} }), params({ teamId: bad }));
    expect(imported.status).toBe(404);
    expect((await invitesRoute.GET(jsonRequest("/", "GET"), params({ teamId: bad }))).status).toBe(404);
    expect((await derivationsRoute.GET(jsonRequest("/", "GET"), params({ teamId: bad }))).status).toBe(404);
  });
});
