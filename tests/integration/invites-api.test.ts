import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";

vi.mock("@/lib/auth/session", async () => (await import("./support/session")).sessionModule);

import * as acceptRoute from "@/app/api/invites/[token]/accept/route";
import * as inviteRoute from "@/app/api/teams/[teamId]/invites/[inviteId]/route";
import * as resendRoute from "@/app/api/teams/[teamId]/invites/[inviteId]/resend/route";
import * as invitesRoute from "@/app/api/teams/[teamId]/invites/route";
import { closeDatabase } from "@/db/client";
import { getAuditEventsByTeamId } from "@/db/queries/audit";
import { getOpenInvitesByTeamId } from "@/db/queries/invites";
import { hashToken } from "@/lib/auth/tokens";
import { listCapturedMessages } from "@/lib/mailbox";
import { jsonRequest, makeTeam, makeUser, params, resetDatabase, type TeamFixture } from "./support/fixtures";
import { signInAs, signOut } from "./support/session";

let kestrel: TeamFixture;

beforeAll(async () => {
  await resetDatabase();
  kestrel = await makeTeam("Kestrel invitation desk");
});
beforeEach(() => signOut());
afterAll(async () => {
  await closeDatabase();
});

const teamParams = () => params({ teamId: kestrel.team.id });
const inviteParams = (inviteId: string) => params({ teamId: kestrel.team.id, inviteId });

