import { Validator as OpenApiValidator } from "@seriousme/openapi-schema-validator";
import Ajv2020 from "ajv/dist/2020";
import addFormats from "ajv-formats";
import { sql } from "drizzle-orm";
import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";

vi.mock("@/lib/auth/session", async () => (await import("./support/session")).sessionModule);

import * as approveRoute from "@/app/api/derivations/[id]/approve/route";
import * as reviewDecisionRoute from "@/app/api/derivations/[id]/review/decision/route";
import * as reviewRoute from "@/app/api/derivations/[id]/review/route";
import * as unlockRoute from "@/app/api/derivations/[id]/unlock/route";
import * as tokensRoute from "@/app/api/teams/[teamId]/tokens/route";
import * as tokenRoute from "@/app/api/teams/[teamId]/tokens/[tokenId]/route";
import * as approvedRoute from "@/app/api/v1/derivations/[id]/approved/route";
import * as listRoute from "@/app/api/v1/derivations/route";
import * as openapiRoute from "@/app/api/v1/openapi.json/route";
import { closeDatabase, db } from "@/db/client";
import { getAuditRowsByTeamId } from "@/db/queries/audit";
import { createDerivation } from "@/db/queries/derivations";
import { rateLimits } from "@/lib/auth/rate-limit";
import type { SessionUser } from "@/lib/auth/session";
import { safetyNote } from "@/lib/domain";
import type { EngineRunner } from "@/lib/evaluation/evaluate";
import { contentHash } from "@/lib/history/content-hash";
import { derivationReport, type Model } from "@/lib/mechanics";
import { CODE_EXPORT_LANGUAGES, modelToDocument, type DerivationDocument } from "@/lib/notebook/document";
import openapi from "@/lib/public-api/openapi.json";
import { approvedDerivation } from "@/lib/public-api/approved";
import { closeEnginePool } from "@/lib/workers/engine-pool";
import { storeContentAs } from "./support/content";
import { jsonRequest, makeTeam, params, resetDatabase, type TeamFixture } from "./support/fixtures";
import { signInAs, signOut } from "./support/session";

let kestrel: TeamFixture;
let otherTeam: TeamFixture;
let secret: string;
let otherSecret: string;

// A stiffness unique to this run, so the engine really runs (no row of an earlier run can answer).
const stiffness = 42_000 + Math.round(Math.random() * 1e6);

function seatModel(title: string, k = stiffness): Model {
  return {
    title,
    coordinates: [{ name: "z", unit: "m", description: "seat travel" }],
    parameters: [
      { name: "m", unit: "kg", value: 92 },
      { name: "k", unit: "N/m", value: k },
      { name: "c", unit: "N*s/m", value: 1300 },
    ],
    inputs: [{ name: "F", unit: "N" }],
    kinetic: "1/2*m*z'^2",
    potential: "1/2*k*z^2",
    dissipation: "1/2*c*z'^2",
    forces: { z: "F" },
  };
}

async function asUser<T>(user: SessionUser, call: () => Promise<T>): Promise<T> {
  signInAs(user);
  try {
    return await call();
  } finally {
    signOut();
  }
}

async function saveAs(user: SessionUser, id: string, document: DerivationDocument) {
  expect((await storeContentAs(user, id, document)).status).toBe("saved");
}

/** The real flow: the analyst's changes, a review request, the reviewer's sign-off, the lead's approval. */
async function approveThroughFlow(fixture: TeamFixture, id: string, document: DerivationDocument) {
  const { analyst, reviewer, lead } = fixture.members;
  await saveAs(analyst, id, document);
  const asked = await asUser(analyst, () =>
    reviewRoute.POST(jsonRequest(`/api/derivations/${id}/review`, "POST", { reviewerIds: [reviewer.id] }), params({ id })),
  );
  expect(asked.status).toBe(201);
  const { revision } = await asked.json();
  const decided = await asUser(reviewer, () =>
    reviewDecisionRoute.POST(jsonRequest(`/api/derivations/${id}/review/decision`, "POST", { decision: "signed_off" }), params({ id })),
  );
  expect(decided.status).toBe(200);
  const approved = await asUser(lead, () =>
    approveRoute.POST(jsonRequest(`/api/derivations/${id}/approve`, "POST", { revisionId: revision.id }), params({ id })),
  );
  expect(approved.status).toBe(200);
  return revision as { id: string; number: number; contentHash: string };
}

