import { describe, expect, it } from "vitest";
import { explainFit } from "@/lib/simulate/fit-report";
import { fitParameters } from "@/lib/simulate/fit";
import { integrate } from "@/lib/simulate/integrate";
import type { MeasuredData } from "@/lib/simulate/measured";
import { systemFromMassMatrixForm } from "@/lib/simulate/system";
import { dampedOscillator, gaussian, seededRandom } from "./systems";

/** The oscillator's free response from x0 = 0.1 m at rest, plus seeded noise. */
function freeResponse(noise: number, seed: number, x0 = 0.1): MeasuredData {
  const truth = integrate(dampedOscillator({ m: 2, c: 0.8, k: 50 }), {
    initialCoordinates: [x0],
    endTime: 4,
    outputStep: 0.02,
    relativeTolerance: 1e-11,
    absoluteTolerance: 1e-13,
  });
  const normal = gaussian(seededRandom(seed));
  const values = truth.trajectory.coordinates[0]!.map((v) => v + noise * normal());
  return { times: truth.trajectory.times, timeUnit: "s", series: [{ coordinate: "x", unit: "m", targetUnit: "m", scale: 1, values }] };
}

/** Two uncoupled oscillators x and y (unit masses); only x is measured. */
function twoOscillators() {
  return systemFromMassMatrixForm({
    coordinates: ["x", "y"],
    parameters: [
      { name: "kx", value: 40 },
      { name: "ky", value: 25 },
    ],
    massMatrix: [
      ["1", "0"],
      ["0", "1"],
    ],
    forcing: ["-kx*x", "-ky*y"],
  });
}

