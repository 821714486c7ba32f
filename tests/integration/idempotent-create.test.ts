import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";

vi.mock("@/lib/auth/session", async () => (await import("./support/session")).sessionModule);

import * as derivationRoute from "@/app/api/derivations/[id]/route";
import * as importRoute from "@/app/api/teams/[teamId]/derivations/import/route";
import * as teamDerivationsRoute from "@/app/api/teams/[teamId]/derivations/route";
import { and, count, eq } from "drizzle-orm";
import { closeDatabase, db } from "@/db/client";
import { getAuditEventsByTeamId } from "@/db/queries/audit";
import { derivations, idempotencyKeys } from "@/db/schema";
import type { SessionUser } from "@/lib/auth/session";
import { closeEnginePool } from "@/lib/workers/engine-pool";
import { formRequest, jsonRequest, makeTeam, params, resetDatabase, type TeamFixture } from "./support/fixtures";
import { signInAs, signOut } from "./support/session";

let kestrel: TeamFixture;

function createRequest(body: unknown, key?: string): Request {
  const request = jsonRequest(`/api/teams/${kestrel.team.id}/derivations`, "POST", body);
  if (key !== undefined) request.headers.set("Idempotency-Key", key);
  return request;
}

function create(body: unknown, key?: string) {
  return teamDerivationsRoute.POST(createRequest(body, key), params({ teamId: kestrel.team.id }));
}

async function derivationsTitled(title: string): Promise<number> {
  const [row] = await db
    .select({ total: count() })
    .from(derivations)
    .where(and(eq(derivations.teamId, kestrel.team.id), eq(derivations.title, title)));
  return row?.total ?? 0;
}

async function createEventsFor(id: string): Promise<number> {
  const audit = await getAuditEventsByTeamId({ teamId: kestrel.team.id, limit: 500 });
  return audit.filter((event) => event.action === "derivation.create" && event.targetId === id).length;
}

// A hoist rope modelled as a spring-mass pair (invented scenario for Kestrel's test bay).
const hoistModel = {
  title: "Hoist rope bounce",
  coordinates: [{ name: "z", unit: "m" }],
  parameters: [
    { name: "m", unit: "kg", value: 400 },
    { name: "k", unit: "N/m", value: 2.0e5 },
  ],
  kinetic: "1/2*m*z'^2",
  potential: "1/2*k*z^2",
};

async function importFile(user: SessionUser, key: string, text: string, name = "hoist.model.json") {
  signInAs(user);
  const form = new FormData();
  form.set("file", new File([text], name, { type: "application/json" }));
  const request = await formRequest(`/api/teams/${kestrel.team.id}/derivations/import`, form);
  request.headers.set("Idempotency-Key", key);
  return importRoute.POST(request, params({ teamId: kestrel.team.id }));
}

beforeAll(async () => {
  await resetDatabase();
  kestrel = await makeTeam("Kestrel idempotency bay");
});

beforeEach(() => signOut());

afterAll(async () => {
  await closeEnginePool();
  await closeDatabase();
});

