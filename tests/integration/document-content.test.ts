// Every path that writes a derivation's content goes through one validation
// (and migration); stored content that cannot be read never answers 500.
import { readFileSync } from "node:fs";
import path from "node:path";
import { renderToStaticMarkup } from "react-dom/server";
import type { ReactElement } from "react";
import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";

vi.mock("@/lib/auth/session", async () => (await import("./support/session")).sessionModule);

import DerivationPage from "@/app/(app)/derivations/[id]/page";
import * as evaluateRoute from "@/app/api/derivations/[id]/evaluate/route";
import * as exportRoute from "@/app/api/derivations/[id]/export/route";
import * as recoveredModelRoute from "@/app/api/derivations/[id]/recovered-model/route";
import * as derivationRoute from "@/app/api/derivations/[id]/route";
import * as importRoute from "@/app/api/teams/[teamId]/derivations/import/route";
import * as teamDerivationsRoute from "@/app/api/teams/[teamId]/derivations/route";
import { closeDatabase } from "@/db/client";
import { getDerivationById } from "@/db/queries/derivations";
import { AppError } from "@/lib/errors";
import type { Model } from "@/lib/mechanics";
import { DEFAULT_SIMULATION_SETTINGS, DOCUMENT_SCHEMA_VERSION, modelToDocument, type DerivationDocument } from "@/lib/notebook/document";
import { closeEnginePool } from "@/lib/workers/engine-pool";
import { storeContentAs } from "./support/content";
import { jsonRequest, makeTeam, params, resetDatabase, storeRawContent, type TeamFixture } from "./support/fixtures";
import { signInAs, signOut } from "./support/session";

const FIXTURES = path.resolve(import.meta.dirname, "../fixtures/documents");
const fixture = (name: string): Record<string, unknown> => JSON.parse(readFileSync(path.join(FIXTURES, name), "utf8"));

let kestrel: TeamFixture;
let otherTeam: TeamFixture;

const bogie: Model = {
  title: "Test bogie on the spring stand",
  coordinates: [{ name: "z", unit: "m" }],
  parameters: [
    { name: "m", unit: "kg", value: 1800 },
    { name: "k", unit: "N/m", value: 2.4e5 },
  ],
  kinetic: "1/2*m*z'^2",
  potential: "1/2*k*z^2",
};

type Json = Record<string, unknown>;

async function post(body: Json) {
  signInAs(kestrel.members.analyst);
  return teamDerivationsRoute.POST(jsonRequest(`/api/teams/${kestrel.team.id}/derivations`, "POST", body), params({ teamId: kestrel.team.id }));
}

async function created(body: Json): Promise<{ id: string; updatedAt: string; content: Json }> {
  const response = await post(body);
  expect(response.status).toBe(201);
  return (await response.json()).derivation;
}

async function total(): Promise<number> {
  signInAs(kestrel.members.analyst);
  const response = await teamDerivationsRoute.GET(jsonRequest(`/api/teams/${kestrel.team.id}/derivations`, "GET"), params({ teamId: kestrel.team.id }));
  return (await response.json()).total;
}

function patch(id: string, body: Json) {
  return derivationRoute.PATCH(jsonRequest(`/api/derivations/${id}`, "PATCH", body), params({ id }));
}

function recovered(id: string) {
  return recoveredModelRoute.GET(jsonRequest(`/api/derivations/${id}/recovered-model`, "GET"), params({ id }));
}

async function errorOf(response: Response, status: number) {
  expect(response.status).toBe(status);
  return (await response.json()).error as { code: string; message: string; fieldErrors: Record<string, string[]> };
}

async function storedContent(id: string) {
  return (await getDerivationById({ id }))!.content;
}

beforeAll(async () => {
  await resetDatabase();
  kestrel = await makeTeam("Kestrel spring stand");
  otherTeam = await makeTeam("Another firm");
}, 60_000);

beforeEach(() => signOut());

afterAll(async () => {
  await closeEnginePool();
  await closeDatabase();
});