describe("fit explanations", () => {
  it("names mass, damping and stiffness as fixed only together by a free response, with the joint change", () => {
    // Free response of m x'' + c x' + k x = 0 depends on c/m and k/m only (fact of the trade):
    // scaling m, c and k by the same factor leaves it unchanged.
    const result = fitParameters({
      system: dampedOscillator({ m: 2 }),
      measured: freeResponse(1e-3, 11),
      parameters: [
        { name: "m", initial: 1.8, min: 0.1 },
        { name: "c", initial: 0.6, min: 0 },
        { name: "k", initial: 46, min: 1 },
      ],
      settings: { initialCoordinates: [0.1] },
    });
    expect(result.notIdentifiable).toHaveLength(1);
    const group = result.notIdentifiable[0]!;
    expect(group.kind).toBe("only_together");
    expect([...group.parameters].sort()).toEqual(["c", "k", "m"]);
    if (group.kind !== "only_together") throw new Error("unreachable");
    // Equal relative steps for all three (the common scale factor).
    for (const name of ["m", "c", "k"]) expect(Math.abs(Math.abs(group.direction[name]!) - 1)).toBeLessThan(0.05);
    expect(Math.sign(group.direction.m!)).toBe(Math.sign(group.direction.k!));
    for (const p of result.parameters) expect(p.standardError).toBeNull();

    const report = explainFit(result, { coordinateUnits: { x: "m" }, inputs: ["u"], appliedInputs: [] });
    expect(report.notIdentifiable).toHaveLength(1);
    expect(report.notIdentifiable[0]!.why).toMatch(/only a combination of m, c and k|only a combination of [mck], [mck] and [mck]/);
    expect(report.notIdentifiable[0]!.why).toContain("+1 %");
    expect(report.notIdentifiable[0]!.remedy).toContain("known input applied (u)");
  });

  it("reports a parameter that does not act on the data, keeps the standard error of the one that does, and never says converged when nothing moved", () => {
    // F0 appears in no equation of the oscillator: no data can determine it.
    const both = fitParameters({
      system: dampedOscillator({ m: 2, k: 50 }),
      measured: freeResponse(1e-3, 5),
      parameters: [
        { name: "c", initial: 0.5, min: 0 },
        { name: "F0", initial: 3 },
      ],
      settings: { initialCoordinates: [0.1] },
    });
    expect(both.notIdentifiable).toEqual([{ kind: "no_effect", parameters: ["F0"], affectsUnmeasured: [] }]);
    const [c, F0] = both.parameters;
    expect(c!.standardError).not.toBeNull();
    // True damping 0.8 N·s/m, recovered within four standard errors (least-squares theory).
    expect(Math.abs(c!.value - 0.8)).toBeLessThan(4 * c!.standardError!);
    expect(F0!.standardError).toBeNull();
    expect(F0!.value).toBe(3);

    const only = fitParameters({
      system: dampedOscillator({ m: 2, k: 50, c: 0.8 }),
      measured: freeResponse(1e-3, 5),
      parameters: [{ name: "F0", initial: 3 }],
      settings: { initialCoordinates: [0.1] },
    });
    expect(only.status).toBe("unchanged");
    expect(only.parameters[0]!.value).toBe(3);
    const report = explainFit(only, { coordinateUnits: { x: "m" } });
    expect(report.trustworthy).toBe(false);
    expect(report.outcome).toMatch(/^Nothing moved/);
    expect(report.outcome).not.toContain("Converged");
    expect(report.notIdentifiable[0]!.parameters).toEqual(["F0"]);
    expect(report.notIdentifiable[0]!.why).toContain("leaves the measured record unchanged");
  });

  it("says which unmeasured coordinate a parameter acts on", () => {
    const truth = integrate(twoOscillators(), { initialCoordinates: [0.2, 0.1], endTime: 3, outputStep: 0.02, relativeTolerance: 1e-11 });
    const measured: MeasuredData = {
      times: truth.trajectory.times,
      timeUnit: "s",
      series: [{ coordinate: "x", unit: "m", targetUnit: "m", scale: 1, values: truth.trajectory.coordinates[0]! }],
    };
    const result = fitParameters({
      system: twoOscillators(),
      measured,
      parameters: [
        { name: "kx", initial: 36 },
        { name: "ky", initial: 20 },
      ],
      settings: { initialCoordinates: [0.2, 0.1] },
    });
    expect(result.notIdentifiable).toEqual([{ kind: "no_effect", parameters: ["ky"], affectsUnmeasured: ["y"] }]);
    // kx = 40 N/m recovered from noise-free data (least squares on the model's own response).
    expect(result.parameters[0]!.value).toBeCloseTo(40, 4);
    const report = explainFit(result, { coordinateUnits: { x: "m" } });
    expect(report.notIdentifiable[0]!.why).toContain("acts on y, which is not in the file");
    expect(report.notIdentifiable[0]!.remedy).toMatch(/^Measure y as well/);
  });

  it("explains a record in which nothing moves", () => {
    // Released at rest in equilibrium: x stays 0 whatever the damping.
    const times = Float64Array.from({ length: 101 }, (_, k) => k * 0.01);
    const measured: MeasuredData = { times, timeUnit: "s", series: [{ coordinate: "x", unit: "m", targetUnit: "m", scale: 1, values: new Float64Array(101) }] };
    const result = fitParameters({ system: dampedOscillator(), measured, parameters: [{ name: "c", initial: 0.5 }] });
    expect(result.status).toBe("unchanged");
    expect(result.recordMoves).toBe(false);
    const report = explainFit(result, { coordinateUnits: { x: "m" }, inputs: ["u"] });
    expect(report.outcome).toContain("already reproduce the data exactly");
    expect(report.notIdentifiable[0]!.why).toContain("Nothing moves in the measured record (x stays constant)");
    expect(report.notIdentifiable[0]!.remedy).toContain("(u)");
  });

  it("gives the residual of each coordinate in its unit", () => {
    const report = explainFit(
      {
        status: "converged",
        iterations: 7,
        simulations: 30,
        residualRms: 0.01,
        residualRmsByCoordinate: { x: 5.12e-4, theta: 0.0173 },
        notIdentifiable: [],
        recordMoves: true,
      },
      { coordinateUnits: { x: "m", theta: "rad" } },
    );
    expect(report.residuals.map((r) => r.text)).toEqual(["x: 5.12e-4 m RMS", "theta: 0.0173 rad RMS"]);
    expect(report.outcome).toBe("Converged after 7 iterations (30 simulations): no further step lowers the misfit.");
    expect(report.trustworthy).toBe(true);
  });
});
