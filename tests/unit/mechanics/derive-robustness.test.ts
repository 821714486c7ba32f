import { describe, expect, it } from "vitest";
import { deriveModel } from "@/lib/mechanics/derive";
import { EngineLimitError, ModelError } from "@/lib/mechanics/errors";
import type { Model } from "@/lib/mechanics/model";
import { close, evaluate, mulberry32, uniform } from "./helpers/numeric";

const base: Omit<Model, "kinetic" | "potential"> = {
  title: "Robustness",
  coordinates: [
    { name: "x", unit: "m" },
    { name: "q", unit: "rad" },
  ],
  parameters: ["m", "k", "l", "g", "w"].map((name) => ({ name, unit: "1" })),
  inputs: [{ name: "u", unit: "N" }],
  definitions: [{ name: "d", expr: "x + l*sin(q)" }],
};

const fragments = ["x", "q", "d", "x'", "q'", "d'", "t", "sin(q)", "cos(w*t)", "sqrt(l + x^2)", "exp(x/3)", "1/(2 + x^2)", "atan(x)", "m", "k*u"];

function randomEnergy(random: () => number, withRates: boolean): string {
  const pick = () => fragments[Math.floor(random() * fragments.length)]!;
  const terms = Array.from({ length: 3 }, () => `${pick()}*${pick()}`);
  if (withRates) terms.push("m*x'^2", "m*q'^2");
  return terms.join(" + ");
}

describe("deriveModel on arbitrary models (seeded)", () => {
  it("either derives consistent equations or throws a typed error", () => {
    const random = mulberry32(31337);
    let derived = 0;
    for (let trial = 0; trial < 60; trial++) {
      const model: Model = { ...base, kinetic: randomEnergy(random, true), potential: randomEnergy(random, false) };
      let result;
      try {
        result = deriveModel(model);
      } catch (error) {
        expect(error instanceof ModelError || error instanceof EngineLimitError, String(error)).toBe(true);
        continue;
      }
      derived++;
      const env: Record<string, number> = { t: uniform(random, 0, 1), u: 0.7 };
      for (const name of ["x", "q"]) for (const s of ["", "'", "''"]) env[name + s] = uniform(random, 0.1, 0.9);
      for (const p of ["m", "k", "l", "g", "w"]) env[p] = uniform(random, 0.5, 1.5);
      result.equations.forEach((e, i) => {
        const mq = result.massMatrix[i]!.reduce((sum, entry, j) => sum + evaluate(entry, env) * env[`${["x", "q"][j]}''`]!, 0);
        expect(close(evaluate(e.residual, env), mq - evaluate(result.forcing[i]!, env), 1e-9)).toBe(true);
      });
    }
    expect(derived).toBeGreaterThan(20);
  });

  it("refuses an expansion too large to compute instead of running away", () => {
    const model: Model = { ...base, kinetic: "1/2*m*x'^2 + 1/2*m*q'^2*(x + m + l + g + w + q)^30", potential: "0" };
    expect(() => deriveModel(model)).toThrow(EngineLimitError);
  });

  it("reports the missing rate of an input the kinetic energy depends on", () => {
    const model: Model = { ...base, kinetic: "1/2*m*(x' - u)^2 + 1/2*m*q'^2", potential: "0" };
    expect(() => deriveModel(model)).toThrow(/needs the rate of the input u/);
  });
});