describe("writing content", () => {
  it("POST refuses content that is not a notebook document, with paths, and creates nothing", async () => {
    const before = await total();
    const unversioned = await errorOf(await post({ title: "Broken", content: { cells: "not-an-array" } }), 400);
    expect(unversioned.code).toBe("bad_request:validation");
    expect(Object.keys(unversioned.fieldErrors)).toEqual(expect.arrayContaining(["content.schemaVersion", "content.cells"]));

    const badCell = await errorOf(
      await post({ title: "Broken", content: { schemaVersion: DOCUMENT_SCHEMA_VERSION, title: "Broken", cells: [{ id: "a", kind: "teapot" }] } }),
      400,
    );
    expect(Object.keys(badCell.fieldErrors).some((key) => key.startsWith("content.cells[0]"))).toBe(true);

    const newer = await errorOf(
      await post({ title: "From the future", content: { ...modelToDocument(bogie), schemaVersion: DOCUMENT_SCHEMA_VERSION + 1 } }),
      422,
    );
    expect(newer.message).toMatch(/newer version of Holonomy/);
    expect(await total()).toBe(before);
  });

  it("POST migrates an older document and a model file to the current version before storing", async () => {
    const fromV1 = await created({ title: "Trolley", content: fixture("version-1-notebook.json") });
    const stored = (await storedContent(fromV1.id)) as DerivationDocument;
    expect(stored.schemaVersion).toBe(DOCUMENT_SCHEMA_VERSION);
    expect(stored.cells.find((cell) => cell.id === "s2")).toMatchObject({ settings: DEFAULT_SIMULATION_SETTINGS });

    const fromModelFile = await created({ title: "Jib crane", content: fixture("version-0-model-file.json") });
    expect(fromModelFile.content).toMatchObject({ schemaVersion: DOCUMENT_SCHEMA_VERSION, title: "Jib crane: slewing arm with hanging hook" });
  });

  it("PATCH refuses bad content and leaves the stored document as it was", async () => {
    const derivation = await created({ title: "Bogie", content: modelToDocument(bogie) });
    const before = await storedContent(derivation.id);
    const bad = await errorOf(await patch(derivation.id, { content: { schemaVersion: DOCUMENT_SCHEMA_VERSION, title: "Bogie", cells: "not-an-array" } }), 400);
    expect(bad.fieldErrors["content.cells"]).toHaveLength(1);
    const duplicate = { ...modelToDocument(bogie), cells: [...modelToDocument(bogie).cells, { id: "k2", collapsed: false, kind: "kinetic", expr: "0" }] };
    const twice = await errorOf(await patch(derivation.id, { title: "Renamed too", content: duplicate }), 400);
    expect(twice.fieldErrors["content.cells[6].kind"]).toEqual(["more than one kinetic cell"]);
    expect(await storedContent(derivation.id)).toEqual(before);
    expect((await getDerivationById({ id: derivation.id }))!.title).toBe("Bogie");

    const upgraded = await patch(derivation.id, { content: fixture("version-1-notebook.json") });
    expect(upgraded.status).toBe(200);
    expect(((await storedContent(derivation.id)) as DerivationDocument).schemaVersion).toBe(DOCUMENT_SCHEMA_VERSION);
  });

  it("the stored JSON copy refuses bad content (400) and a newer document (422), and stores an older one migrated", async () => {
    const derivation = await created({ title: "Bogie", content: modelToDocument(bogie) });
    const analyst = kestrel.members.analyst;
    const bad = { schemaVersion: DOCUMENT_SCHEMA_VERSION, title: "x", cells: [{ id: "s", collapsed: false, kind: "simulation", settings: { endTime: 4 } }] };
    const refused = await storeContentAs(analyst, derivation.id, bad).catch((error: unknown) => error);
    expect(refused).toBeInstanceOf(AppError);
    expect((refused as AppError).status).toBe(400);
    expect(Object.keys((refused as AppError).fieldErrors ?? {}).every((key) => key.startsWith("document.cells[0].settings"))).toBe(true);
    const newer = await storeContentAs(analyst, derivation.id, { ...modelToDocument(bogie), schemaVersion: DOCUMENT_SCHEMA_VERSION + 1 }).catch(
      (error: unknown) => error,
    );
    expect((newer as AppError).status).toBe(422);

    expect((await storeContentAs(analyst, derivation.id, fixture("version-1-notebook.json"))).status).toBe("saved");
    expect(((await storedContent(derivation.id)) as DerivationDocument).schemaVersion).toBe(DOCUMENT_SCHEMA_VERSION);
  });

  it("import stores every model file the engine accepts as a document that reads back", async () => {
    signInAs(kestrel.members.analyst);
    // A description as long as a model file allows (4000 characters) was once beyond the notebook's
    // own limit, so the import stored a document the notebook page could not open.
    const description = "Bogie frame, wheelsets and ballast. ".repeat(111);
    expect(description.length).toBe(3996);
    const longest = { ...bogie, parameters: [{ ...bogie.parameters[0]!, description }, bogie.parameters[1]!] };
    const response = await importRoute.POST(
      jsonRequest(`/api/teams/${kestrel.team.id}/derivations/import`, "POST", longest),
      params({ teamId: kestrel.team.id }),
    );
    expect(response.status).toBe(201);
    const { derivation } = await response.json();
    const exported = await exportRoute.GET(jsonRequest(`/api/derivations/${derivation.id}/export?format=model`, "GET"), params({ id: derivation.id }));
    expect(JSON.parse(await exported.text())).toEqual(longest);
  });

  it("import refuses a file that is not a model file with 422, and creates nothing", async () => {
    signInAs(kestrel.members.analyst);
    const before = await total();
    const notebook = fixture("version-1-notebook.json");
    const response = await importRoute.POST(
      jsonRequest(`/api/teams/${kestrel.team.id}/derivations/import`, "POST", notebook),
      params({ teamId: kestrel.team.id }),
    );
    expect((await errorOf(response, 422)).code).toBe("unprocessable:model");
    expect(await total()).toBe(before);
  });
});

