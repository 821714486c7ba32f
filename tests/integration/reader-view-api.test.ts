import { afterAll, afterEach, beforeAll, describe, expect, it, vi } from "vitest";

vi.mock("@/lib/auth/session", async () => (await import("./support/session")).sessionModule);

import * as codeRoute from "@/app/api/derivations/[id]/code/route";
import * as evaluateRoute from "@/app/api/derivations/[id]/evaluate/route";
import * as linearizeRoute from "@/app/api/derivations/[id]/linearize/route";
import * as runsRoute from "@/app/api/derivations/[id]/runs/route";
import * as viewPreferencesRoute from "@/app/api/derivations/[id]/view-preferences/route";
import { closeDatabase } from "@/db/client";
import { createDerivation, getDerivationById } from "@/db/queries/derivations";
import { safetyNote } from "@/lib/domain";
import type { Model } from "@/lib/mechanics";
import { createCell, modelToDocument, type DerivationDocument } from "@/lib/notebook/document";
import { estimatePeriod } from "@/lib/simulate";
import { closeEnginePool, getEnginePool } from "@/lib/workers/engine-pool";
import { closeSimulationPool } from "@/lib/workers/simulation-pool";
import { jsonRequest, makeTeam, params, resetDatabase, type TeamFixture } from "./support/fixtures";
import { signInAs, signOut } from "./support/session";

// Reviewers and viewers check a derivation without changing it: their view
// choices are their own, choosing another equilibrium or language derives
// nothing again, and a reviewer (not a viewer) may store a run of their own.

let kestrel: TeamFixture;
let otherTeam: TeamFixture;

// An arm length unique to this run keeps the first evaluation a cache miss even
// against a database that kept the cache of an earlier run.
const armLength = 0.8 + Math.round(Math.random() * 1e6) / 1e7;

// The tilt arm of a camera gimbal on a test stand, as a point mass on a light arm.
const tiltArm: Model = {
  title: "Gimbal tilt arm on the test stand",
  coordinates: [{ name: "theta", unit: "rad" }],
  parameters: [
    { name: "m", unit: "kg", value: 1.2 },
    { name: "l", unit: "m", value: armLength },
    { name: "g", unit: "m/s^2", value: 9.81 },
  ],
  definitions: [
    { name: "xb", expr: "l*sin(theta)" },
    { name: "yb", expr: "-l*cos(theta)" },
  ],
  kinetic: "1/2*m*(xb'^2 + yb'^2)",
  potential: "m*g*yb",
};

function tiltArmDocument(): DerivationDocument {
  const doc = modelToDocument(
    tiltArm,
    (() => {
      let n = 0;
      return () => `arm${(n += 1)}`;
    })(),
  );
  return {
    ...doc,
    cells: [...doc.cells, createCell("linearization", "lin"), { ...createCell("code-export", "code"), settings: { language: "python" } }],
  };
}

const equationsCellId = tiltArmDocument().cells.find((cell) => cell.kind === "equations")!.id;

async function makeDerivation() {
  const derivation = await createDerivation({
    teamId: kestrel.team.id,
    title: tiltArm.title,
    ownerId: kestrel.members.analyst.id,
    content: tiltArmDocument(),
  });
  return derivation.id;
}

const viewUrl = (id: string) => `/api/derivations/${id}/view-preferences`;
const getView = (id: string) => viewPreferencesRoute.GET(jsonRequest(viewUrl(id), "GET"), params({ id }));
const putView = (id: string, preferences: unknown) => viewPreferencesRoute.PUT(jsonRequest(viewUrl(id), "PUT", { preferences }), params({ id }));

async function storedRow(id: string) {
  const row = await getDerivationById({ id });
  return { content: row!.content, updatedAt: row!.updatedAt.toISOString(), updatedById: row!.updatedById };
}

beforeAll(async () => {
  // The pools run the bundled workers; build them from the current sources.
  await resetDatabase();
  kestrel = await makeTeam("Kestrel review desk");
  otherTeam = await makeTeam("Another firm");
}, 120_000);

afterEach(() => {
  vi.restoreAllMocks();
});

afterAll(async () => {
  signOut();
  await closeEnginePool();
  await closeSimulationPool();
  await closeDatabase();
});

