import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";

vi.mock("@/lib/auth/session", async () => (await import("./support/session")).sessionModule);

import * as exportRoute from "@/app/api/derivations/[id]/export/route";
import * as derivationFilesRoute from "@/app/api/derivations/[id]/files/route";
import * as derivationRoute from "@/app/api/derivations/[id]/route";
import * as runsRoute from "@/app/api/derivations/[id]/runs/route";
import * as fileRoute from "@/app/api/files/[fileId]/route";
import * as teamDerivationsRoute from "@/app/api/teams/[teamId]/derivations/route";
import * as purgeRoute from "@/app/api/teams/[teamId]/trash/[derivationId]/route";
import * as restoreRoute from "@/app/api/teams/[teamId]/trash/[derivationId]/restore/route";
import * as trashRoute from "@/app/api/teams/[teamId]/trash/route";
import { eq } from "drizzle-orm";
import { closeDatabase, db } from "@/db/client";
import { getAuditEventsByTeamId } from "@/db/queries/audit";
import { upsertMembership } from "@/db/queries/teams";
import { derivations, files } from "@/db/schema";
import { TRASH_RETENTION_DAYS } from "@/lib/domain";
import { objectExists } from "@/lib/storage";
import type { SessionUser } from "@/lib/auth/session";
import { formRequest, jsonRequest, makeTeam, makeUser, params, resetDatabase, type TeamFixture } from "./support/fixtures";
import { signInAs, signOut } from "./support/session";

let kestrel: TeamFixture;
let otherTeam: TeamFixture;
let secondAnalyst: SessionUser;

const DAY_MS = 86_400_000;

async function createAs(user: SessionUser, title: string, fixture: TeamFixture = kestrel): Promise<{ id: string; content: Record<string, unknown> }> {
  signInAs(user);
  const response = await teamDerivationsRoute.POST(
    jsonRequest(`/api/teams/${fixture.team.id}/derivations`, "POST", { title, template: "single-pendulum" }),
    params({ teamId: fixture.team.id }),
  );
  expect(response.status).toBe(201);
  return (await response.json()).derivation;
}

function remove(id: string) {
  return derivationRoute.DELETE(jsonRequest(`/api/derivations/${id}`, "DELETE"), params({ id }));
}

function read(id: string) {
  return derivationRoute.GET(jsonRequest(`/api/derivations/${id}`, "GET"), params({ id }));
}

function restore(id: string, teamId = kestrel.team.id) {
  return restoreRoute.POST(jsonRequest(`/api/teams/${teamId}/trash/${id}/restore`, "POST"), params({ teamId, derivationId: id }));
}

function purge(id: string, teamId = kestrel.team.id) {
  return purgeRoute.DELETE(jsonRequest(`/api/teams/${teamId}/trash/${id}`, "DELETE"), params({ teamId, derivationId: id }));
}

async function trashList(teamId = kestrel.team.id) {
  return trashRoute.GET(jsonRequest(`/api/teams/${teamId}/trash`, "GET"), params({ teamId }));
}

async function trashedIds(): Promise<string[]> {
  const response = await trashList();
  expect(response.status).toBe(200);
  return (await response.json()).derivations.map((row: { id: string }) => row.id);
}

async function listedIds(): Promise<string[]> {
  const response = await teamDerivationsRoute.GET(jsonRequest(`/api/teams/${kestrel.team.id}/derivations`, "GET"), params({ teamId: kestrel.team.id }));
  return (await response.json()).derivations.map((row: { id: string }) => row.id);
}

// Gimbal rig G-2 pitch arm data: time in seconds, theta in degrees (invented for these tests).
const measuredCsv = ["t [s], theta [deg]", "0, 20.00", "0.005, 19.96", "0.010, 19.84", ""].join("\n");

async function attachCsv(derivationId: string): Promise<{ id: string; objectKey: string }> {
  const form = new FormData();
  form.set("file", new File([measuredCsv], "g2-run14.csv", { type: "text/csv" }));
  const response = await derivationFilesRoute.POST(await formRequest(`/api/derivations/${derivationId}/files`, form), params({ id: derivationId }));
  expect(response.status).toBe(201);
  const { file } = await response.json();
  const [row] = await db.select({ objectKey: files.objectKey }).from(files).where(eq(files.id, file.id));
  return { id: file.id, objectKey: row!.objectKey };
}

/** Moves a trashed derivation's deletion back in time, as if that many days had passed. */
async function ageInTrash(id: string, days: number): Promise<void> {
  await db
    .update(derivations)
    .set({ deletedAt: new Date(Date.now() - days * DAY_MS) })
    .where(eq(derivations.id, id));
}

