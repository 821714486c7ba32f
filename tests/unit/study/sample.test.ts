import { describe, expect, it } from "vitest";
import { expandRuns, parseStudy, sampleTruncatedNormal, seededUniform } from "@/lib/study";
import { parameter, ropePendulum, settings } from "./fixtures";

const mean = (values: number[]) => values.reduce((s, v) => s + v, 0) / values.length;
const variance = (values: number[]) => {
  const m = mean(values);
  return values.reduce((s, v) => s + (v - m) ** 2, 0) / (values.length - 1);
};

describe("expandRuns", () => {
  it("expands a grid as a product, the last parameter fastest, each sample once per case", () => {
    const spec = parseStudy(
      settings({
        parameters: [parameter({ name: "l", values: "1, 2" }), parameter({ name: "m", values: "5, 10, 20" })],
        cases: [
          { name: "a", initialCoordinates: {}, initialRates: {}, inputs: {} },
          { name: "b", initialCoordinates: {}, initialRates: {}, inputs: {} },
        ],
        watch: ["x"],
      }),
      ropePendulum,
    );
    const runs = expandRuns(spec);
    expect(runs).toHaveLength(12);
    expect(runs.slice(0, 4)).toEqual([
      { index: 0, caseIndex: 0, caseName: "a", parameters: { l: 1, m: 5 } },
      { index: 1, caseIndex: 1, caseName: "b", parameters: { l: 1, m: 5 } },
      { index: 2, caseIndex: 0, caseName: "a", parameters: { l: 1, m: 10 } },
      { index: 3, caseIndex: 1, caseName: "b", parameters: { l: 1, m: 10 } },
    ]);
    expect(runs[11]).toEqual({ index: 11, caseIndex: 1, caseName: "b", parameters: { l: 2, m: 20 } });
  });

  it("samples a tolerance run reproducibly from its seed, inside the bounds", () => {
    const cell = settings({
      mode: "tolerance",
      samples: "2000",
      seed: "7",
      parameters: [
        parameter({ name: "l", distribution: "uniform", min: "1.9", max: "2.1" }),
        parameter({ name: "m", distribution: "normal", mean: "10", sd: "1", min: "8", max: "12" }),
      ],
      watch: ["x"],
    });
    const spec = parseStudy(cell, ropePendulum);
    const first = expandRuns(spec);
    expect(expandRuns(spec)).toEqual(first);
    expect(expandRuns(parseStudy({ ...cell, seed: "8" }, ropePendulum))[0]!.parameters).not.toEqual(first[0]!.parameters);
    const l = first.map((run) => run.parameters.l!);
    const m = first.map((run) => run.parameters.m!);
    expect(Math.min(...l)).toBeGreaterThanOrEqual(1.9);
    expect(Math.max(...l)).toBeLessThan(2.1);
    expect(Math.min(...m)).toBeGreaterThanOrEqual(8);
    expect(Math.max(...m)).toBeLessThanOrEqual(12);
    // Uniform on [a, b]: mean (a+b)/2, variance (b−a)²/12 = 0.04/12 (fact of the trade); 2000 samples put
    // the mean within 4 standard errors (4·0.0577·0.2/√2000 ≈ 0.0010).
    expect(mean(l)).toBeCloseTo(2, 2);
    expect(variance(l)).toBeCloseTo(0.04 / 12, 3);
    // Normal truncated symmetrically at ±2 sd: mean unchanged, variance σ²·(1 − 2·2·φ(2)/(2Φ(2)−1)) = 0.7737
    // (the truncated-normal moments, Johnson, Kotz and Balakrishnan, Continuous Univariate Distributions vol. 1, §13.10.1).
    expect(Math.abs(mean(m) - 10)).toBeLessThan(0.1);
    expect(Math.abs(variance(m) - 0.7737)).toBeLessThan(0.08);
  });
});

describe("the sampler", () => {
  it("gives uniform doubles in [0, 1) and the same stream for the same seed", () => {
    const a = seededUniform(123);
    const b = seededUniform(123);
    const values = Array.from({ length: 1000 }, () => a.next());
    expect(values).toEqual(Array.from({ length: 1000 }, () => b.next()));
    expect(Math.min(...values)).toBeGreaterThanOrEqual(0);
    expect(Math.max(...values)).toBeLessThan(1);
  });

  it("keeps a narrow truncated normal inside its bounds", () => {
    const random = seededUniform(1);
    for (let i = 0; i < 500; i++) {
      const x = sampleTruncatedNormal(random, 0, 1, -0.05, 0.05);
      expect(x).toBeGreaterThanOrEqual(-0.05);
      expect(x).toBeLessThanOrEqual(0.05);
    }
  });
});