describe("view preferences", () => {
  it("keeps each reader's choices to themselves and leaves the derivation untouched", async () => {
    const id = await makeDerivation();
    const before = await storedRow(id);
    const mine = {
      schemaVersion: 1,
      cells: { [equationsCellId]: { form: "mass-matrix" }, lin: { equilibriumIndex: 1 }, code: { language: "c" } },
      ownSimulation: { initialCoordinates: { theta: "0.3" }, endTime: "4" },
    };

    signInAs(kestrel.members.reviewer);
    expect(await (await getView(id)).json()).toEqual({ preferences: { schemaVersion: 1, cells: {} }, updatedAt: null });
    const saved = await putView(id, mine);
    expect(saved.status).toBe(200);
    expect((await getView(id).then((r) => r.json())).preferences).toEqual(mine);
    // A second choice replaces the first.
    const next = { ...mine, cells: { ...mine.cells, [equationsCellId]: { form: "accelerations" } } };
    expect((await putView(id, next)).status).toBe(200);
    expect((await getView(id).then((r) => r.json())).preferences).toEqual(next);

    // A viewer may keep a view too, and sees none of the reviewer's.
    signInAs(kestrel.members.viewer);
    expect((await getView(id).then((r) => r.json())).preferences).toEqual({ schemaVersion: 1, cells: {} });
    expect((await putView(id, { schemaVersion: 1, cells: { lin: { equilibriumIndex: 0 } } })).status).toBe(200);

    // Nothing of the shared document changed, nor who last edited it.
    expect(await storedRow(id)).toEqual(before);
  });

  it("refuses preferences that are not valid, strangers and anonymous callers", async () => {
    const id = await makeDerivation();
    signInAs(kestrel.members.reviewer);
    const bad = await putView(id, { schemaVersion: 1, cells: { [equationsCellId]: { form: "sideways" } } });
    expect(bad.status).toBe(400);
    const body = await bad.json();
    expect(body.error.code).toBe("bad_request:validation");
    expect(Object.keys(body.error.fieldErrors)).toEqual([`preferences.cells.${equationsCellId}.form`]);
    const huge = await putView(id, { schemaVersion: 1, cells: {}, ownSimulation: { inputs: { u: "t+".repeat(40_000) + "1" } } });
    expect(huge.status).toBe(400);
    expect((await putView(id, { schemaVersion: 1, cells: { lin: { equilibriumIndex: 0 } }, extra: true })).status).toBe(400);

    signInAs(otherTeam.members.lead);
    expect((await getView(id)).status).toBe(404);
    expect((await putView(id, { schemaVersion: 1, cells: {} })).status).toBe(404);
    signOut();
    expect((await getView(id)).status).toBe(401);
  });
});

describe("another equilibrium or language for a reader", () => {
  it("linearizes about another equilibrium and exports another language without deriving again", async () => {
    const id = await makeDerivation();
    signInAs(kestrel.members.reviewer);
    const evaluated = await evaluateRoute.POST(jsonRequest(`/api/derivations/${id}/evaluate`, "POST"), params({ id }));
    expect(evaluated.status).toBe(200);
    const { result } = await evaluated.json();
    const equilibria = result.linearization.equilibria as { values: { theta: number } }[];
    expect(equilibria).toHaveLength(2);
    const hanging = equilibria.findIndex((e) => Math.abs(e.values.theta) < 1e-9);
    const inverted = equilibria.findIndex((e) => Math.abs(Math.abs(e.values.theta) - Math.PI) < 1e-6);
    // The document's setting is the first equilibrium found; the reader picks the other one.
    expect(result.linearization.selected.index).toBe(0);
    const other = 1;

    const tasks = vi.spyOn(getEnginePool(), "run");
    const response = await linearizeRoute.POST(
      jsonRequest(`/api/derivations/${id}/linearize`, "POST", { equilibriumIndex: other, inputValues: {} }),
      params({ id }),
    );
    expect(response.status).toBe(200);
    const { linearization, cached } = await response.json();
    expect(cached).toBe(false);
    expect(linearization.selected.index).toBe(other);
    // Only the equilibrium search and the linearization ran: M and f came from the evaluation.
    expect(tasks.mock.calls.map(([task]) => task).sort()).toEqual(["equilibria", "linearize"]);

    const aboutHanging = other === hanging ? linearization.selected : result.linearization.selected;
    const aboutInverted = other === inverted ? linearization.selected : result.linearization.selected;
    // Small swings of a simple pendulum about the hanging position: f = √(g/l)/(2π), stable;
    // upright, the pendulum is unstable (both facts of the trade).
    expect(aboutHanging.stability).toBe("stable");
    expect(aboutHanging.modes[0].hertz).toBeCloseTo(Math.sqrt(9.81 / armLength) / (2 * Math.PI), 6);
    expect(aboutInverted.stability).toBe("unstable");

    // The same choice again is answered from the cache: no engine task at all.
    tasks.mockClear();
    const again = await (
      await linearizeRoute.POST(jsonRequest(`/api/derivations/${id}/linearize`, "POST", { equilibriumIndex: other, inputValues: {} }), params({ id }))
    ).json();
    expect(again.cached).toBe(true);
    expect(tasks).not.toHaveBeenCalled();

    // A language the document does not export: written from the evaluation's M and f.
    const code = await codeRoute.POST(jsonRequest(`/api/derivations/${id}/code`, "POST", { language: "c" }), params({ id }));
    expect(code.status).toBe(200);
    const exported = await code.json();
    expect(exported.language).toBe("c");
    expect(exported.filename).toMatch(/\.c$/);
    expect(exported.source).toContain(safetyNote.slice(0, 40));
    expect(tasks.mock.calls.map(([task]) => task)).toEqual(["exportCode"]);
    // The document's own language comes straight from the evaluation.
    tasks.mockClear();
    const python = await (await codeRoute.POST(jsonRequest(`/api/derivations/${id}/code`, "POST", { language: "python" }), params({ id }))).json();
    expect(python.source).toBe(result.code.find((entry: { language: string }) => entry.language === "python").source);
    expect(tasks).not.toHaveBeenCalled();
    expect((await codeRoute.POST(jsonRequest(`/api/derivations/${id}/code`, "POST", { language: "cobol" }), params({ id }))).status).toBe(400);
  });
});

