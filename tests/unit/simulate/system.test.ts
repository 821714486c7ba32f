import { describe, expect, it } from "vitest";
import { deriveModel } from "@/lib/mechanics/derive";
import { energyDrift } from "@/lib/simulate/checks";
import { chainModel } from "@/lib/mechanics/templates/chain";
import { SimulationSetupError } from "@/lib/simulate/errors";
import { integrate } from "@/lib/simulate/integrate";
import { layoutOf, systemFromDerivation, systemFromMassMatrixForm, variableNames } from "@/lib/simulate/system";
import { doublePendulum, seededRandom } from "./systems";

// A two-link test rig arm: the double pendulum from Cartesian definitions, unequal links.
const doublePendulumModel = chainModel({ links: 2, masses: [1.4, 0.7], lengths: [0.9, 0.6], gravity: 9.81 });

describe("system adapters", () => {
  it("lays out the packed variables as q, q', t, inputs, parameters", () => {
    const system = systemFromMassMatrixForm({
      coordinates: ["x", "y"],
      inputs: ["u"],
      parameters: [{ name: "k", value: 1 }],
      massMatrix: [
        ["1", "0"],
        ["0", "1"],
      ],
      forcing: ["u", "-k*y"],
    });
    expect(variableNames(system)).toEqual(["x", "y", "x'", "y'", "t", "u", "k"]);
    expect(layoutOf(system)).toMatchObject({ n: 2, m: 1, k: 1, rates: 2, time: 4, inputs: 5, parameters: 6, length: 7 });
  });

  it("gives the derived double pendulum the textbook M and f at random states (Taylor ch. 11 — from memory)", () => {
    const derived = systemFromDerivation(doublePendulumModel, deriveModel(doublePendulumModel));
    const textbook = doublePendulum({ m1: 1.4, m2: 0.7, l1: 0.9, l2: 0.6 });
    expect(derived.energyConserved).toBe(true);
    const random = seededRandom(99);
    const values = new Float64Array(variableNames(derived).length);
    const ours = new Float64Array(6);
    const theirs = new Float64Array(6);
    for (let trial = 0; trial < 50; trial++) {
      for (let i = 0; i < 5; i++) values[i] = random() * 8 - 4;
      values.set([1.4, 0.7, 0.9, 0.6, 9.81], 5);
      derived.massForcing(values, ours);
      textbook.massForcing(values, theirs);
      for (let i = 0; i < 6; i++) expect(ours[i]).toBeCloseTo(theirs[i]!, 10);
      expect(derived.energy!(values)).toBeCloseTo(textbook.energy!(values), 10);
    }
  });

  it("simulates a derived model with parameter overrides through the specialized evaluators", () => {
    const system = systemFromDerivation(doublePendulumModel, deriveModel(doublePendulumModel));
    const settings = { initialCoordinates: { theta1: 1.2, theta2: -0.4 }, endTime: 5, outputStep: 0.01, relativeTolerance: 1e-10, absoluteTolerance: 1e-10 };
    const base = integrate(system, settings);
    const heavier = integrate(system, { ...settings, parameters: { m2: 2.1 } });
    expect(base.parameterValues.m2).toBe(0.7);
    expect(heavier.parameterValues.m2).toBe(2.1);
    expect(energyDrift(base.energy!).relativeDrift).toBeLessThan(1e-8);
    expect(energyDrift(heavier.energy!).relativeDrift).toBeLessThan(1e-8);
    // Different parameters, different motion (the override is not ignored by the cache).
    expect(Math.abs(base.trajectory.coordinates[1]![300]! - heavier.trajectory.coordinates[1]![300]!)).toBeGreaterThan(1e-3);
    // The generic evaluator agrees with the specialized one.
    const generic = integrate({ ...system, specialize: undefined }, settings);
    expect(generic.trajectory.coordinates[0]![500]).toBeCloseTo(base.trajectory.coordinates[0]![500]!, 7);
  });

  it("names the field and column of an expression it cannot compile", () => {
    let caught: unknown;
    try {
      systemFromMassMatrixForm({
        coordinates: ["x", "y"],
        parameters: [{ name: "m", value: 1 }],
        massMatrix: [
          ["m", "0"],
          ["0", "m3"],
        ],
        forcing: ["0", "0"],
      });
    } catch (error) {
      caught = error;
    }
    expect(caught).toBeInstanceOf(SimulationSetupError);
    expect(caught).toMatchObject({ code: "expression", field: "massMatrix[1][1]" });
    expect((caught as Error).message).toMatch(/column 1: unknown symbol "m3"/);
    expect(() => systemFromMassMatrixForm({ coordinates: ["x"], parameters: [], massMatrix: [["1", "0"]], forcing: ["0"] })).toThrow(
      expect.objectContaining({ code: "dimension", field: "massMatrix" }),
    );
  });
});
