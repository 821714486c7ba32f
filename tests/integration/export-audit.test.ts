import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";

vi.mock("@/lib/auth/session", async () => (await import("./support/session")).sessionModule);

import * as codeRoute from "@/app/api/derivations/[id]/code/route";
import * as exportRoute from "@/app/api/derivations/[id]/export/route";
import * as recoveredModelRoute from "@/app/api/derivations/[id]/recovered-model/route";
import * as runCsvRoute from "@/app/api/derivations/[id]/runs/[runId]/csv/route";
import * as runsRoute from "@/app/api/derivations/[id]/runs/route";
import { closeDatabase } from "@/db/client";
import { getAuditRowsByTeamId } from "@/db/queries/audit";
import { createDerivation } from "@/db/queries/derivations";
import type { Model } from "@/lib/mechanics";
import { modelToDocument } from "@/lib/notebook/document";
import { closeEnginePool } from "@/lib/workers/engine-pool";
import { closeSimulationPool } from "@/lib/workers/simulation-pool";
import { jsonRequest, makeTeam, params, resetDatabase, type TeamFixture } from "./support/fixtures";
import { signInAs, signOut } from "./support/session";

let kestrel: TeamFixture;
let derivationId: string;

const hoistModel: Model = {
  title: "Hoist drum, export check",
  coordinates: [{ name: "alpha", unit: "rad" }],
  parameters: [
    { name: "J", unit: "kg*m^2", value: 14 },
    { name: "k", unit: "N*m/rad", value: 9000 },
  ],
  kinetic: "1/2*J*alpha'^2",
  potential: "1/2*k*alpha^2",
};

/** A download as a browser sends it, from an address the audit log keeps. */
function download(url: string): Request {
  return new Request(`http://localhost${url}`, { headers: { "x-forwarded-for": "203.0.113.9" } });
}

async function exportEvents() {
  return getAuditRowsByTeamId({ teamId: kestrel.team.id, filters: { action: "derivation.export" } });
}

beforeAll(async () => {
  // The pools run the bundled workers; build them from the current sources.
  await resetDatabase();
  kestrel = await makeTeam("Kestrel export bay");
  const derivation = await createDerivation({
    teamId: kestrel.team.id,
    title: hoistModel.title,
    ownerId: kestrel.members.analyst.id,
    content: modelToDocument(hoistModel),
  });
  derivationId = derivation.id;
}, 120_000);

beforeEach(() => signOut());

afterAll(async () => {
  signOut();
  await closeSimulationPool();
  await closeEnginePool();
  await closeDatabase();
});

describe("derivation.export in the audit log", () => {
  it.each([
    {
      format: "model",
      call: () => exportRoute.GET(download(`/api/derivations/${derivationId}/export?format=model`), params({ id: derivationId })),
      details: {},
    },
    {
      format: "latex",
      call: () => exportRoute.GET(download(`/api/derivations/${derivationId}/export?format=latex`), params({ id: derivationId })),
      details: {},
    },
    {
      format: "code",
      call: () => codeRoute.GET(download(`/api/derivations/${derivationId}/code?language=julia`), params({ id: derivationId })),
      details: { language: "julia" },
    },
    {
      format: "recovered-model",
      call: () => recoveredModelRoute.GET(download(`/api/derivations/${derivationId}/recovered-model`), params({ id: derivationId })),
      details: {},
    },
  ])("records a $format download with who took it and from where", async ({ format, call, details }) => {
    signInAs(kestrel.members.viewer);
    const before = (await exportEvents()).length;
    const response = await call();
    expect(response.status).toBe(200);
    const events = await exportEvents();
    expect(events).toHaveLength(before + 1);
    expect(events[0]).toMatchObject({
      actorId: kestrel.members.viewer.id,
      address: "203.0.113.9",
      targetType: "derivation",
      targetId: derivationId,
      details: { format, ...details },
    });
  });

  it("records a trajectory CSV download with the run", async () => {
    signInAs(kestrel.members.analyst);
    const created = await runsRoute.POST(
      jsonRequest(`/api/derivations/${derivationId}/runs`, "POST", { initialCoordinates: { alpha: 0.1 }, endTime: 1, outputStep: 0.01 }),
      params({ id: derivationId }),
    );
    expect(created.status).toBe(201);
    const { run } = await created.json();
    signInAs(kestrel.members.reviewer);
    const csv = await runCsvRoute.GET(download(`/api/derivations/${derivationId}/runs/${run.id}/csv`), params({ id: derivationId, runId: run.id }));
    expect(csv.status).toBe(200);
    const [event] = await exportEvents();
    expect(event).toMatchObject({
      actorId: kestrel.members.reviewer.id,
      targetId: derivationId,
      address: "203.0.113.9",
      details: { format: "trajectory-csv", runId: run.id },
    });
  });

  it("records nothing when the export is refused", async () => {
    const before = (await exportEvents()).length;
    signOut();
    expect((await exportRoute.GET(download(`/api/derivations/${derivationId}/export?format=model`), params({ id: derivationId }))).status).toBe(401);
    signInAs(kestrel.members.viewer);
    expect((await codeRoute.GET(download(`/api/derivations/${derivationId}/code?language=fortran`), params({ id: derivationId }))).status).toBe(400);
    expect(await exportEvents()).toHaveLength(before);
  });
});