beforeAll(async () => {
  await resetDatabase();
  kestrel = await makeTeam("Kestrel trash bay");
  otherTeam = await makeTeam("Another firm");
  secondAnalyst = await makeUser("analyst-two");
  await upsertMembership({ teamId: kestrel.team.id, userId: secondAnalyst.id, role: "analyst" });
});

beforeEach(() => signOut());

afterAll(async () => {
  await closeDatabase();
});

describe("deleting a derivation", () => {
  it("is refused to an analyst for a colleague's derivation, and to reviewers and viewers", async () => {
    const leads = await createAs(kestrel.members.lead, "Gantry trolley, lead's draft");
    const colleagues = await createAs(secondAnalyst, "Gantry trolley, second analyst's draft");
    for (const [user, id] of [
      [kestrel.members.analyst, leads.id],
      [kestrel.members.analyst, colleagues.id],
      [kestrel.members.reviewer, colleagues.id],
      [kestrel.members.viewer, colleagues.id],
    ] as const) {
      signInAs(user);
      const response = await remove(id);
      expect(response.status).toBe(403);
      expect((await response.json()).error.code).toBe("forbidden:derivation");
    }
    signInAs(kestrel.members.lead);
    expect((await read(leads.id)).status).toBe(200);
    expect((await read(colleagues.id)).status).toBe(200);
  });

  it("moves the owner's derivation to the trash: gone from the list, pages and API, shown in the trash", async () => {
    const own = await createAs(kestrel.members.analyst, "Seat rig carriage, scratch");
    const file = await attachCsv(own.id);
    signInAs(kestrel.members.analyst);
    expect((await remove(own.id)).status).toBe(204);

    signInAs(kestrel.members.lead);
    expect((await read(own.id)).status).toBe(404);
    expect(await listedIds()).not.toContain(own.id);
    const id = own.id;
    const answers = [
      await exportRoute.GET(jsonRequest(`/api/derivations/${id}/export?format=model`, "GET"), params({ id })),
      await derivationFilesRoute.GET(jsonRequest(`/api/derivations/${id}/files`, "GET"), params({ id })),
      await runsRoute.GET(jsonRequest(`/api/derivations/${id}/runs`, "GET"), params({ id })),
      await fileRoute.GET(jsonRequest(`/api/files/${file.id}`, "GET"), params({ fileId: file.id })),
      await derivationRoute.PATCH(jsonRequest(`/api/derivations/${id}`, "PATCH", { title: "Renamed in the trash" }), params({ id })),
      await remove(id),
    ];
    expect(answers.map((response) => response.status)).toEqual([404, 404, 404, 404, 404, 404]);

    const trash = await (await trashList()).json();
    expect(trash.retentionDays).toBe(TRASH_RETENTION_DAYS);
    const row = trash.derivations.find((entry: { id: string }) => entry.id === id);
    expect(row).toMatchObject({ title: "Seat rig carriage, scratch", ownerId: kestrel.members.analyst.id, deletedBy: { id: kestrel.members.analyst.id } });
    expect(Date.parse(row.purgeAt) - Date.parse(row.deletedAt)).toBe(TRASH_RETENTION_DAYS * DAY_MS);
    // The stored file is kept while the derivation is in the trash.
    expect(await objectExists({ key: file.objectKey })).toBe(true);

    const audit = await getAuditEventsByTeamId({ teamId: kestrel.team.id });
    expect(audit.some((event) => event.action === "derivation.delete" && event.targetId === id && event.actorId === kestrel.members.analyst.id)).toBe(true);
  });

  it("shows the trash to leads and analysts only, and never another team's", async () => {
    for (const role of ["reviewer", "viewer"] as const) {
      signInAs(kestrel.members[role]);
      expect((await trashList()).status).toBe(403);
    }
    signInAs(otherTeam.members.lead);
    expect((await trashList()).status).toBe(404);
  });
});

