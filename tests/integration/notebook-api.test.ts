import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";

vi.mock("@/lib/auth/session", async () => (await import("./support/session")).sessionModule);

import * as codeRoute from "@/app/api/derivations/[id]/code/route";
import * as evaluateRoute from "@/app/api/derivations/[id]/evaluate/route";
import * as exportRoute from "@/app/api/derivations/[id]/export/route";
import * as linearizeRoute from "@/app/api/derivations/[id]/linearize/route";
import * as importRoute from "@/app/api/teams/[teamId]/derivations/import/route";
import * as teamDerivationsRoute from "@/app/api/teams/[teamId]/derivations/route";
import { closeDatabase } from "@/db/client";
import { closeEnginePool } from "@/lib/workers/engine-pool";
import { DOCUMENT_SCHEMA_VERSION, modelToDocument, type DerivationDocument } from "@/lib/notebook/document";
import type { Model } from "@/lib/mechanics";
import { safetyNote } from "@/lib/domain";
import { formRequest, jsonRequest, makeTeam, params, resetDatabase, type TeamFixture } from "./support/fixtures";
import { signInAs, signOut } from "./support/session";

let kestrel: TeamFixture;
let otherTeam: TeamFixture;

// A parameter value unique to this run keeps the first evaluation a cache miss
// even against a database that kept the cache of an earlier run.
const runMass = 90 + Math.round(Math.random() * 1e6) / 1e4;

function seatModel(mass = runMass): Model {
  return {
    title: "Seat rig, vertical",
    coordinates: [{ name: "z", unit: "m" }],
    parameters: [
      { name: "m", unit: "kg", value: mass },
      { name: "k", unit: "N/m", value: 42000 },
      { name: "c", unit: "N*s/m", value: 1300 },
    ],
    kinetic: "1/2*m*z'^2",
    potential: "1/2*k*z^2",
    dissipation: "1/2*c*z'^2",
  };
}

async function create(fixture: TeamFixture, body: Record<string, unknown>, role: "analyst" | "lead" = "analyst") {
  signInAs(fixture.members[role]);
  const response = await teamDerivationsRoute.POST(jsonRequest(`/api/teams/${fixture.team.id}/derivations`, "POST", body), params({ teamId: fixture.team.id }));
  expect(response.status).toBe(201);
  return (await response.json()).derivation as { id: string; updatedAt: string; content: DerivationDocument };
}

async function createWithDocument(fixture: TeamFixture, document: DerivationDocument) {
  return create(fixture, { title: document.title, content: document });
}

function evaluate(id: string, body?: unknown) {
  return evaluateRoute.POST(jsonRequest(`/api/derivations/${id}/evaluate`, "POST", body), params({ id }));
}

function importJson(fixture: TeamFixture, body: unknown) {
  return importRoute.POST(jsonRequest(`/api/teams/${fixture.team.id}/derivations/import`, "POST", body), params({ teamId: fixture.team.id }));
}

async function listDerivations(fixture: TeamFixture, query = "") {
  const response = await teamDerivationsRoute.GET(jsonRequest(`/api/teams/${fixture.team.id}/derivations${query}`, "GET"), params({ teamId: fixture.team.id }));
  expect(response.status).toBe(200);
  return response.json();
}

beforeAll(async () => {
  // The pool runs the bundled worker; build it from the current engine sources.
  await resetDatabase();
  kestrel = await makeTeam("Kestrel rig bay");
  otherTeam = await makeTeam("Another firm");
}, 120_000);

beforeEach(() => signOut());

afterAll(async () => {
  await closeEnginePool();
  await closeDatabase();
});