describe("creating with an Idempotency-Key", () => {
  it("answers a repeat with the same derivation and creates only one", async () => {
    signInAs(kestrel.members.analyst);
    const body = { title: "Trolley sway, double click", template: "cart-with-pendulum" };
    const first = await create(body, "0b8f2a52-4f1c-4c7e-9a57-7f2f1f0e6a01");
    const second = await create(body, "0b8f2a52-4f1c-4c7e-9a57-7f2f1f0e6a01");
    expect(first.status).toBe(201);
    expect(second.status).toBe(201);
    expect(first.headers.get("Idempotent-Replayed")).toBeNull();
    expect(second.headers.get("Idempotent-Replayed")).toBe("true");
    const a = (await first.json()).derivation;
    const b = (await second.json()).derivation;
    expect(b).toEqual(a);
    expect(await derivationsTitled("Trolley sway, double click")).toBe(1);
    expect(await createEventsFor(a.id)).toBe(1);
  });

  it("creates one derivation when the same request arrives several times at once", async () => {
    signInAs(kestrel.members.analyst);
    const body = { title: "Gimbal roll, five quick clicks" };
    const answers = await Promise.all(Array.from({ length: 5 }, () => create(body, "five-clicks-key")));
    expect(answers.map((response) => response.status)).toEqual([201, 201, 201, 201, 201]);
    const ids = new Set(await Promise.all(answers.map(async (response) => (await response.json()).derivation.id)));
    expect(ids.size).toBe(1);
    expect(await derivationsTitled("Gimbal roll, five quick clicks")).toBe(1);
    expect(answers.filter((response) => response.headers.get("Idempotent-Replayed") === "true")).toHaveLength(4);
  });

  it("refuses the same key for a different request and keeps nothing", async () => {
    signInAs(kestrel.members.analyst);
    expect((await create({ title: "Seat rig, first take" }, "reused-key")).status).toBe(201);
    const reused = await create({ title: "Seat rig, second take" }, "reused-key");
    expect(reused.status).toBe(422);
    expect((await reused.json()).error).toMatchObject({ code: "unprocessable:api", details: { code: "idempotency_key_reused" } });
    expect(await derivationsTitled("Seat rig, second take")).toBe(0);
  });

  it("keeps keys apart per user, and creates every time without a key", async () => {
    signInAs(kestrel.members.analyst);
    const body = { title: "Shared key, two people" };
    const analysts = await (await create(body, "shared-key")).json();
    signInAs(kestrel.members.lead);
    const leads = await (await create(body, "shared-key")).json();
    expect(leads.derivation.id).not.toBe(analysts.derivation.id);

    expect((await create({ title: "No key, twice" })).status).toBe(201);
    expect((await create({ title: "No key, twice" })).status).toBe(201);
    expect(await derivationsTitled("No key, twice")).toBe(2);
  });

  it("does not record a key when the request is refused, so a corrected retry with it works", async () => {
    signInAs(kestrel.members.analyst);
    const refused = await create({ title: "   " }, "retry-after-fix");
    expect(refused.status).toBe(400);
    expect(await db.select().from(idempotencyKeys).where(eq(idempotencyKeys.key, "retry-after-fix"))).toEqual([]);
    expect((await create({ title: "Fixed title" }, "retry-after-fix")).status).toBe(201);
  });

  it("refuses a malformed key", async () => {
    signInAs(kestrel.members.analyst);
    const response = await create({ title: "Bad key" }, "has spaces in it");
    expect(response.status).toBe(400);
    expect((await response.json()).error.fieldErrors["Idempotency-Key"]).toHaveLength(1);
    expect(await derivationsTitled("Bad key")).toBe(0);
  });

  it("says so when the derivation the key created has been deleted since", async () => {
    signInAs(kestrel.members.analyst);
    const body = { title: "Created, then binned" };
    const { derivation } = await (await create(body, "then-binned")).json();
    expect((await derivationRoute.DELETE(jsonRequest(`/api/derivations/${derivation.id}`, "DELETE"), params({ id: derivation.id }))).status).toBe(204);
    const repeat = await create(body, "then-binned");
    expect(repeat.status).toBe(409);
    expect((await repeat.json()).error.details).toMatchObject({ code: "idempotent_result_deleted", derivationId: derivation.id });
  });
});

describe("importing with an Idempotency-Key", () => {
  it("answers a repeated upload with the first import", async () => {
    const text = JSON.stringify(hoistModel);
    const [first, second] = [await importFile(kestrel.members.analyst, "import-key-1", text), await importFile(kestrel.members.analyst, "import-key-1", text)];
    expect(first.status).toBe(201);
    expect(second.status).toBe(201);
    expect((await second.json()).derivation.id).toBe((await first.json()).derivation.id);
    expect(await derivationsTitled("Hoist rope bounce")).toBe(1);

    const other = await importFile(kestrel.members.analyst, "import-key-1", JSON.stringify({ ...hoistModel, title: "Hoist rope, stiffer" }));
    expect(other.status).toBe(422);
    expect(await derivationsTitled("Hoist rope, stiffer")).toBe(0);
  });

  it("uses one key space per user: the same key on create and import is a different request", async () => {
    signInAs(kestrel.members.analyst);
    expect((await create({ title: "Key used on create" }, "cross-operation")).status).toBe(201);
    const imported = await importFile(kestrel.members.analyst, "cross-operation", JSON.stringify(hoistModel));
    expect(imported.status).toBe(422);
  });
});