describe("restoring from the trash", () => {
  it("lets the owner restore what a lead deleted, exactly as it was, files included", async () => {
    const own = await createAs(kestrel.members.analyst, "Camera gimbal yaw axis");
    const file = await attachCsv(own.id);
    signInAs(kestrel.members.lead);
    expect((await remove(own.id)).status).toBe(204);

    // Not the owner: the second analyst may not restore; another team does not see it.
    signInAs(secondAnalyst);
    expect((await restore(own.id)).status).toBe(403);
    signInAs(otherTeam.members.lead);
    expect((await restore(own.id, otherTeam.team.id)).status).toBe(404);
    expect((await restore(own.id, kestrel.team.id)).status).toBe(404);

    signInAs(kestrel.members.analyst);
    const restored = await restore(own.id);
    expect(restored.status).toBe(200);
    expect((await restored.json()).derivation).toMatchObject({ id: own.id, deletedAt: null, deletedById: null });
    const reread = await (await read(own.id)).json();
    expect(reread.derivation.content).toEqual(own.content);
    expect(await listedIds()).toContain(own.id);
    expect(await trashedIds()).not.toContain(own.id);
    const listed = await (await derivationFilesRoute.GET(jsonRequest(`/api/derivations/${own.id}/files`, "GET"), params({ id: own.id }))).json();
    expect(listed.files.map((f: { id: string }) => f.id)).toEqual([file.id]);
    const download = await fileRoute.GET(jsonRequest(`/api/files/${file.id}`, "GET"), params({ fileId: file.id }));
    expect(await download.text()).toBe(measuredCsv);

    // Restoring twice: it is no longer in the trash.
    expect((await restore(own.id)).status).toBe(404);
    const audit = await getAuditEventsByTeamId({ teamId: kestrel.team.id });
    expect(audit.some((event) => event.action === "derivation.restore" && event.targetId === own.id && event.actorId === kestrel.members.analyst.id)).toBe(
      true,
    );
  });

  it("lets a lead restore anyone's derivation", async () => {
    const own = await createAs(secondAnalyst, "Hoist drum brake");
    signInAs(secondAnalyst);
    expect((await remove(own.id)).status).toBe(204);
    signInAs(kestrel.members.lead);
    expect((await restore(own.id)).status).toBe(200);
    expect((await read(own.id)).status).toBe(200);
  });
});

describe("removing from the trash for good", () => {
  it("is a lead's decision and removes the rows and the stored objects", async () => {
    const own = await createAs(kestrel.members.analyst, "Test rig shaker table");
    const file = await attachCsv(own.id);
    signInAs(kestrel.members.analyst);
    expect((await remove(own.id)).status).toBe(204);
    expect((await purge(own.id)).status).toBe(403);

    signInAs(kestrel.members.lead);
    expect((await purge(own.id)).status).toBe(204);
    expect(await db.select({ id: derivations.id }).from(derivations).where(eq(derivations.id, own.id))).toEqual([]);
    expect(await db.select({ id: files.id }).from(files).where(eq(files.id, file.id))).toEqual([]);
    expect(await objectExists({ key: file.objectKey })).toBe(false);
    expect(await trashedIds()).not.toContain(own.id);
    expect((await restore(own.id)).status).toBe(404);
    expect((await purge(own.id)).status).toBe(404);
    const audit = await getAuditEventsByTeamId({ teamId: kestrel.team.id });
    const event = audit.find((entry) => entry.action === "derivation.purge" && entry.targetId === own.id);
    expect(event).toMatchObject({ actorId: kestrel.members.lead.id, details: { title: "Test rig shaker table", reason: "requested" } });
  });

  it("never removes a live derivation through the trash", async () => {
    const live = await createAs(kestrel.members.analyst, "Trolley rail friction");
    signInAs(kestrel.members.lead);
    expect((await purge(live.id)).status).toBe(404);
    expect((await read(live.id)).status).toBe(200);
  });

  it(`purges on read once ${TRASH_RETENTION_DAYS} days have passed, and not before`, async () => {
    const old = await createAs(kestrel.members.analyst, "Old crane sway study");
    const recent = await createAs(kestrel.members.analyst, "Recent crane sway study");
    const file = await attachCsv(old.id);
    signInAs(kestrel.members.analyst);
    expect((await remove(old.id)).status).toBe(204);
    expect((await remove(recent.id)).status).toBe(204);
    await ageInTrash(old.id, TRASH_RETENTION_DAYS + 0.01);
    await ageInTrash(recent.id, TRASH_RETENTION_DAYS - 0.01);

    // Past its time it can no longer be restored, even before the purge has run.
    expect((await restore(old.id)).status).toBe(404);
    expect(await objectExists({ key: file.objectKey })).toBe(true);

    // Reading the trash removes it for good, with its stored objects.
    const ids = await trashedIds();
    expect(ids).toContain(recent.id);
    expect(ids).not.toContain(old.id);
    expect(await db.select({ id: derivations.id }).from(derivations).where(eq(derivations.id, old.id))).toEqual([]);
    expect(await objectExists({ key: file.objectKey })).toBe(false);
    const audit = await getAuditEventsByTeamId({ teamId: kestrel.team.id });
    expect(audit.find((entry) => entry.action === "derivation.purge" && entry.targetId === old.id)).toMatchObject({
      actorId: null,
      details: { reason: "expired" },
    });

    // The recent one is still restorable.
    expect((await restore(recent.id)).status).toBe(200);
  });
});