describe("simulation by readers", () => {
  it("lets a reviewer store a run with their own initial state and parameters, and leaves the document alone", async () => {
    const id = await makeDerivation();
    const before = await storedRow(id);
    signInAs(kestrel.members.reviewer);
    const release = 0.2;
    const ownLength = 2;
    const response = await runsRoute.POST(
      jsonRequest(`/api/derivations/${id}/runs`, "POST", {
        initialCoordinates: { theta: release },
        parameters: { l: ownLength },
        endTime: 12,
        outputStep: 0.002,
      }),
      params({ id }),
    );
    expect(response.status).toBe(201);
    const { run } = await response.json();
    expect(run).toMatchObject({
      status: "completed",
      createdBy: { id: kestrel.members.reviewer.id },
      settings: { parameters: { l: ownLength }, initialCoordinates: { theta: release } },
    });

    // The run used the reviewer's arm length, not the document's: the period of a pendulum released
    // from θ0 is T = 4√(l/g)·K(k), k = sin(θ0/2), with K(k) = π/2·(1 + k²/4 + 9k⁴/64 + …)
    // (Abramowitz & Stegun, Handbook of Mathematical Functions, 17.3.11).
    const k = Math.sin(release / 2);
    const expected = 4 * Math.sqrt(ownLength / 9.81) * (Math.PI / 2) * (1 + k ** 2 / 4 + (9 * k ** 4) / 64);
    const estimate = estimatePeriod(run.trajectory.times, run.trajectory.coordinates[0], run.trajectory.rates[0], 0);
    expect(Math.abs(estimate!.period / expected - 1)).toBeLessThan(1e-4);

    const list = await (await runsRoute.GET(jsonRequest(`/api/derivations/${id}/runs`, "GET"), params({ id }))).json();
    expect(list.runs.map((stored: { id: string }) => stored.id)).toEqual([run.id]);
    expect(await storedRow(id)).toEqual(before);
  });

  it("lets a viewer neither store a run nor write the document", async () => {
    const id = await makeDerivation();
    const before = await storedRow(id);
    signInAs(kestrel.members.viewer);
    const run = await runsRoute.POST(
      jsonRequest(`/api/derivations/${id}/runs`, "POST", { initialCoordinates: { theta: 0.1 }, endTime: 1, outputStep: 0.01 }),
      params({ id }),
    );
    expect(run.status).toBe(403);
    expect((await run.json()).error.code).toBe("forbidden:derivation");
    // (Writing the document goes through the collaboration server, which gives viewers and reviewers read-only connections.)
    expect(await storedRow(id)).toEqual(before);
    const list = await (await runsRoute.GET(jsonRequest(`/api/derivations/${id}/runs`, "GET"), params({ id }))).json();
    expect(list.runs).toEqual([]);
  });
});