async function newDerivation(fixture: TeamFixture, title: string) {
  return createDerivation({ teamId: fixture.team.id, title, ownerId: fixture.members.analyst.id, content: modelToDocument(seatModel(title)) });
}

async function issueToken(fixture: TeamFixture, name = "Seat controller build") {
  const response = await asUser(fixture.members.lead, () =>
    tokensRoute.POST(jsonRequest(`/api/teams/${fixture.team.id}/tokens`, "POST", { name, expiresInDays: 30 }), params({ teamId: fixture.team.id })),
  );
  expect(response.status).toBe(201);
  return (await response.json()) as { secret: string; token: { id: string } };
}

function apiRequest(path: string, token: string | undefined, address = "192.0.2.40"): Request {
  const headers: Record<string, string> = { "x-forwarded-for": address };
  if (token !== undefined) headers.authorization = `Bearer ${token}`;
  return new Request(`http://localhost${path}`, { headers });
}

function getList(token: string | undefined, address?: string) {
  return listRoute.GET(apiRequest("/api/v1/derivations", token, address), params({}));
}

function getApproved(id: string, token: string | undefined, query = "", address?: string) {
  return approvedRoute.GET(apiRequest(`/api/v1/derivations/${id}/approved${query}`, token, address), params({ id }));
}

async function storedResultsOf(revisionId: string): Promise<Record<string, unknown> | null> {
  const { rows } = await db.execute(sql`select results from revisions where id = ${revisionId}`);
  return (rows[0]?.results as Record<string, unknown> | null) ?? null;
}

