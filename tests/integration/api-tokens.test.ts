import { sql } from "drizzle-orm";
import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";

vi.mock("@/lib/auth/session", async () => (await import("./support/session")).sessionModule);

import * as tokensRoute from "@/app/api/teams/[teamId]/tokens/route";
import * as tokenRoute from "@/app/api/teams/[teamId]/tokens/[tokenId]/route";
import * as v1DerivationsRoute from "@/app/api/v1/derivations/route";
import { closeDatabase, db } from "@/db/client";
import { getAuditRowsByTeamId } from "@/db/queries/audit";
import { createDerivation } from "@/db/queries/derivations";
import { approveRevision, decideReview, requestReview } from "@/db/queries/reviews";
import type { Derivation } from "@/db/schema";
import { blankDocument } from "@/lib/notebook/document";
import { jsonRequest, makeTeam, params, resetDatabase, type TeamFixture } from "./support/fixtures";
import { signInAs, signOut } from "./support/session";

let kestrel: TeamFixture;
let otherTeam: TeamFixture;

async function createToken(fixture: TeamFixture, body: unknown = { name: "Gimbal firmware build", expiresInDays: 30 }) {
  signInAs(fixture.members.lead);
  const response = await tokensRoute.POST(jsonRequest(`/api/teams/${fixture.team.id}/tokens`, "POST", body), params({ teamId: fixture.team.id }));
  signOut();
  return response;
}

function v1Request(token?: string, address = "192.0.2.10"): Request {
  const headers: Record<string, string> = { "x-forwarded-for": address };
  if (token !== undefined) headers.authorization = `Bearer ${token}`;
  return new Request("http://localhost/api/v1/derivations", { headers });
}

/** Review and approval as the routes run them: the list shows derivations with an approval. */
async function approve(fixture: TeamFixture, derivation: Derivation) {
  const { analyst, reviewer, lead } = fixture.members;
  const request = await requestReview({ derivationId: derivation.id, requesterId: analyst.id, reviewerIds: [reviewer.id], message: "" });
  if (!request.ok) throw new Error(request.reason);
  await decideReview({ derivationId: derivation.id, reviewerId: reviewer.id, decision: "signed_off", comment: "" });
  const approval = await approveRevision({ derivationId: derivation.id, revisionId: request.revision.id, approverId: lead.id });
  if (!approval.ok) throw new Error(approval.reason);
}

beforeAll(async () => {
  await resetDatabase();
  kestrel = await makeTeam("Kestrel token bay");
  otherTeam = await makeTeam("Another firm");
  await approve(
    kestrel,
    await createDerivation({
      teamId: kestrel.team.id,
      title: "Approved gimbal pitch axis",
      content: blankDocument("Approved gimbal pitch axis"),
      ownerId: kestrel.members.analyst.id,
    }),
  );
  await createDerivation({ teamId: kestrel.team.id, title: "Draft trolley", content: blankDocument("Draft trolley"), ownerId: kestrel.members.analyst.id });
  await approve(
    otherTeam,
    await createDerivation({
      teamId: otherTeam.team.id,
      title: "Other firm's approved rig",
      content: blankDocument("Other firm's approved rig"),
      ownerId: otherTeam.members.analyst.id,
    }),
  );
});

beforeEach(() => signOut());

afterAll(async () => {
  await closeDatabase();
});

