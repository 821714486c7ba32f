import { describe, expect, it } from "vitest";
import { demoDerivations } from "@/db/seed/demo";
import { distinctEquilibria, evaluateModel, type EngineRunner, type EvaluationSettings } from "@/lib/evaluation/evaluate";
import type { Equilibrium } from "@/lib/mechanics/equilibria";
import type { Model } from "@/lib/mechanics/model";
import { chainModel } from "@/lib/mechanics/templates/chain";
import { ENGINE_TASKS } from "@/lib/mechanics/worker/tasks";
import { documentToModel, type DerivationDocument } from "@/lib/notebook/document";

/** The engine's tasks in this thread, with the payload and the answer passed through JSON as the worker boundary does. */
const runner: EngineRunner = {
  async run<T>(task: string, payload: unknown): Promise<T> {
    const result = ENGINE_TASKS[task]!(JSON.parse(JSON.stringify(payload)));
    return JSON.parse(JSON.stringify(result)) as T;
  },
};

const settings: EvaluationSettings = { linearization: { equilibriumIndex: 0, inputValues: {} }, codeLanguages: [] };

function demo(prefix: string): Model {
  const found = demoDerivations.find((d) => d.title.startsWith(prefix))!;
  return "cells" in found.content ? documentToModel(found.content as unknown as DerivationDocument) : (found.content as unknown as Model);
}

/** A 3-link chain with every parameter given a value. */
const chain3: Model = { ...chainModel({ links: 3 }), parameters: chainModel({ links: 3 }).parameters.map((p) => ({ ...p, value: 1 })) };

describe("evaluateModel", () => {
  it("shows the equations in display form, each displayed term marked for comments", async () => {
    const { result } = await evaluateModel(runner, demo("Camera gimbal"), settings);
    const [psi] = result.equations;
    expect(psi!.latex).toMatch(/ = 0$/);
    // The demo gimbal's T has I_2 sin²θ + I_3 cos²θ; the equation shows it so.
    expect(psi!.latex).toContain("I_{2}\\,\\sin^{2}\\left(\\theta\\right)");
    for (const term of psi!.terms) expect(psi!.latex).toContain(`\\htmlData{term=${term.id}}{${term.latex}}`);
    // The residual text for the API stays the canonical form.
    expect(psi!.residual).toContain("cos(2*theta)");
  });

  it("shows the engine's accelerations, common factors cancelled", async () => {
    const { result } = await evaluateModel(runner, demo("Gantry crane: trolley"), settings);
    expect(result.accelerationsNote).toBeUndefined();
    expect(result.accelerations!.map((a) => a.coordinate)).toEqual(["x", "theta"]);
    // (F − b x' + m l θ'² sin θ + m g sin θ cos θ)/(M + m sin²θ): the cart with a hanging load (from memory).
    expect(result.accelerations![0]!.latex).toMatch(/^\\ddot\{x\} = \\frac\{.*\}\{M \+ m\\,\\sin\^\{2\}\\left\(\\theta\\right\)\}$/);
  });

  it("says plainly when there is no closed form for the accelerations", async () => {
    const { result } = await evaluateModel(runner, chain3, settings);
    expect(result.accelerations).toBeUndefined();
    expect(result.accelerationsNote).toBe(
      "No closed form for the accelerations: all 3 coordinates are coupled through the mass matrix (a 3×3 block); accelerations are solved symbolically only for blocks up to 2×2. The mass-matrix form and the code export hold the full equations.",
    );
  });

  it("lists one equilibrium per hanging and upright load, the trolley position being free", async () => {
    const { result } = await evaluateModel(runner, demo("Gantry crane: trolley"), settings);
    // The equations contain x only through x' and x'': every trolley position is an equilibrium.
    const listed = result.equilibria!.map((e) => e.q);
    expect(listed).toHaveLength(2);
    expect(listed[0]).toEqual([0, 0]);
    expect(listed[1]![0]).toBe(0);
    expect(listed[1]![1]).toBeCloseTo(Math.PI, 9);
  });
});

describe("distinctEquilibria", () => {
  const at = (q: number[]) => ({ q }) as unknown as Equilibrium;

  it("keeps one equilibrium per value of the coordinates that are not free", () => {
    const found = [at([0.5, 0]), at([-2, 1e-12]), at([1.25, Math.PI])];
    expect(distinctEquilibria(["x", "theta"], ["x"], found).map((e) => e.q)).toEqual([
      [0, 0],
      [0, Math.PI],
    ]);
    // With no free coordinate the trolley positions are distinct equilibria.
    expect(distinctEquilibria(["x", "theta"], [], found)).toHaveLength(3);
  });
});