// Response bodies are checked against the OpenAPI document's own schemas, with Ajv's JSON Schema
// 2020-12 (the dialect of OpenAPI 3.1). The components become $defs of one schema with an id.
const ajv = new Ajv2020({ allErrors: true, strict: true });
addFormats(ajv);
ajv.addSchema({ $id: "openapi", $defs: JSON.parse(JSON.stringify(openapi.components.schemas).replaceAll("#/components/schemas/", "#/$defs/")) });
type Operation = { responses: Record<string, { content?: Record<string, { schema: { $ref?: string } }> }> };
function expectMatchesResponse(path: string, status: number, body: unknown) {
  const operation = (openapi.paths as Record<string, { get: Operation }>)[path]?.get;
  const schema = operation?.responses[String(status)]?.content?.["application/json"]?.schema;
  expect(schema?.$ref, `the description has no ${status} answer for ${path}`).toMatch(/^#\/components\/schemas\//);
  const check = ajv.getSchema(`openapi${schema!.$ref!.replace("#/components/schemas/", "#/$defs/")}`);
  expect(check).toBeDefined();
  const valid = check!(body);
  expect(check!.errors ?? [], `${path} ${status}`).toEqual([]);
  expect(valid).toBe(true);
}

beforeAll(async () => {
  // The pool runs the bundled worker; build it from the current engine sources.
  await resetDatabase();
  kestrel = await makeTeam("Kestrel API bay");
  otherTeam = await makeTeam("Another firm");
  ({ secret } = await issueToken(kestrel));
  ({ secret: otherSecret } = await issueToken(otherTeam, "Other firm's build"));
}, 120_000);

beforeEach(() => signOut());

afterAll(async () => {
  await closeEnginePool();
  await closeDatabase();
});

describe("GET /api/v1/derivations/{id}/approved", () => {
  it("serves the approved revision, its model file and the CLI's equations, derived once and stored", async () => {
    const derivation = await newDerivation(kestrel, "Seat rig, approved");
    const document = modelToDocument(seatModel("Seat rig, approved"));
    const revision = await approveThroughFlow(kestrel, derivation.id, document);

    const response = await getApproved(derivation.id, secret);
    expect(response.status).toBe(200);
    expect(response.headers.get("cache-control")).toBe("no-store");
    const body = await response.json();
    expectMatchesResponse("/derivations/{id}/approved", 200, body);
    expect(body.revision).toMatchObject({
      id: revision.id,
      number: revision.number,
      contentHash: revision.contentHash,
      approvedBy: { id: kestrel.members.lead.id, name: kestrel.members.lead.name },
      unlockedAt: null,
    });
    // Anyone can check the hash: SHA-256 of the RFC 8785 form of the served document.
    expect(contentHash(body.document)).toBe(body.revision.contentHash);
    expect(body.model).toEqual(seatModel("Seat rig, approved"));
    expect(body.safetyNote).toBe(safetyNote);
    expect(body.code).toBeUndefined();

    // The same keys and values as the derivation CLI (which prints derivationReport), less its timing.
    const { timingMs: _timing, ...cli } = derivationReport(body.model);
    expect(body.derived).toEqual(cli);
    expect(Object.keys(body.derived).sort()).toEqual(["conserved", "coordinates", "energy", "equations", "forcing", "massMatrix"]);
    // Mass–spring–damper with an applied force: m z'' + c z' + k z = F (Rao, Mechanical Vibrations, ch. 2,
    // viscously damped single-degree-of-freedom system; section number from memory).
    expect(body.derived.equations).toEqual([{ coordinate: "z", residual: "m*z'' + c*z' + k*z - F", latex: "m\\,\\ddot{z} + c\\,\\dot{z} + k\\,z - F" }]);
    expect(body.derived.massMatrix).toEqual([["m"]]);
    expect(body.derived.forcing).toEqual(["-c*z' - k*z + F"]);
    // Energy function T + V for a natural system (fact of the trade); damping and F remove it from the conserved list.
    expect(body.derived.energy).toBe("m*z'^2/2 + k*z^2/2");
    expect(body.derived.conserved).toEqual([]);

    // Stored on the revision, so the next pull does not run the engine at all.
    const stored = await storedResultsOf(revision.id);
    expect(stored?.apiDerived).toMatchObject({ equations: body.derived.equations, engineVersion: body.engineVersion });
    const refusingRunner: EngineRunner = {
      run: () => Promise.reject(new Error("the engine must not run for a stored revision")),
    };
    const again = await approvedDerivation({ teamId: kestrel.team.id, derivationId: derivation.id, runner: refusingRunner });
    expect(again.stored).toBe(true);
    expect(again.body.derived).toEqual(body.derived);
  });

  it("adds generated code for ?language=, stores it beside the equations, and refuses other languages", async () => {
    const derivation = await newDerivation(kestrel, "Seat rig, firmware");
    const revision = await approveThroughFlow(kestrel, derivation.id, modelToDocument(seatModel("Seat rig, firmware")));

    const response = await getApproved(derivation.id, secret, "?language=c");
    expect(response.status).toBe(200);
    const body = await response.json();
    expectMatchesResponse("/derivations/{id}/approved", 200, body);
    expect(body.code).toMatchObject({ language: "c", filename: "seat_rig_firmware.c" });
    // The generated file carries the safety note in its header.
    expect(body.code.source).toContain("qualified engineer");
    expect(body.code.source).toContain(String(stiffness));

    const python = await (await getApproved(derivation.id, secret, "?language=python")).json();
    expect(python.code).toMatchObject({ language: "python", filename: "seat_rig_firmware.py" });
    const stored = (await storedResultsOf(revision.id)) as { apiCode: Record<string, { source: string }> };
    expect(Object.keys(stored.apiCode).sort()).toEqual(["c", "python"]);
    expect(stored.apiCode.c?.source).toBe(body.code.source);
    const refusingRunner: EngineRunner = { run: () => Promise.reject(new Error("no engine run expected")) };
    const cached = await approvedDerivation({ teamId: kestrel.team.id, derivationId: derivation.id, language: "c", runner: refusingRunner });
    expect(cached.body.code?.source).toBe(body.code.source);

    // Every export language of the document is served.
    for (const language of CODE_EXPORT_LANGUAGES) expect((await getApproved(derivation.id, secret, `?language=${language}`)).status).toBe(200);

    const refused = await getApproved(derivation.id, secret, "?language=fortran");
    expect(refused.status).toBe(400);
    const error = await refused.json();
    expectMatchesResponse("/derivations/{id}/approved", 400, error);
    expect(error.error.fieldErrors.language[0]).toMatch(/Choose language python, typescript, c, julia, octave/);
  });

  it("keeps serving the approved revision after an unlock and edits, until the next approval", async () => {
    const { analyst, lead } = kestrel.members;
    const derivation = await newDerivation(kestrel, "Seat rig, retuned");
    const first = await approveThroughFlow(kestrel, derivation.id, modelToDocument(seatModel("Seat rig, retuned")));
    const before = await (await getApproved(derivation.id, secret, "?language=c")).json();

    const unlocked = await asUser(lead, () =>
      unlockRoute.POST(
        jsonRequest(`/api/derivations/${derivation.id}/unlock`, "POST", { reason: "Stiffer spring fitted for the next rig build." }),
        params({ id: derivation.id }),
      ),
    );
    expect(unlocked.status).toBe(200);
    const edited = modelToDocument(seatModel("Seat rig, retuned", stiffness * 2));
    await saveAs(analyst, derivation.id, edited);

    const during = await getApproved(derivation.id, secret, "?language=c");
    expect(during.status).toBe(200);
    const duringBody = await during.json();
    expect(duringBody.revision).toMatchObject({ id: first.id, contentHash: first.contentHash });
    expect(duringBody.revision.unlockedAt).not.toBeNull();
    expect(duringBody.derivation.status).toBe("draft");
    expect(duringBody.model.parameters.find((p: { name: string }) => p.name === "k").value).toBe(stiffness);
    expect(duringBody.code.source).toBe(before.code.source);
    const listed = (await (await getList(secret)).json()).derivations.find((d: { id: string }) => d.id === derivation.id);
    expect(listed).toMatchObject({ status: "draft", locked: false, approval: { revisionId: first.id, revision: first.number } });

    // A new approval replaces it.
    const second = await approveThroughFlow(kestrel, derivation.id, edited);
    expect(second.id).not.toBe(first.id);
    const after = await (await getApproved(derivation.id, secret, "?language=c")).json();
    expect(after.revision).toMatchObject({ id: second.id, number: second.number, contentHash: contentHash(edited), unlockedAt: null });
    expect(after.model.parameters.find((p: { name: string }) => p.name === "k").value).toBe(stiffness * 2);
    expect(after.code.source).toContain(String(stiffness * 2));
  });

  it("answers 404 JSON for another team's derivation, an unknown id and a derivation never approved", async () => {
    const approved = await newDerivation(kestrel, "Seat rig, kept in house");
    await approveThroughFlow(kestrel, approved.id, modelToDocument(seatModel("Seat rig, kept in house")));
    const draft = await newDerivation(kestrel, "Seat rig, draft only");

    const foreign = await getApproved(approved.id, otherSecret);
    expect(foreign.status).toBe(404);
    const foreignBody = await foreign.json();
    expectMatchesResponse("/derivations/{id}/approved", 404, foreignBody);
    expect(foreignBody.error.code).toBe("not_found:derivation");
    expect((await (await getApproved("not-a-uuid", secret)).json()).error.code).toBe("not_found:derivation");
    expect((await getApproved("00000000-0000-4000-8000-000000000000", secret)).status).toBe(404);
    const never = await getApproved(draft.id, secret);
    expect(never.status).toBe(404);
    expect((await never.json()).error).toMatchObject({ code: "not_found:revision", message: "This derivation has no approved revision yet." });
  });

  it("answers 401 JSON for a missing, tampered, expired or revoked token, and audits accepted use", async () => {
    const derivation = await newDerivation(kestrel, "Seat rig, audited");
    await approveThroughFlow(kestrel, derivation.id, modelToDocument(seatModel("Seat rig, audited")));
    const missing = await getApproved(derivation.id, undefined, "", "192.0.2.41");
    expect(missing.status).toBe(401);
    expectMatchesResponse("/derivations/{id}/approved", 401, await missing.json());
    const tampered = `${secret.slice(0, -1)}${secret.endsWith("A") ? "B" : "A"}`;
    expect((await getApproved(derivation.id, tampered, "", "192.0.2.41")).status).toBe(401);

    const expiring = await issueToken(kestrel, "Short-lived build");
    await db.execute(sql`update api_tokens set expires_at = now() - interval '1 minute' where id = ${expiring.token.id}`);
    const expired = await getApproved(derivation.id, expiring.secret, "", "192.0.2.41");
    expect(expired.status).toBe(401);
    expect((await expired.json()).error.message).toMatch(/expired/);

    const revoking = await issueToken(kestrel, "Retired build");
    await asUser(kestrel.members.lead, () =>
      tokenRoute.DELETE(
        jsonRequest(`/api/teams/${kestrel.team.id}/tokens/${revoking.token.id}`, "DELETE"),
        params({ teamId: kestrel.team.id, tokenId: revoking.token.id }),
      ),
    );
    const revoked = await getApproved(derivation.id, revoking.secret, "", "192.0.2.41");
    expect(revoked.status).toBe(401);
    expect((await revoked.json()).error.message).toMatch(/revoked/);

    const accepted = await getApproved(derivation.id, secret, "?language=julia", "198.51.100.7");
    expect(accepted.status).toBe(200);
    const [use] = await getAuditRowsByTeamId({ teamId: kestrel.team.id, filters: { action: "api.read" } });
    expect(use).toMatchObject({ address: "198.51.100.7", details: { path: `/api/v1/derivations/${derivation.id}/approved`, query: "?language=julia" } });
  });

  it("limits requests per token with 429 JSON", async () => {
    const busy = await issueToken(kestrel, "Build in a loop");
    const derivation = await newDerivation(kestrel, "Seat rig, polled");
    await approveThroughFlow(kestrel, derivation.id, modelToDocument(seatModel("Seat rig, polled")));
    // Fill the window up to the limit directly; 600 real requests would only slow the suite.
    const limit = rateLimits.apiRequestsByToken;
    await db.execute(
      sql`insert into rate_limits (key, points, expire) values (${`${limit.name}:${busy.token.id}`}, ${limit.points - 1}, ${Date.now() + limit.durationSeconds * 1000})`,
    );
    expect((await getApproved(derivation.id, busy.secret)).status).toBe(200);
    const limited = await getApproved(derivation.id, busy.secret);
    expect(limited.status).toBe(429);
    const body = await limited.json();
    expectMatchesResponse("/derivations/{id}/approved", 429, body);
    expect(body.error.code).toBe("rate_limited:token");
  });
});

describe("GET /api/v1/derivations", () => {
  it("lists every derivation of the team that has an approval, with its latest approval and a link", async () => {
    const team = await makeTeam("Kestrel list bay");
    const { secret: teamSecret } = await issueToken(team);
    const older = await newDerivation(team, "Trolley drive, approved first");
    const newer = await newDerivation(team, "Trolley drive, approved second");
    await newDerivation(team, "Trolley drive, draft");
    // Marked approved without an approval (as rows from before the review flow): not listed.
    await createDerivation({
      teamId: team.team.id,
      title: "Marked approved, never reviewed",
      ownerId: team.members.analyst.id,
      content: modelToDocument(seatModel("x")),
      status: "approved",
    });
    const olderRevision = await approveThroughFlow(team, older.id, modelToDocument(seatModel("Trolley drive, approved first")));
    const newerRevision = await approveThroughFlow(team, newer.id, modelToDocument(seatModel("Trolley drive, approved second")));

    const response = await getList(teamSecret);
    expect(response.status).toBe(200);
    const body = await response.json();
    expectMatchesResponse("/derivations", 200, body);
    expect(body.team).toEqual({ id: team.team.id, name: team.team.name });
    expect(body.derivations.map((d: { id: string }) => d.id)).toEqual([newer.id, older.id]);
    expect(body.derivations[1]).toEqual({
      id: older.id,
      title: "Trolley drive, approved first",
      status: "approved",
      locked: true,
      approval: {
        revisionId: olderRevision.id,
        revision: olderRevision.number,
        contentHash: olderRevision.contentHash,
        approvedBy: { id: team.members.lead.id, name: team.members.lead.name },
        approvedAt: expect.any(String),
        unlockedAt: null,
      },
      links: { approved: `/api/v1/derivations/${older.id}/approved` },
    });
    expect(body.derivations[0].approval.revisionId).toBe(newerRevision.id);

    // Another team's token sees none of them.
    const other = await (await getList(otherSecret)).json();
    expect(other.derivations.map((d: { id: string }) => d.id)).not.toContain(older.id);
    expectMatchesResponse("/derivations", 401, await (await getList(undefined, "192.0.2.42")).json());
  });
});

describe("GET /api/v1/openapi.json", () => {
  it("is a valid OpenAPI 3.1 document, served as stored, that states the limits and the safety note", async () => {
    const validator = new OpenApiValidator();
    const result = await validator.validate(openapi);
    expect(result.errors ?? []).toEqual([]);
    expect(result.valid).toBe(true);
    expect(validator.version).toBe("3.1");

    const response = await openapiRoute.GET(new Request("http://localhost/api/v1/openapi.json"), params({}));
    expect(response.status).toBe(200);
    expect(await response.json()).toEqual(openapi);

    const limit = rateLimits.apiRequestsByToken;
    const failures = rateLimits.apiTokenFailuresByAddress;
    expect(openapi.info.description).toContain(`${limit.points} requests in ${limit.durationSeconds / 60} minutes`);
    expect(openapi.info.description).toContain(`${failures.points} invalid tokens in ${failures.durationSeconds / 60} minutes`);
    expect(openapi.info.description).toContain(safetyNote);
    const language = openapi.paths["/derivations/{id}/approved"].get.parameters.find((parameter) => parameter.name === "language");
    expect((language?.schema as { enum?: string[] }).enum).toEqual([...CODE_EXPORT_LANGUAGES]);
  });
});