describe("reading content this version cannot open", () => {
  async function unreadable(content: unknown) {
    const derivation = await created({ title: "Hoist brake test", content: modelToDocument(bogie) });
    await storeRawContent(derivation.id, content);
    return derivation.id;
  }

  const broken = {
    schemaVersion: DOCUMENT_SCHEMA_VERSION,
    title: "Hoist brake test",
    cells: [
      { id: "c", collapsed: false, kind: "coordinates", rows: [{ id: "r1", name: "z", unit: "m", description: "" }] },
      {
        id: "p",
        collapsed: false,
        kind: "parameters",
        rows: [
          { id: "r1", name: "m", unit: "kg", value: "1800", description: "" },
          { id: "r2", name: 7 },
        ],
      },
      { id: "k", collapsed: false, kind: "kinetic", expr: "1/2*m*z'^2" },
      { id: "v", collapsed: false, kind: "potential", expr: ["not text"] },
    ],
  };

  it("downloads the model file recovered from what can be read, to whoever may read the derivation", async () => {
    const id = await unreadable(broken);
    signInAs(kestrel.members.viewer);
    const response = await recovered(id);
    expect(response.status).toBe(200);
    expect(response.headers.get("content-disposition")).toBe('attachment; filename="hoist-brake-test.recovered.model.json"');
    expect(JSON.parse(await response.text())).toEqual({
      title: "Hoist brake test",
      coordinates: [{ name: "z", unit: "m" }],
      parameters: [{ name: "m", unit: "kg", value: 1800 }],
      kinetic: "1/2*m*z'^2",
      potential: "",
    });

    signInAs(otherTeam.members.lead);
    expect((await recovered(id)).status).toBe(404);
    signOut();
    expect((await recovered(id)).status).toBe(401);
  });

  it("answers the API's readers with 422 and the issues, not 500", async () => {
    const id = await unreadable({ cells: "not-an-array" });
    signInAs(kestrel.members.analyst);
    const exported = await errorOf(await exportRoute.GET(jsonRequest(`/api/derivations/${id}/export?format=model`, "GET"), params({ id })), 422);
    expect(exported.code).toBe("unprocessable:derivation");
    const evaluated = await errorOf(await evaluateRoute.POST(jsonRequest(`/api/derivations/${id}/evaluate`, "POST"), params({ id })), 422);
    expect(evaluated.code).toBe("unprocessable:derivation");
  });

  it("renders the page with what is wrong and the recovery download instead of failing", async () => {
    const id = await unreadable(broken);
    signInAs(kestrel.members.reviewer);
    const element = (await DerivationPage({ params: Promise.resolve({ id }) })) as ReactElement;
    const html = renderToStaticMarkup(element);
    expect(html).toContain('data-testid="unreadable-content"');
    expect(html).toContain("cells[1].rows[1]");
    expect(html).toContain("cells[3].expr");
    expect(html).toContain(`href="/api/derivations/${id}/recovered-model"`);

    const newer = await unreadable({ ...modelToDocument(bogie), schemaVersion: DOCUMENT_SCHEMA_VERSION + 1 });
    const newerHtml = renderToStaticMarkup((await DerivationPage({ params: Promise.resolve({ id: newer }) })) as ReactElement);
    expect(newerHtml).toContain("saved by a newer version of Holonomy");
  });

  it("opens content stored by an older version as the migrated notebook", async () => {
    const id = await unreadable(fixture("version-1-notebook.json"));
    signInAs(kestrel.members.analyst);
    // The page is a fragment: the header's team marker, then the notebook.
    const page = (await DerivationPage({ params: Promise.resolve({ id }) })) as ReactElement<{ children: ReactElement[] }>;
    const notebook = page.props.children.find((child) => (child.props as { initialDocument?: unknown }).initialDocument !== undefined) as ReactElement<{
      initialDocument: DerivationDocument;
    }>;
    expect(notebook.props.initialDocument.schemaVersion).toBe(DOCUMENT_SCHEMA_VERSION);
    expect(notebook.props.initialDocument.cells.find((cell) => cell.id === "s1")).toMatchObject({ settings: { endTime: "4", outputStep: "0.01" } });
  });
});
