import path from "node:path";
import fc from "fast-check";
import { afterAll, describe, expect, it } from "vitest";
import { deriveModel, EngineLimitError, ExpressionError, ModelError, readModelFile, type Model } from "@/lib/mechanics";
import { EnginePool } from "@/lib/mechanics/worker";
import { adversarialExpression, anyText, describeThrown, fuzzSettings, grammarExpression, timed } from "./support";

// Small models keep the symbolic work short; the budget is well inside the
// server's engine time limit (20 s), so a hang shows as a failed assertion.
const DERIVE_BUDGET_MS = 8000;
const READ_BUDGET_MS = 1000;

const COORDINATE_NAMES = ["x", "q", "theta1"];
const PARAMETER_NAMES = ["m", "l", "g", "k"];
const UNITS = ["m", "rad", "kg", "m/s^2", "N/m", "1", "deg", "kg*m^2", "furlong", "", "m^", "s^-1"];

const unit = fc.constantFrom(...UNITS);

/** A model object: mostly well formed, with energies built from its own names. */
function modelObject(): fc.Arbitrary<Record<string, unknown>> {
  return fc
    .record({
      coordinates: fc.subarray(COORDINATE_NAMES, { minLength: 1, maxLength: 2 }),
      parameters: fc.subarray(PARAMETER_NAMES, { minLength: 0 }),
      withInput: fc.boolean(),
      seedExpressions: fc.boolean(),
    })
    .chain(({ coordinates, parameters, withInput }) => {
      const names = [...coordinates, ...parameters, ...(withInput ? ["u"] : []), "t", "pi"];
      const energy = fc.oneof({ weight: 4, arbitrary: grammarExpression(names) }, { weight: 1, arbitrary: adversarialExpression() });
      return fc.record(
        {
          title: fc.oneof(fc.constant("Fuzzed rig"), anyText(30)),
          coordinates: fc.tuple(...coordinates.map((name) => fc.record({ name: fc.constant(name), unit }))),
          parameters: fc.tuple(
            ...parameters.map((name) => fc.record({ name: fc.constant(name), unit, value: fc.oneof(fc.double({ noNaN: true }), fc.constant(1)) })),
          ),
          inputs: fc.constant(withInput ? [{ name: "u", unit: "N" }] : []),
          kinetic: fc.oneof(energy, fc.constant(coordinates.map((c) => `1/2*${parameters[0] ?? "1"}*${c}'^2`).join(" + "))),
          potential: energy,
          dissipation: fc.option(energy, { nil: undefined }),
          forces: fc.option(fc.dictionary(fc.constantFrom(...coordinates, "nope", "__proto__"), energy, { maxKeys: 2 }), { nil: undefined }),
        },
        { requiredKeys: ["title", "coordinates", "parameters", "kinetic", "potential"] },
      );
    });
}

/** Structural damage to a model object: wrong types, missing fields, odd keys, duplicates. */
function damagedModel(): fc.Arbitrary<unknown> {
  return fc
    .tuple(
      modelObject(),
      fc.constantFrom("drop", "wrong-type", "duplicate", "proto", "huge", "none"),
      fc.constantFrom("title", "coordinates", "parameters", "kinetic", "potential", "inputs", "forces"),
      fc.anything(),
    )
    .map(([model, damage, key, value]) => {
      const copy: Record<string, unknown> = { ...model };
      switch (damage) {
        case "drop":
          delete copy[key];
          break;
        case "wrong-type":
          copy[key] = value;
          break;
        case "duplicate":
          if (Array.isArray(copy.coordinates)) copy.coordinates = [...(copy.coordinates as unknown[]), ...(copy.coordinates as unknown[])];
          break;
        case "proto":
          return JSON.parse(`{"__proto__": {"polluted": true}, "constructor": {"prototype": {"x": 1}}, ${JSON.stringify(copy).slice(1)}`);
        case "huge":
          copy.parameters = Array.from({ length: 250 }, (_, i) => ({ name: `p${i}`, unit: "1" }));
          break;
      }
      return copy;
    });
}