describe("POST /api/derivations/[id]/evaluate", () => {
  it("answers 401 JSON without a session", async () => {
    const derivation = await createWithDocument(kestrel, modelToDocument(seatModel()));
    signOut();
    const response = await evaluate(derivation.id);
    expect(response.status).toBe(401);
    expect((await response.json()).error.code).toBe("unauthorized:session");
  });

  it("runs the engine on a miss, answers from the cache on the second call, and lets a viewer read", async () => {
    const derivation = await createWithDocument(kestrel, {
      ...modelToDocument(seatModel()),
      cells: [
        ...modelToDocument(seatModel()).cells,
        { id: "lin", kind: "linearization", collapsed: false, settings: { equilibriumIndex: 0, inputValues: {} } },
      ],
    });
    const first = await evaluate(derivation.id);
    expect(first.status).toBe(200);
    const miss = await first.json();
    expect(miss.cached).toBe(false);
    expect(miss.modelHash).toMatch(/^[0-9a-f]{64}$/);
    expect(miss.timings.totalMs).toBeGreaterThan(0);
    expect(miss.result.equations).toHaveLength(1);
    expect(miss.result.equations[0].coordinate).toBe("z");
    // Terms are addressable: the LaTeX wraps each in \htmlData{term=ID} and the ids are listed.
    expect(miss.result.equations[0].terms.length).toBeGreaterThanOrEqual(3);
    for (const term of miss.result.equations[0].terms) expect(miss.result.equations[0].latex).toContain(`\\htmlData{term=${term.id}}`);
    expect(miss.result.accelerations).toHaveLength(1);
    // Undamped natural frequency of a mass on a spring, f = sqrt(k/m)/(2π):
    // W. T. Thomson & M. D. Dahleh, Theory of Vibration with Applications, 5th ed., §2.1.
    const expectedHz = Math.sqrt(42000 / runMass) / (2 * Math.PI);
    expect(miss.result.linearization.selected.modes[0].hertz).toBeCloseTo(expectedHz, 6);
    expect(miss.result.linearization.selected.stability).toBe("stable");

    signInAs(kestrel.members.viewer);
    const started = performance.now();
    const second = await evaluate(derivation.id);
    const elapsed = performance.now() - started;
    expect(second.status).toBe(200);
    const hit = await second.json();
    expect(hit.cached).toBe(true);
    expect(hit.modelHash).toBe(miss.modelHash);
    expect(hit.result.equations).toEqual(miss.result.equations);
    expect(hit.timings).toEqual(miss.timings);
    // A hit is a single indexed row read; a generous bound that still rules out re-deriving.
    expect(elapsed).toBeLessThan(500);
  });

  it("evaluates a posted (unsaved) document and answers 422 with field and column for an unknown symbol", async () => {
    const derivation = await createWithDocument(kestrel, modelToDocument(seatModel()));
    const broken = modelToDocument({ ...seatModel(), kinetic: "1/2*m*z'^2 + q" });
    const response = await evaluate(derivation.id, { document: broken });
    expect(response.status).toBe(422);
    const body = await response.json();
    expect(body.error.code).toBe("unprocessable:model");
    expect(body.error.fieldErrors.kinetic).toHaveLength(1);
    const [diagnostic] = body.error.details.diagnostics;
    // "q" is the 14th character of the kinetic energy text.
    expect(diagnostic).toMatchObject({ field: "kinetic", column: 14, length: 1 });
    expect(diagnostic.message).toMatch(/q/);
    expect(JSON.stringify(body)).not.toMatch(/\bat .*\.ts:\d+/);
  });

  it("answers 422 naming the term for a unit mismatch", async () => {
    const derivation = await createWithDocument(kestrel, modelToDocument({ ...seatModel(), potential: "1/2*k*z^2 + m*z" }));
    const response = await evaluate(derivation.id);
    expect(response.status).toBe(422);
    const body = await response.json();
    expect(body.error.details.diagnostics[0].field).toBe("potential");
    expect(body.error.details.diagnostics[0].code).toMatch(/unit/);
  });

  it("answers 404 for another team's derivation and for a malformed id", async () => {
    const foreign = await createWithDocument(otherTeam, modelToDocument(seatModel()));
    signInAs(kestrel.members.lead);
    expect((await evaluate(foreign.id)).status).toBe(404);
    expect((await evaluate("not-a-uuid")).status).toBe(404);
  });
});

