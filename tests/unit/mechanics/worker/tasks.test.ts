import { describe, expect, it } from "vitest";
import { ModelError } from "@/lib/mechanics/errors";
import { ENGINE_TASKS } from "@/lib/mechanics/worker/tasks";

// Found by the fuzz suite (tests/unit/fuzz/model-file.test.ts): a payload that is
// not an object made the model tasks throw a TypeError, which left the worker as
// an untyped error (a 500 on the server) instead of a refusal of the model.
describe("engine tasks with a malformed payload", () => {
  it.each([null, 3, "model", [], {}])("derive refuses %j with a ModelError", (payload) => {
    expect(() => ENGINE_TASKS.derive!(payload)).toThrow(ModelError);
  });

  it("derive reads options that are not an object as the defaults", () => {
    const model = {
      title: "Hoist drum",
      coordinates: [{ name: "x", unit: "m" }],
      parameters: [{ name: "m", unit: "kg" }],
      kinetic: "1/2*m*x'^2",
      potential: "0",
    };
    expect(() => ENGINE_TASKS.derive!({ model, options: null })).not.toThrow();
  });

  it.each([null, 7])("report and checkUnits refuse %j with a ModelError", (payload) => {
    expect(() => ENGINE_TASKS.report!(payload)).toThrow(ModelError);
    expect(() => ENGINE_TASKS.checkUnits!(payload)).toThrow(ModelError);
  });
});