/** Every invitation link e-mailed to `email` so far, oldest first. */
async function inviteTokensFor(email: string, atLeast: number): Promise<string[]> {
  for (let attempt = 0; attempt < 30; attempt += 1) {
    const tokens = (await listCapturedMessages())
      .filter((m) => m.to.some((to) => to.address === email))
      .map((m) => m.text.match(/https?:\/\/\S+\/invite\/(\S+)/)?.[1])
      .filter((token): token is string => Boolean(token));
    // The mail fake keeps whole seconds: order the links by the database instead, the one that
    // still opens the invitation last.
    if (tokens.length >= atLeast) {
      const open = new Set((await getOpenInvitesByTeamId({ teamId: kestrel.team.id })).map((row) => row.tokenHash));
      return [...new Set(tokens)].sort((a, b) => Number(open.has(hashToken(a))) - Number(open.has(hashToken(b))));
    }
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
  throw new Error(`fewer than ${atLeast} invitation e-mails for ${email}`);
}

async function openInvites(): Promise<{ id: string; email: string; role: string }[]> {
  signInAs(kestrel.members.lead);
  const response = await invitesRoute.GET(jsonRequest("/", "GET"), teamParams());
  expect(response.status).toBe(200);
  return (await response.json()).invites;
}

async function invite(email: string, role: string): Promise<Response> {
  signInAs(kestrel.members.lead);
  return invitesRoute.POST(jsonRequest("/", "POST", { email, role }), teamParams());
}

describe("re-inviting an address", () => {
  it("replaces its open invitation: one row listed, the old link refused, the new one joins with the new role", async () => {
    const colleague = await makeUser("reinvited");
    const first = await invite(colleague.email, "viewer");
    expect(first.status).toBe(201);
    expect((await first.json()).replaced).toBe(0);
    const second = await invite(colleague.email.toUpperCase(), "analyst");
    expect(second.status).toBe(201);
    expect((await second.json()).replaced).toBe(1);

    const listed = (await openInvites()).filter((row) => row.email === colleague.email);
    expect(listed).toHaveLength(1);
    expect(listed[0]!.role).toBe("analyst");

    const [oldToken, newToken] = await inviteTokensFor(colleague.email, 2);
    signInAs(colleague);
    const stale = await acceptRoute.POST(jsonRequest("/", "POST"), params({ token: oldToken! }));
    expect(stale.status).toBe(404);
    expect((await stale.json()).error.message).toMatch(/withdrawn or replaced/);
    const accepted = await acceptRoute.POST(jsonRequest("/", "POST"), params({ token: newToken! }));
    expect(accepted.status).toBe(200);
    expect(await accepted.json()).toEqual({ teamId: kestrel.team.id, role: "analyst" });

    // Accepted: it leaves the list of open invitations.
    expect((await openInvites()).some((row) => row.email === colleague.email)).toBe(false);
    const actions = (await getAuditEventsByTeamId({ teamId: kestrel.team.id })).map((event) => event.action);
    expect(actions).toEqual(expect.arrayContaining(["invite.create", "invite.replace", "invite.accept"]));
  });
});

describe("withdrawing and resending", () => {
  it("withdraws an open invitation: it leaves the list and its link stops working", async () => {
    const contractor = await makeUser("withdrawn");
    expect((await invite(contractor.email, "reviewer")).status).toBe(201);
    const row = (await openInvites()).find((r) => r.email === contractor.email)!;
    const [token] = await inviteTokensFor(contractor.email, 1);

    signInAs(kestrel.members.lead);
    const revoked = await inviteRoute.DELETE(jsonRequest("/", "DELETE"), inviteParams(row.id));
    expect(revoked.status).toBe(204);
    expect((await openInvites()).some((r) => r.id === row.id)).toBe(false);
    const again = await inviteRoute.DELETE(jsonRequest("/", "DELETE"), inviteParams(row.id));
    expect(again.status).toBe(404);

    signInAs(contractor);
    expect((await acceptRoute.POST(jsonRequest("/", "POST"), params({ token: token! }))).status).toBe(404);
    const audit = await getAuditEventsByTeamId({ teamId: kestrel.team.id });
    expect(audit.find((event) => event.action === "invite.revoke" && event.targetId === row.id)?.actorId).toBe(kestrel.members.lead.id);
  });

  it("resends with a new link and a fresh expiry; the earlier link stops working", async () => {
    const auditor = await makeUser("resent");
    expect((await invite(auditor.email, "viewer")).status).toBe(201);
    const row = (await openInvites()).find((r) => r.email === auditor.email)!;

    signInAs(kestrel.members.lead);
    const resent = await resendRoute.POST(jsonRequest("/", "POST"), inviteParams(row.id));
    expect(resent.status).toBe(200);
    const body = await resent.json();
    expect(body.invite.id).toBe(row.id);
    const [oldToken, newToken] = await inviteTokensFor(auditor.email, 2);
    expect(newToken).not.toBe(oldToken);

    signInAs(auditor);
    expect((await acceptRoute.POST(jsonRequest("/", "POST"), params({ token: oldToken! }))).status).toBe(404);
    expect((await acceptRoute.POST(jsonRequest("/", "POST"), params({ token: newToken! }))).status).toBe(200);
    // Nothing open is left to resend.
    signInAs(kestrel.members.lead);
    expect((await resendRoute.POST(jsonRequest("/", "POST"), inviteParams(row.id))).status).toBe(404);
    const actions = (await getAuditEventsByTeamId({ teamId: kestrel.team.id })).filter((event) => event.targetId === row.id).map((event) => event.action);
    expect(actions).toEqual(expect.arrayContaining(["invite.create", "invite.resend", "invite.accept"]));
  });

  it("lets only those who may invite withdraw or resend, within their own team", async () => {
    const guest = await makeUser("guarded");
    expect((await invite(guest.email, "viewer")).status).toBe(201);
    const row = (await openInvites()).find((r) => r.email === guest.email)!;
    signInAs(kestrel.members.analyst);
    expect((await inviteRoute.DELETE(jsonRequest("/", "DELETE"), inviteParams(row.id))).status).toBe(403);
    expect((await resendRoute.POST(jsonRequest("/", "POST"), inviteParams(row.id))).status).toBe(403);

    const other = await makeTeam("Other bench");
    signInAs(other.members.lead);
    expect((await inviteRoute.DELETE(jsonRequest("/", "DELETE"), params({ teamId: other.team.id, inviteId: row.id }))).status).toBe(404);
    expect((await inviteRoute.DELETE(jsonRequest("/", "DELETE"), params({ teamId: other.team.id, inviteId: "not-a-uuid" }))).status).toBe(404);
    signOut();
    expect((await inviteRoute.DELETE(jsonRequest("/", "DELETE"), inviteParams(row.id))).status).toBe(401);
    expect((await openInvites()).some((r) => r.id === row.id)).toBe(true);
  });
});
