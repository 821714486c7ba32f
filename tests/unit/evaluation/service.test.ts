/**
 * The evaluation service (lib/evaluation/service.ts) without PostgreSQL or
 * worker threads: the evaluations table is an in-memory map behind the same
 * query functions, the engine pool runs the engine's tasks in this process and
 * records which ones ran. What is checked is the service's own logic: the
 * cache, the reuse of a derivation for another equilibrium, code in another
 * language from M and f, and engine errors as the API's errors.
 */
import { beforeEach, describe, expect, it, vi } from "vitest";
import { demoDerivations } from "@/db/seed/demo";
import { AppError } from "@/lib/errors";
import { codeOfDocument, engineErrorToAppError, evaluateDocumentCached, evaluateModelCached } from "@/lib/evaluation/service";
import { engineCodeLanguage, settingsOfDocument } from "@/lib/evaluation/evaluate";
import { CODE_LANGUAGES, EngineLimitError, ExpressionError, ModelError } from "@/lib/mechanics";
import { documentToModel, parseStoredDocument, type DerivationDocument } from "@/lib/notebook/document";
import { inProcessRunner } from "./in-process";

const fakes = vi.hoisted(() => ({
  rows: new Map<string, { modelHash: string; engineVersion: string; result: Record<string, unknown>; timings: Record<string, number>; updatedAt: Date }>(),
  tasks: [] as string[],
}));

vi.mock("@/db/queries/evaluations", () => ({
  getEvaluationByModelHash: async ({ modelHash }: { modelHash: string }) => structuredClone(fakes.rows.get(modelHash)) ?? null,
  upsertEvaluationByModelHash: async (row: { modelHash: string; engineVersion: string; result: Record<string, unknown>; timings: Record<string, number> }) => {
    const stored = { ...structuredClone(row), updatedAt: new Date() };
    fakes.rows.set(row.modelHash, stored);
    return stored;
  },
}));
vi.mock("@/lib/workers/worker-file", () => ({ engineVersion: () => "engine-under-test" }));
vi.mock("@/lib/workers/engine-pool", () => ({
  getEnginePool: () => ({
    run<T>(task: string, payload: unknown): Promise<T> {
      fakes.tasks.push(task);
      return inProcessRunner.run<T>(task, payload);
    },
  }),
}));

function demoDocument(titleStart: string): DerivationDocument {
  const derivation = demoDerivations.find((d) => d.title.startsWith(titleStart));
  if (!derivation) throw new Error(`no demo derivation "${titleStart}"`);
  const parsed = parseStoredDocument(derivation.content, { title: derivation.title });
  if (!parsed.ok) throw new Error(`demo derivation "${titleStart}" is not a valid document`);
  return parsed.document;
}

beforeEach(() => {
  fakes.rows.clear();
  fakes.tasks.length = 0;
});

