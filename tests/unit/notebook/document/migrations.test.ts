import { readdirSync, readFileSync } from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import {
  DEFAULT_SIMULATION_SETTINGS,
  DOCUMENT_MIGRATIONS,
  DOCUMENT_SCHEMA_VERSION,
  documentToModel,
  modelToDocument,
  parseStoredDocument,
  type DerivationDocument,
} from "@/lib/notebook/document";
import type { Model } from "@/lib/mechanics";

const FIXTURES = path.resolve(import.meta.dirname, "../../../fixtures/documents");
const fixtureNames = readdirSync(FIXTURES).filter((name) => name.endsWith(".json"));
const fixture = <T = Record<string, unknown>>(name: string): T => JSON.parse(readFileSync(path.join(FIXTURES, name), "utf8"));
const versionOf = (name: string) => Number(/^version-(\d+)-/.exec(name)?.[1]);

function parsed(input: unknown, title?: string): DerivationDocument {
  const result = parseStoredDocument(input, { title });
  if (!result.ok) throw new Error(`expected a readable document: ${JSON.stringify(result.issues)}`);
  return result.document;
}

function deepFreeze<T>(value: T): T {
  if (value && typeof value === "object") {
    for (const inner of Object.values(value)) deepFreeze(inner);
    Object.freeze(value);
  }
  return value;
}

describe("the migration list", () => {
  it("has one step per version, from the model file (0) up to the current version", () => {
    expect(DOCUMENT_MIGRATIONS.map((step) => step.from)).toEqual(Array.from({ length: DOCUMENT_SCHEMA_VERSION }, (_, version) => version));
  });

  it("has a stored fixture of every older version", () => {
    const versions = new Set(fixtureNames.map(versionOf));
    for (let version = 0; version < DOCUMENT_SCHEMA_VERSION; version += 1) expect(versions, `no fixture of version ${version}`).toContain(version);
  });

  it.each(fixtureNames)("reads %s as a current document, without touching the stored value, and reads its own output unchanged", (name) => {
    const stored = deepFreeze(fixture(name));
    const document = parsed(stored, "Row title");
    expect(document.schemaVersion).toBe(DOCUMENT_SCHEMA_VERSION);
    expect(parsed(JSON.parse(JSON.stringify(document)))).toEqual(document);
  });

  it.each(DOCUMENT_MIGRATIONS.map((step) => [step.from, step] as const))("step from %i writes the next version", (from, step) => {
    for (const name of fixtureNames.filter((n) => versionOf(n) === from)) {
      expect(step.up(fixture(name)).schemaVersion).toBe(from + 1);
    }
  });
});

describe("version 0: a pre-notebook model file", () => {
  it("becomes the notebook of the model, which converts back to the same model file", () => {
    const model = fixture<Model>("version-0-model-file.json");
    const document = parsed(model);
    expect(document.title).toBe("Jib crane: slewing arm with hanging hook");
    expect(document.cells.map((cell) => cell.kind)).toEqual([
      "coordinates",
      "parameters",
      "inputs",
      "definitions",
      "kinetic",
      "potential",
      "dissipation",
      "forces",
      "equations",
      "conserved",
    ]);
    expect(document.cells.map((cell) => cell.id)).toEqual(["c1", "c2", "c3", "c4", "c5", "c6", "c7", "c8", "c9", "c10"]);
    expect(documentToModel(document)).toEqual(model);
    // The same layout the model-file conversion gives today.
    expect(document.cells.map((cell) => cell.kind)).toEqual(modelToDocument(model).cells.map((cell) => cell.kind));
  });

  it("takes the row's title when the file has none, and `{}` opens as a blank derivation", () => {
    const { title: _title, ...untitled } = fixture("version-0-model-file.json");
    expect(parsed(untitled, "Slewing test").title).toBe("Slewing test");
    const blank = parsed(fixture("version-0-empty.json"), "New rig");
    expect(blank.title).toBe("New rig");
    expect(blank.cells.map((cell) => cell.kind)).toEqual(["coordinates", "parameters", "definitions", "kinetic", "potential", "equations"]);
  });

  it("names the field of a model file it cannot convert", () => {
    const result = parseStoredDocument({ title: "Bad", coordinates: "x", kinetic: 4 });
    expect(result.ok).toBe(false);
    if (result.ok) return;
    expect(result.issues.map((issue) => issue.path).sort()).toEqual(["coordinates", "kinetic"]);
  });
});

describe("version 1: free-form simulation settings", () => {
  const stored = fixture<{ cells: { id: string; kind: string }[] }>("version-1-notebook.json");
  const document = parsed(stored);

  it("keeps every other cell exactly as stored", () => {
    const others = (cells: { id: string; kind: string }[]) => cells.filter((cell) => cell.kind !== "simulation");
    expect(others(document.cells)).toEqual(others(stored.cells));
    expect(document.title).toBe("Trolley with hanging hook block");
  });

  it("types the settings: text kept, numbers as the text they would be typed as, defaults for the rest, unknown keys and unreadable points dropped", () => {
    const simulation = document.cells.find((cell) => cell.id === "s1");
    expect(simulation).toEqual({
      id: "s1",
      collapsed: false,
      title: "Swing after a stop",
      kind: "simulation",
      settings: {
        initialCoordinates: { theta: "0.2", x: "0.5" },
        initialRates: {},
        startTime: "0",
        endTime: "4",
        outputStep: "0.01",
        tolerance: "0.000001",
        inputs: { F: "0" },
        parameterOverrides: {},
        points: [{ x: "xL", y: "yL" }],
      },
    });
    expect(document.cells.find((cell) => cell.id === "s2")).toMatchObject({ settings: DEFAULT_SIMULATION_SETTINGS });
  });
});

describe("a document from a newer Holonomy", () => {
  it("is refused with a message that says so, and is not half-read", () => {
    const newer = { ...parsed(fixture("version-1-notebook.json")), schemaVersion: DOCUMENT_SCHEMA_VERSION + 1 };
    const result = parseStoredDocument(newer);
    expect(result).toEqual({
      ok: false,
      newerVersion: DOCUMENT_SCHEMA_VERSION + 1,
      issues: [{ path: "schemaVersion", message: expect.stringMatching(/newer version of Holonomy.*reads up to/) }],
    });
  });
});