describe("POST /api/derivations/[id]/linearize", () => {
  it("linearizes the crane trolley about the hanging load and gives the pendulum frequency", async () => {
    const derivation = await create(kestrel, { title: "Trolley from template", template: "cart-with-pendulum" });
    signInAs(kestrel.members.reviewer);
    const response = await linearizeRoute.POST(
      jsonRequest(`/api/derivations/${derivation.id}/linearize`, "POST", { equilibriumIndex: 0, inputValues: { F: 0 } }),
      params({ id: derivation.id }),
    );
    expect(response.status).toBe(200);
    const body = await response.json();
    const hanging = body.equilibria.findIndex((e: { q: number[] }) => e.q[1] === 0);
    expect(hanging).toBeGreaterThanOrEqual(0);
    const chosen = await linearizeRoute.POST(
      jsonRequest(`/api/derivations/${derivation.id}/linearize`, "POST", { equilibriumIndex: hanging }),
      params({ id: derivation.id }),
    );
    const { linearization } = await chosen.json();
    // Template values: M = 250 kg, m = 800 kg, l = 6 m. The linearized load swing on a
    // free cart has ω² = (g/l)(1 + m/M) (a fact of the trade for the hanging cart pendulum; from memory).
    const expectedHz = Math.sqrt((9.81 / 6) * (1 + 800 / 250)) / (2 * Math.PI);
    expect(linearization.selected.modes.some((mode: { hertz: number | null }) => mode.hertz !== null && Math.abs(mode.hertz - expectedHz) < 1e-6)).toBe(true);
    expect(linearization.selected.A).toHaveLength(4);
    expect(linearization.selected.B[2]).toHaveLength(1);
  });
});