describe("evaluation service", () => {
  it("derives a document once and answers it from the cache afterwards", async () => {
    const document = demoDocument("Gantry crane: trolley");
    const first = await evaluateDocumentCached({ document });
    expect(first.cached).toBe(false);
    expect(first.engineVersion).toBe("engine-under-test");
    expect(fakes.tasks.filter((task) => task === "derive")).toHaveLength(1);
    expect(fakes.rows.has(first.modelHash)).toBe(true);

    fakes.tasks.length = 0;
    const again = await evaluateDocumentCached({ document: structuredClone(document) });
    expect(again.cached).toBe(true);
    expect(again.modelHash).toBe(first.modelHash);
    expect(again.result).toEqual(first.result);
    expect(fakes.tasks).toEqual([]);
  });

  it("keys the cache by what changes a result: a description does not, a parameter value does", async () => {
    const document = demoDocument("Gantry crane: trolley");
    const model = documentToModel(document);
    const settings = settingsOfDocument(document);
    const first = await evaluateModelCached({ model, settings });

    const described = { ...model, parameters: model.parameters.map((p) => ({ ...p, description: "changed wording" })) };
    expect((await evaluateModelCached({ model: described, settings })).modelHash).toBe(first.modelHash);

    const heavier = { ...model, parameters: model.parameters.map((p, i) => (i === 0 ? { ...p, value: (p.value ?? 1) * 2 } : p)) };
    const other = await evaluateModelCached({ model: heavier, settings });
    expect(other.cached).toBe(false);
    expect(other.modelHash).not.toBe(first.modelHash);
  });

  it("answers another equilibrium from the document's derivation: only the analysis runs again", async () => {
    const document = demoDocument("Gantry crane: trolley");
    const own = await evaluateDocumentCached({ document });
    const equilibria = own.result.equilibria ?? [];
    expect(equilibria.length).toBeGreaterThan(1);
    const ownIndex = settingsOfDocument(document).linearization.equilibriumIndex;
    const otherIndex = ownIndex === 0 ? 1 : 0;

    fakes.tasks.length = 0;
    const other = await evaluateDocumentCached({ document, linearization: { equilibriumIndex: otherIndex } });
    expect(other.cached).toBe(false);
    expect(other.modelHash).not.toBe(own.modelHash);
    expect(fakes.tasks).not.toContain("derive");
    expect(fakes.tasks).toContain("linearize");
    // The derivation itself is the document's own; only the linearization is about another point.
    expect(other.result.equations).toEqual(own.result.equations);
    expect(other.result.linearization).not.toEqual(own.result.linearization);

    // Asking for the document's own choice is the document's own evaluation.
    fakes.tasks.length = 0;
    const same = await evaluateDocumentCached({ document, linearization: { equilibriumIndex: ownIndex } });
    expect(same.modelHash).toBe(own.modelHash);
    expect(same.cached).toBe(true);
    expect(fakes.tasks).toEqual([]);
  });

  it("gives code from the evaluation when it holds the language, and exports M and f once otherwise", async () => {
    const document = demoDocument("Gantry crane: trolley");
    const held = settingsOfDocument(document).codeLanguages.map(engineCodeLanguage);
    expect(held.length).toBeGreaterThan(0);
    await evaluateDocumentCached({ document });
    fakes.tasks.length = 0;
    const inDocument = await codeOfDocument({ document, language: held[0]!, fallbackTitle: "Untitled" });
    expect(inDocument.source.length).toBeGreaterThan(0);
    expect(fakes.tasks).toEqual([]);
    const other = CODE_LANGUAGES.find((language) => !held.includes(language))!;

    fakes.tasks.length = 0;
    const exported = await codeOfDocument({ document, language: other, fallbackTitle: "Untitled" });
    expect(exported.language).toBe(other);
    expect(exported.filename).toMatch(/^gantry_crane_trolley/);
    expect(exported.source.length).toBeGreaterThan(0);
    expect(fakes.tasks).toEqual(["exportCode"]);
  });

  it("names the file after the fallback title when the document has none", async () => {
    const document = { ...demoDocument("Seat-suspension"), title: "" };
    const code = await codeOfDocument({ document, language: "c", fallbackTitle: "Rig 4 seat" });
    expect(code.filename).toBe("rig_4_seat.c");
  });

  it("refuses a model the engine cannot read as a 422 naming the field, and stores nothing", async () => {
    const document = demoDocument("Seat-suspension");
    const model = { ...documentToModel(document), kinetic: "1/2*m*z'^2 + undefined_symbol" };
    const refusal = await evaluateModelCached({ model, settings: settingsOfDocument(document) }).catch((error: unknown) => error);
    expect(refusal).toBeInstanceOf(AppError);
    expect((refusal as AppError).status).toBe(422);
    expect(JSON.stringify((refusal as AppError).toJSON())).toContain("kinetic");
    expect(fakes.rows.size).toBe(0);
  });
});

describe("engine errors as API errors", () => {
  it("turns a model or expression problem into a 422 with its field", () => {
    const model = engineErrorToAppError(new ModelError("unknown_symbol", "potential", 'unknown symbol "h"', 7, 1));
    expect(model).toBeInstanceOf(AppError);
    expect((model as AppError).status).toBe(422);
    expect(JSON.stringify((model as AppError).toJSON())).toContain("potential");

    const expression = engineErrorToAppError(new ExpressionError("parse", "unexpected end of input", 4, 1));
    expect((expression as AppError).status).toBe(422);
    expect(JSON.stringify((expression as AppError).toJSON())).toContain("equations");
  });

  it("answers a full queue with 429, a restarting pool with 503 and another limit with 422 naming it", () => {
    expect((engineErrorToAppError(new EngineLimitError("queue", "too many tasks waiting")) as AppError).code).toBe("rate_limited:engine");
    expect((engineErrorToAppError(new EngineLimitError("closed", "pool closed")) as AppError).code).toBe("unavailable:engine");
    const time = engineErrorToAppError(new EngineLimitError("time", "the task took longer than 20 s")) as AppError;
    expect(time.status).toBe(422);
    expect(time.details).toEqual({ limit: "time" });
  });

  it("passes any other error through unchanged", () => {
    const other = new TypeError("not the engine's");
    expect(engineErrorToAppError(other)).toBe(other);
  });
});