describe("team API tokens", () => {
  it("are created by leads only, shown once and stored hashed", async () => {
    const response = await createToken(kestrel);
    expect(response.status).toBe(201);
    const { token, secret } = await response.json();
    expect(secret).toMatch(/^hol_[A-Za-z0-9_-]{43}$/);
    expect(token).toMatchObject({ name: "Gimbal firmware build", scope: "read", state: "active", prefix: secret.slice(0, 12), lastUsedAt: null });
    expect(JSON.stringify(token)).not.toContain(secret);
    const stored = await db.execute(sql`select token_hash from api_tokens where id = ${token.id}`);
    expect(stored.rows[0]?.token_hash).toMatch(/^[0-9a-f]{64}$/);
    expect(stored.rows[0]?.token_hash).not.toContain(secret);

    signInAs(kestrel.members.lead);
    const list = await (await tokensRoute.GET(jsonRequest(`/api/teams/${kestrel.team.id}/tokens`, "GET"), params({ teamId: kestrel.team.id }))).json();
    expect(JSON.stringify(list)).not.toContain(secret);
    expect(list.tokens.map((t: { id: string }) => t.id)).toContain(token.id);

    for (const role of ["analyst", "reviewer", "viewer"] as const) {
      signInAs(kestrel.members[role]);
      const refused = await tokensRoute.POST(
        jsonRequest(`/api/teams/${kestrel.team.id}/tokens`, "POST", { name: "x", expiresInDays: null }),
        params({ teamId: kestrel.team.id }),
      );
      expect(refused.status).toBe(403);
    }
    const [created] = await getAuditRowsByTeamId({ teamId: kestrel.team.id, filters: { action: "token.create" } });
    expect(created).toMatchObject({ targetId: token.id, actorId: kestrel.members.lead.id });
  });

  it("refuses a bad name or lifetime with field errors", async () => {
    const response = await createToken(kestrel, { name: " ", expiresInDays: 5000 });
    expect(response.status).toBe(400);
    const { error } = await response.json();
    expect(Object.keys(error.fieldErrors).sort()).toEqual(["expiresInDays", "name"]);
  });

  it("reads the team's approved derivations, notes the use and audits it", async () => {
    const { secret, token } = await (await createToken(kestrel)).json();
    const response = await v1DerivationsRoute.GET(v1Request(secret, "203.0.113.5, 192.0.2.11"), params({}));
    expect(response.status).toBe(200);
    const body = await response.json();
    expect(body.team.id).toBe(kestrel.team.id);
    expect(body.derivations.map((d: { title: string }) => d.title)).toEqual(["Approved gimbal pitch axis"]);
    signInAs(kestrel.members.lead);
    const { tokens } = await (await tokensRoute.GET(jsonRequest(`/api/teams/${kestrel.team.id}/tokens`, "GET"), params({ teamId: kestrel.team.id }))).json();
    expect(tokens.find((t: { id: string }) => t.id === token.id)).toMatchObject({ lastUsedAddress: "192.0.2.11" });
    const [use] = await getAuditRowsByTeamId({ teamId: kestrel.team.id, filters: { action: "api.read" } });
    expect(use).toMatchObject({ targetId: token.id, address: "192.0.2.11", details: { path: "/api/v1/derivations" } });
  });

  it("answers 401 JSON for a missing, tampered, revoked or expired token", async () => {
    expect((await v1DerivationsRoute.GET(v1Request(undefined, "192.0.2.20"), params({}))).status).toBe(401);
    const { secret, token } = await (await createToken(kestrel)).json();
    const tampered = `${secret.slice(0, -1)}${secret.endsWith("A") ? "B" : "A"}`;
    const refused = await v1DerivationsRoute.GET(v1Request(tampered, "192.0.2.20"), params({}));
    expect(refused.status).toBe(401);
    expect((await refused.json()).error).toMatchObject({ code: "unauthorized:token", message: "This API token is not valid." });

    signInAs(kestrel.members.lead);
    const revoked = await tokenRoute.DELETE(
      jsonRequest(`/api/teams/${kestrel.team.id}/tokens/${token.id}`, "DELETE"),
      params({ teamId: kestrel.team.id, tokenId: token.id }),
    );
    expect((await revoked.json()).token.state).toBe("revoked");
    const afterRevoke = await v1DerivationsRoute.GET(v1Request(secret, "192.0.2.20"), params({}));
    expect(afterRevoke.status).toBe(401);
    expect((await afterRevoke.json()).error.message).toMatch(/revoked/);

    const expiring = await (await createToken(kestrel)).json();
    await db.execute(sql`update api_tokens set expires_at = now() - interval '1 minute' where id = ${expiring.token.id}`);
    const expired = await v1DerivationsRoute.GET(v1Request(expiring.secret, "192.0.2.20"), params({}));
    expect(expired.status).toBe(401);
    expect((await expired.json()).error.message).toMatch(/expired/);
  });

  it("keeps each team's tokens to itself", async () => {
    const { secret, token } = await (await createToken(otherTeam)).json();
    const body = await (await v1DerivationsRoute.GET(v1Request(secret), params({}))).json();
    expect(body.derivations.map((d: { title: string }) => d.title)).toEqual(["Other firm's approved rig"]);
    // A lead of another team can neither list nor revoke it.
    signInAs(kestrel.members.lead);
    const response = await tokenRoute.DELETE(
      jsonRequest(`/api/teams/${kestrel.team.id}/tokens/${token.id}`, "DELETE"),
      params({ teamId: kestrel.team.id, tokenId: token.id }),
    );
    expect(response.status).toBe(404);
    expect(
      (
        await tokenRoute.DELETE(
          jsonRequest(`/api/teams/${otherTeam.team.id}/tokens/${token.id}`, "DELETE"),
          params({ teamId: otherTeam.team.id, tokenId: token.id }),
        )
      ).status,
    ).toBe(404);
  });

  it("cuts off an address that keeps guessing tokens", async () => {
    let last = 0;
    for (let attempt = 0; attempt < 31; attempt += 1) last = (await v1DerivationsRoute.GET(v1Request("hol_guess", "198.51.100.99"), params({}))).status;
    expect(last).toBe(429);
  });
});