describe("import and export", () => {
  it("imports a model file, exports it again and the re-import derives the same equations", async () => {
    signInAs(kestrel.members.analyst);
    const imported = await importJson(kestrel, { ...seatModel(77), title: "Imported seat rig" });
    expect(imported.status).toBe(201);
    const { derivation } = await imported.json();
    expect(derivation.title).toBe("Imported seat rig");
    expect(derivation.content.cells.some((cell: { kind: string }) => cell.kind === "coordinates")).toBe(true);

    const exported = await exportRoute.GET(jsonRequest(`/api/derivations/${derivation.id}/export?format=model`, "GET"), params({ id: derivation.id }));
    expect(exported.status).toBe(200);
    expect(exported.headers.get("content-disposition")).toBe('attachment; filename="imported-seat-rig.model.json"');
    const modelFile = JSON.parse(await exported.text());
    expect(modelFile).toMatchObject({ title: "Imported seat rig", kinetic: "1/2*m*z'^2", coordinates: [{ name: "z", unit: "m" }] });

    // Upload the downloaded file as a form, the way the browser does.
    const form = new FormData();
    form.set("file", new File([JSON.stringify(modelFile)], "imported-seat-rig.model.json", { type: "application/json" }));
    form.set("title", "Seat rig, round trip");
    const again = await importRoute.POST(await formRequest(`/api/teams/${kestrel.team.id}/derivations/import`, form), params({ teamId: kestrel.team.id }));
    expect(again.status).toBe(201);
    const copy = (await again.json()).derivation;
    expect(copy.title).toBe("Seat rig, round trip");

    const original = await (await evaluate(derivation.id)).json();
    const roundTrip = await (await evaluate(copy.id)).json();
    expect(roundTrip.result.equations.map((e: { residual: string }) => e.residual)).toEqual(
      original.result.equations.map((e: { residual: string }) => e.residual),
    );
  });

  it("rejects a bad file with the field and the reason and creates nothing", async () => {
    signInAs(kestrel.members.analyst);
    const before = (await listDerivations(kestrel)).total;
    const unknownSymbol = await importJson(kestrel, { ...seatModel(), potential: "1/2*k*z^2 + w" });
    expect(unknownSymbol.status).toBe(422);
    const body = await unknownSymbol.json();
    expect(body.error.details.diagnostics[0]).toMatchObject({ field: "potential", column: 13 });
    expect(body.error.fieldErrors.potential[0]).toMatch(/w/);

    const units = await importJson(kestrel, { ...seatModel(), potential: "1/2*k*z" });
    expect(units.status).toBe(422);
    expect((await units.json()).error.details.diagnostics[0].field).toBe("potential");

    const missing = await importJson(kestrel, { title: "No coordinates", parameters: [], kinetic: "0", potential: "0" });
    expect(missing.status).toBe(422);
    expect((await missing.json()).error.details.diagnostics[0].field).toMatch(/^coordinates/);

    const form = new FormData();
    form.set("file", new File(["{ not json"], "broken.model.json"));
    const notJson = await importRoute.POST(await formRequest(`/api/teams/${kestrel.team.id}/derivations/import`, form), params({ teamId: kestrel.team.id }));
    expect(notJson.status).toBe(422);
    // Malformed JSON is reported with its line and column.
    expect((await notJson.json()).error.fieldErrors.file[0]).toMatch(/line 1, column 3/);

    expect((await listDerivations(kestrel)).total).toBe(before);
  });

  it("refuses an import without a Content-Length (411) or declaring more than the limit (413) before reading it", async () => {
    signInAs(kestrel.members.analyst);
    const url = `http://localhost/api/teams/${kestrel.team.id}/derivations/import`;
    const unsized = await importRoute.POST(
      new Request(url, { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify(seatModel()) }),
      params({ teamId: kestrel.team.id }),
    );
    expect(unsized.status).toBe(411);
    const huge = await importRoute.POST(
      new Request(url, { method: "POST", headers: { "content-type": "application/json", "content-length": String(50 * 1024 * 1024) }, body: "{}" }),
      params({ teamId: kestrel.team.id }),
    );
    expect(huge.status).toBe(413);
    expect((await huge.json()).error.code).toBe("too_large:model");
  });

  it("refuses an import by a viewer", async () => {
    signInAs(kestrel.members.viewer);
    expect((await importJson(kestrel, seatModel())).status).toBe(403);
  });

  it("exports a LaTeX document with balanced environments, the equations and the safety note", async () => {
    const derivation = await create(kestrel, { title: "Trolley for the report", template: "cart-with-pendulum" });
    signInAs(kestrel.members.viewer);
    const response = await exportRoute.GET(jsonRequest(`/api/derivations/${derivation.id}/export?format=latex`, "GET"), params({ id: derivation.id }));
    expect(response.status).toBe(200);
    expect(response.headers.get("content-disposition")).toBe('attachment; filename="trolley-for-the-report.tex"');
    const tex = await response.text();
    expect(tex.startsWith("\\documentclass[11pt]{article}")).toBe(true);
    expect(tex).toContain("\\usepackage{amsmath}");
    expect(tex).not.toContain("\\htmlData");
    // Every \begin{env} is closed by its own \end{env}, in order.
    const stack: string[] = [];
    for (const match of tex.matchAll(/\\(begin|end)\{([^}]+)\}/g)) {
      if (match[1] === "begin") stack.push(match[2]!);
      else expect(stack.pop()).toBe(match[2]);
    }
    expect(stack).toEqual([]);
    // Braces balance outside escaped \{ \}.
    const braces = tex.replace(/\\[{}]/g, "");
    expect(braces.split("{").length).toBe(braces.split("}").length);
    expect(tex.match(/\\begin\{equation\}/g)).toHaveLength(2);
    expect(tex).toContain("\\cos\\left(\\theta\\right)");
    expect(tex).toMatch(/\\begin\{remark\}\s*Derived equations are a model\./);
    expect(tex).toContain(safetyNote.slice(-40));
    expect(tex.trimEnd().endsWith("\\end{document}")).toBe(true);
  });

  it("answers 400 for an unknown export format", async () => {
    const derivation = await createWithDocument(kestrel, modelToDocument(seatModel()));
    const response = await exportRoute.GET(jsonRequest(`/api/derivations/${derivation.id}/export?format=docx`, "GET"), params({ id: derivation.id }));
    expect(response.status).toBe(400);
    expect((await response.json()).error.fieldErrors.format).toBeDefined();
  });
});

