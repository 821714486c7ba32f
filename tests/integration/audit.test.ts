import { sql } from "drizzle-orm";
import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";

vi.mock("@/lib/auth/session", async () => (await import("./support/session")).sessionModule);

import * as auditRoute from "@/app/api/teams/[teamId]/audit/route";
import * as teamDerivationsRoute from "@/app/api/teams/[teamId]/derivations/route";
import { closeDatabase, db } from "@/db/client";
import { getAuditRowsByTeamId } from "@/db/queries/audit";
import { authenticate } from "@/lib/auth/authenticate";
import { jsonRequest, makeTeam, params, resetDatabase, testPassword, type TeamFixture } from "./support/fixtures";
import { signInAs, signOut } from "./support/session";

let kestrel: TeamFixture;
let otherTeam: TeamFixture;

function auditRequest(teamId: string, query = ""): Request {
  return jsonRequest(`/api/teams/${teamId}/audit${query}`, "GET");
}

beforeAll(async () => {
  await resetDatabase();
  kestrel = await makeTeam("Kestrel audit bay");
  otherTeam = await makeTeam("Another firm");
});

beforeEach(() => signOut());

afterAll(async () => {
  await closeDatabase();
});

describe("audit log", () => {
  it("records sign-ins and failed sign-ins with the client address, under the member's team", async () => {
    const email = kestrel.members.analyst.email;
    expect((await authenticate({ email, password: "not-the-password", clientAddress: "198.51.100.7" })).status).toBe("invalid");
    expect((await authenticate({ email, password: testPassword, clientAddress: "198.51.100.7" })).status).toBe("ok");
    const rows = await getAuditRowsByTeamId({ teamId: kestrel.team.id, filters: { action: "auth.", actorId: kestrel.members.analyst.id } });
    expect(rows.map((row) => row.action)).toEqual(["auth.sign_in", "auth.sign_in_failed"]);
    expect(rows.every((row) => row.address === "198.51.100.7")).toBe(true);
    expect(rows[1]?.details).toMatchObject({ email, reason: "invalid_credentials" });
    // Another team's lead sees none of it.
    const other = await getAuditRowsByTeamId({ teamId: otherTeam.team.id, filters: { action: "auth." } });
    expect(other.some((row) => row.actorId === kestrel.members.analyst.id)).toBe(false);
  });

  it("records the address a route was called from", async () => {
    signInAs(kestrel.members.analyst);
    const request = new Request(`http://localhost/api/teams/${kestrel.team.id}/derivations`, {
      method: "POST",
      headers: { "content-type": "application/json", "x-forwarded-for": "203.0.113.20, 192.0.2.44" },
      body: JSON.stringify({ title: "Hoist drum brake" }),
    });
    const response = await teamDerivationsRoute.POST(request, params({ teamId: kestrel.team.id }));
    expect(response.status).toBe(201);
    const { derivation } = await response.json();
    const [row] = await getAuditRowsByTeamId({ teamId: kestrel.team.id, filters: { action: "derivation.create" } });
    expect(row).toMatchObject({ targetId: derivation.id, address: "192.0.2.44", actorName: kestrel.members.analyst.name });
  });

  it("is shown to leads only, with filters", async () => {
    signInAs(kestrel.members.lead);
    const all = await auditRoute.GET(auditRequest(kestrel.team.id), params({ teamId: kestrel.team.id }));
    expect(all.status).toBe(200);
    const { events } = await all.json();
    expect(events.map((event: { action: string }) => event.action)).toEqual(expect.arrayContaining(["team.create", "derivation.create", "auth.sign_in"]));

    const filtered = await auditRoute.GET(auditRequest(kestrel.team.id, "?action=derivation."), params({ teamId: kestrel.team.id }));
    const onlyDerivations = (await filtered.json()).events as { action: string }[];
    expect(onlyDerivations.length).toBeGreaterThan(0);
    expect(onlyDerivations.every((event) => event.action.startsWith("derivation."))).toBe(true);

    const tomorrow = new Date(Date.now() + 2 * 24 * 3600 * 1000).toISOString().slice(0, 10);
    const future = await auditRoute.GET(auditRequest(kestrel.team.id, `?from=${tomorrow}`), params({ teamId: kestrel.team.id }));
    expect((await future.json()).events).toEqual([]);

    const bad = await auditRoute.GET(auditRequest(kestrel.team.id, "?from=yesterday"), params({ teamId: kestrel.team.id }));
    expect(bad.status).toBe(400);
    expect((await bad.json()).error.fieldErrors.from[0]).toMatch(/YYYY-MM-DD/);

    for (const role of ["analyst", "reviewer", "viewer"] as const) {
      signInAs(kestrel.members[role]);
      const refused = await auditRoute.GET(auditRequest(kestrel.team.id), params({ teamId: kestrel.team.id }));
      expect(refused.status).toBe(403);
    }
    signInAs(otherTeam.members.lead);
    expect((await auditRoute.GET(auditRequest(kestrel.team.id), params({ teamId: kestrel.team.id }))).status).toBe(404);
    signOut();
    expect((await auditRoute.GET(auditRequest(kestrel.team.id), params({ teamId: kestrel.team.id }))).status).toBe(401);
  });

  it("exports the filtered log as CSV and audits the export", async () => {
    signInAs(kestrel.members.lead);
    const response = await auditRoute.GET(auditRequest(kestrel.team.id, "?action=derivation.create&format=csv"), params({ teamId: kestrel.team.id }));
    expect(response.status).toBe(200);
    expect(response.headers.get("content-type")).toMatch(/^text\/csv/);
    const lines = (await response.text()).trimEnd().split("\r\n");
    expect(lines[0]).toBe("time,action,actor,actor_email,target_type,target_id,address,details");
    expect(lines.slice(1).every((line) => line.split(",")[1] === "derivation.create")).toBe(true);
    expect(lines.length).toBeGreaterThan(1);
    const [exported] = await getAuditRowsByTeamId({ teamId: kestrel.team.id, filters: { action: "audit.export" } });
    expect(exported).toMatchObject({ actorId: kestrel.members.lead.id, details: { rows: lines.length - 1 } });
  });

  it("cannot be changed or deleted by the application's database role", async () => {
    const [row] = await getAuditRowsByTeamId({ teamId: kestrel.team.id, filters: { action: "team.create" } });
    expect(row).toBeDefined();
    // Drizzle wraps the driver's error; PostgreSQL's own message is its cause.
    const refusal = { cause: expect.objectContaining({ message: expect.stringMatching(/audit_log is append-only/) }) };
    await expect(db.execute(sql`update audit_log set action = 'tampered' where id = ${row!.id}`)).rejects.toMatchObject(refusal);
    await expect(db.execute(sql`delete from audit_log where id = ${row!.id}`)).rejects.toMatchObject(refusal);
    await expect(db.execute(sql`truncate table audit_log`)).rejects.toMatchObject(refusal);
    const [still] = await getAuditRowsByTeamId({ teamId: kestrel.team.id, filters: { action: "team.create" } });
    expect(still).toMatchObject({ id: row!.id, action: "team.create" });
  });
});
