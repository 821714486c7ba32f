import { describe, expect, it } from "vitest";
import { evaluationSize, isLargeEvaluation, LARGE_EVALUATION } from "@/lib/evaluation/size";
import { chainModel, DEFAULT_MODEL_LIMITS, type Model } from "@/lib/mechanics";

// A trolley on a gantry rail with a hook block swinging below it (Kestrel's crane scenario).
const trolley: Model = {
  title: "Gantry trolley and hook",
  coordinates: [
    { name: "x", unit: "m" },
    { name: "theta", unit: "rad" },
  ],
  parameters: [
    { name: "M", unit: "kg", value: 500 },
    { name: "m", unit: "kg", value: 40 },
    { name: "l", unit: "m", value: 6 },
    { name: "g", unit: "m/s^2", value: 9.81 },
  ],
  kinetic: "1/2*(M + m)*x'^2 + m*l*x'*theta'*cos(theta) + 1/2*m*l^2*theta'^2",
  potential: "-m*g*l*cos(theta)",
};

describe("evaluationSize", () => {
  it("counts coordinates and the top-level terms of every written expression", () => {
    const size = evaluationSize(trolley);
    expect(size.coordinates).toBe(2);
    expect(size.constraints).toBe(0);
    // Three terms in T, one in V.
    expect(size.writtenTerms).toBe(4);
    expect(size.textLength).toBe(trolley.kinetic.length + trolley.potential.length);
  });

  it("counts definitions, forces, constraints and outputs, and a text that does not parse as no terms", () => {
    const size = evaluationSize({
      ...trolley,
      definitions: [{ name: "xh", expr: "x + l*sin(theta)" }],
      forces: { x: "F - c*x'" },
      constraints: [{ name: "rail", expr: "x - 1" }],
      rateConstraints: [{ name: "roll", expr: "x' - 0" }],
      outputs: [{ name: "hook", expr: "x + l*sin(theta +", unit: "m" }],
    });
    expect(size.constraints).toBe(2);
    // 4 + definition 2 + force 2 + constraint 2 + rate constraint 2 + the unparsable output 0.
    expect(size.writtenTerms).toBe(12);
  });
});

describe("isLargeEvaluation", () => {
  it("keeps the 5-link chain of bench:notebook on the fast path and queues chains from a third of the coordinate limit", () => {
    expect(LARGE_EVALUATION.coordinates).toBe(Math.ceil(DEFAULT_MODEL_LIMITS.maxCoordinates / 3));
    expect(isLargeEvaluation(evaluationSize(chainModel({ links: 5 })))).toBe(false);
    expect(isLargeEvaluation(evaluationSize(chainModel({ links: LARGE_EVALUATION.coordinates - 1 })))).toBe(false);
    expect(isLargeEvaluation(evaluationSize(chainModel({ links: LARGE_EVALUATION.coordinates })))).toBe(true);
  });

  it("queues a model when any one measure reaches its mark", () => {
    const small = evaluationSize(trolley);
    expect(isLargeEvaluation(small)).toBe(false);
    expect(isLargeEvaluation({ ...small, constraints: LARGE_EVALUATION.constraints })).toBe(true);
    expect(isLargeEvaluation({ ...small, writtenTerms: LARGE_EVALUATION.writtenTerms })).toBe(true);
    expect(isLargeEvaluation({ ...small, textLength: LARGE_EVALUATION.textLength })).toBe(true);
    expect(isLargeEvaluation(small, { ...LARGE_EVALUATION, coordinates: 2 })).toBe(true);
  });

  it("finds a long written Lagrangian large even with few coordinates", () => {
    const terms = Array.from({ length: LARGE_EVALUATION.writtenTerms }, (_, i) => `m*x'^2*${i + 1}`).join(" + ");
    expect(isLargeEvaluation(evaluationSize({ ...trolley, kinetic: terms }))).toBe(true);
  });
});