describe("GET /api/derivations/[id]/code", () => {
  it("downloads code with the safety note in its header, in every language", async () => {
    const derivation = await create(kestrel, { title: "Two sleds", template: "two-mass-spring-chain" });
    signInAs(kestrel.members.viewer);
    const expectations = {
      python: [".py", "def accelerations"],
      c: [".c", "_accelerations("],
      julia: [".jl", "accelerations("],
      matlab: [".m", "function"],
      typescript: [".ts", "export function accelerations"],
    } as const;
    for (const [language, [extension, marker]] of Object.entries(expectations)) {
      const response = await codeRoute.GET(jsonRequest(`/api/derivations/${derivation.id}/code?language=${language}`, "GET"), params({ id: derivation.id }));
      expect(response.status).toBe(200);
      expect(response.headers.get("content-disposition")).toBe(`attachment; filename="two_sleds${extension}"`);
      const source = await response.text();
      expect(source).toContain(marker);
      expect(source).toContain("under a qualified engineer's responsibility");
    }
    const bad = await codeRoute.GET(jsonRequest(`/api/derivations/${derivation.id}/code?language=cobol`, "GET"), params({ id: derivation.id }));
    expect(bad.status).toBe(400);
  });
});

describe("creation from templates and the dashboard list", () => {
  it("creates blank and template notebooks, checks the chain size, and lists with counts, sorting and pages", async () => {
    const team = await makeTeam("Template bay");
    const blank = await create(team, { title: "Blank one" });
    expect(blank.content.schemaVersion).toBe(DOCUMENT_SCHEMA_VERSION);
    expect(blank.content.cells.map((cell) => cell.kind)).toContain("kinetic");
    const chain = await create(team, { title: "Five-link chain", template: "n-link-chain", links: 5 });
    expect(chain.content.title).toBe("Five-link chain");
    await create(team, { title: "Alias chain", template: "chain", links: 2 });
    await create(team, { title: "Hook block", template: "single-pendulum" });

    signInAs(team.members.analyst);
    const tooLong = await teamDerivationsRoute.POST(
      jsonRequest(`/api/teams/${team.team.id}/derivations`, "POST", { title: "Too long", template: "n-link-chain", links: 9 }),
      params({ teamId: team.team.id }),
    );
    expect(tooLong.status).toBe(400);
    expect((await tooLong.json()).error.fieldErrors.links).toBeDefined();

    const byCoordinates = await listDerivations(team, "?sort=coordinates&direction=desc");
    expect(byCoordinates.total).toBe(4);
    expect(byCoordinates.derivations.map((d: { title: string; coordinatesCount: number }) => [d.title, d.coordinatesCount])).toEqual([
      ["Five-link chain", 5],
      ["Alias chain", 2],
      ["Hook block", 1],
      ["Blank one", 0],
    ]);
    expect(byCoordinates.derivations[0].updatedByName).toBe(team.members.analyst.name);

    const page2 = await listDerivations(team, "?sort=title&direction=asc&page=2&pageSize=3");
    expect(page2).toMatchObject({ page: 2, pageSize: 3, total: 4 });
    expect(page2.derivations.map((d: { title: string }) => d.title)).toEqual(["Hook block"]);

    const searched = await listDerivations(team, "?search=chain&sort=title");
    expect(searched.derivations.map((d: { title: string }) => d.title)).toEqual(["Alias chain", "Five-link chain"]);
    expect(searched.total).toBe(2);
  });
});