/** Model file text: good JSON of good and damaged models, and broken JSON. */
function modelFileText(): fc.Arbitrary<string> {
  const json = fc.oneof(modelObject(), damagedModel(), fc.anything()).map((value) => JSON.stringify(value) ?? "");
  return fc.oneof(
    { weight: 4, arbitrary: json },
    {
      weight: 1,
      arbitrary: fc
        .tuple(json, fc.nat(), fc.nat({ max: 20 }))
        .map(([text, at, cut]) => text.slice(0, at % (text.length + 1)) + text.slice((at % (text.length + 1)) + cut)),
    },
    { weight: 1, arbitrary: anyText(300) },
  );
}

function expectTypedEngineError(error: unknown): void {
  expect(error instanceof ModelError || error instanceof EngineLimitError || error instanceof ExpressionError, describeThrown(error)).toBe(true);
  expect((error as Error).message.length).toBeGreaterThan(0);
}

describe("model files and the engine under fuzzing", () => {
  it("reads any model file text into a model or a list of located problems, never throwing", () => {
    fc.assert(
      fc.property(modelFileText(), (text) => {
        const { ms, outcome } = timed(() => readModelFile(text));
        expect(ms).toBeLessThan(READ_BUDGET_MS);
        if ("error" in outcome) throw new Error(`readModelFile threw: ${describeThrown(outcome.error)}`);
        const { model, issues } = outcome.value;
        // Exactly one of a model and problems, every problem a ModelError with a message.
        expect(model === null).toBe(issues.length > 0);
        for (const issue of issues) {
          expect(issue).toBeInstanceOf(ModelError);
          expect(issue.toLine().length).toBeGreaterThan(0);
        }
        expect(({} as Record<string, unknown>).polluted).toBeUndefined();
      }),
      fuzzSettings("model file reader", 120),
    );
  });

  it("derives every model the reader accepts, or refuses it with a typed error, within the budget", () => {
    let derived = 0;
    fc.assert(
      fc.property(modelObject(), (object) => {
        const { model } = readModelFile(JSON.stringify(object));
        if (model === null) return;
        const { ms, outcome } = timed(() => deriveModel(model as Model));
        expect(ms, `deriving ${JSON.stringify(object)}`).toBeLessThan(DERIVE_BUDGET_MS);
        if ("error" in outcome) expectTypedEngineError(outcome.error);
        else {
          derived++;
          expect(outcome.value.equations).toHaveLength(model.coordinates.length);
        }
      }),
      fuzzSettings("engine derive", 60),
    );
    // The generator must reach the engine, not only the reader's refusals.
    expect(derived).toBeGreaterThan(0);
  });

  describe("through the engine worker pool", () => {
    const pool = new EnginePool({ workerFile: path.resolve("dist/workers/engine-worker.mjs"), size: 1, taskTimeoutMs: 5000 });
    afterAll(() => pool.close());

    // The tasks that take a model take what a person wrote; the others take
    // systems the server built from a derivation, so only these are fuzzed.
    it("answers arbitrary payloads to the model tasks with a result or a typed error, within its time limit", async () => {
      const payload = fc.oneof(
        fc.anything({ maxDepth: 4 }),
        modelObject().map((model) => ({ model })),
        damagedModel().map((model) => ({ model })),
        fc.record({ model: modelObject(), options: fc.anything({ maxDepth: 2 }) }),
      );
      await fc.assert(
        fc.asyncProperty(fc.constantFrom("derive", "report", "checkUnits"), payload, async (task, input) => {
          const began = performance.now();
          try {
            await pool.run(task, input);
          } catch (error) {
            expectTypedEngineError(error);
          }
          // The pool stops a task at its limit; allow for replacing the worker on a busy machine.
          expect(performance.now() - began).toBeLessThan(5000 + 5000);
        }),
        fuzzSettings("engine worker pool", 60),
      );
    }, 120_000);
  });
});
