import { describe, expect, it } from "vitest";
import { envelopeOf, gridSensitivity, quantileOfSorted, regressionSensitivity, worstCasesOf, type FinishedRun, type VariedParameter } from "@/lib/study";

function run(index: number, parameters: Record<string, number>, peak: number, extra: Partial<FinishedRun> = {}): FinishedRun {
  return {
    index,
    caseIndex: 0,
    caseName: "nominal",
    parameters,
    status: "done",
    peaks: { y: { min: -Math.abs(peak), timeOfMin: 1, max: Math.abs(peak), timeOfMax: 2, peak, timeOfPeak: index / 10 } },
    ...extra,
  };
}

describe("quantileOfSorted", () => {
  it("interpolates between order statistics (Hyndman and Fan's definition 7)", () => {
    // h = (n − 1)p: for [1, 2, 3, 4], p = 0.5 gives h = 1.5 → 2.5; p = 0.05 gives h = 0.15 → 1.15 (Hyndman and Fan 1996, definition 7).
    expect(quantileOfSorted([1, 2, 3, 4], 0.5)).toBe(2.5);
    expect(quantileOfSorted([1, 2, 3, 4], 0.05)).toBeCloseTo(1.15, 12);
    expect(quantileOfSorted([1, 2, 3, 4], 0.95)).toBeCloseTo(3.85, 12);
    expect(quantileOfSorted([7], 0.95)).toBe(7);
    expect(quantileOfSorted([], 0.5)).toBeNaN();
  });
});

describe("envelopeOf", () => {
  it("gives min, max and percentile bands per time point, skipping runs that stopped early", () => {
    const envelope = envelopeOf([0, 1], {
      y: [
        [1, 10],
        [2, NaN],
        [3, 30],
        [4, 40],
      ],
    });
    expect(envelope.time).toEqual([0, 1]);
    const bands = envelope.series.y!;
    expect(bands.min).toEqual([1, 10]);
    expect(bands.max).toEqual([4, 40]);
    expect(bands.p50).toEqual([2.5, 30]);
    // Three values at t = 1: h = 2·0.05 = 0.1 → 10 + 0.1·20 = 12.
    expect(bands.p5[1]).toBeCloseTo(12, 12);
  });
});

describe("worstCasesOf", () => {
  it("picks the completed run of largest |peak| and keeps its sign", () => {
    const runs = [run(0, { a: 1 }, 5), run(1, { a: 2 }, -9), run(2, { a: 3 }, 50, { status: "failed" }), run(3, { a: 4 }, 8)];
    expect(worstCasesOf(runs, [{ name: "y" }, { name: "z" }])).toEqual({
      y: { runIndex: 1, value: -9, time: 0.1, caseName: "nominal", parameters: { a: 2 } },
    });
  });
});

describe("gridSensitivity", () => {
  const parameters: VariedParameter[] = [
    { name: "a", unit: null, grid: [1, 2, 3] },
    { name: "b", unit: null, grid: [10, 20] },
  ];

  it("recovers the slopes of a peak linear in the parameters", () => {
    // |peak| = 2a + 3b: the finite differences are exactly 2 and 3 (a linear function's difference quotients are its slopes).
    const runs: FinishedRun[] = [];
    for (const a of [1, 2, 3]) for (const b of [10, 20]) runs.push(run(runs.length, { a, b }, 2 * a + 3 * b));
    const sensitivity = gridSensitivity(runs, parameters, "y");
    expect(sensitivity.method).toBe("finite-difference");
    // Peak spread: (2·3 + 60) − (2·1 + 30) = 34; normalized = slope × parameter spread / 34.
    expect(sensitivity.byParameter.a!.slope).toBeCloseTo(2, 12);
    expect(sensitivity.byParameter.a!.normalized).toBeCloseTo((2 * 2) / 34, 12);
    expect(sensitivity.byParameter.b!.slope).toBeCloseTo(3, 12);
    expect(sensitivity.byParameter.b!.normalized).toBeCloseTo((3 * 10) / 34, 12);
    expect(sensitivity.byParameter.b!.r2).toBeNull();
  });

  it("uses only neighbour pairs whose runs both completed", () => {
    const runs = [run(0, { a: 1, b: 10 }, 1), run(1, { a: 2, b: 10 }, 3), run(2, { a: 3, b: 10 }, 100, { status: "failed" })];
    const sensitivity = gridSensitivity(runs, parameters, "y");
    expect(sensitivity.byParameter.a!.slope).toBe(2);
    expect(sensitivity.byParameter.b).toBeUndefined();
  });
});

describe("regressionSensitivity", () => {
  const parameters: VariedParameter[] = [
    { name: "a", unit: null, distribution: "uniform", min: 0, max: 1 },
    { name: "b", unit: null, distribution: "uniform", min: 0, max: 1 },
  ];

  it("recovers the slopes of a linear peak with a different level per case", () => {
    // |peak| = 5 + 2a − 0.5b, plus 100 in the second case: least squares with one level per case is exact here.
    const points = [
      [0.1, 0.7],
      [0.4, 0.2],
      [0.9, 0.5],
      [0.3, 0.9],
      [0.6, 0.1],
      [0.8, 0.8],
    ];
    const runs = points.flatMap(([a, b], i) => [
      run(2 * i, { a: a!, b: b! }, 5 + 2 * a! - 0.5 * b!),
      run(2 * i + 1, { a: a!, b: b! }, 105 + 2 * a! - 0.5 * b!, { caseIndex: 1, caseName: "hard" }),
    ]);
    const sensitivity = regressionSensitivity(runs, parameters, "y");
    expect(sensitivity.method).toBe("regression");
    expect(sensitivity.byParameter.a!.slope).toBeCloseTo(2, 10);
    expect(sensitivity.byParameter.b!.slope).toBeCloseTo(-0.5, 10);
    // With a alone explaining most of the within-case variance, its r² is the larger; both lie in [0, 1].
    expect(sensitivity.byParameter.a!.r2!).toBeGreaterThan(sensitivity.byParameter.b!.r2!);
    expect(sensitivity.byParameter.a!.r2!).toBeLessThanOrEqual(1);
  });

  it("gives r² = 1 for a peak that depends on one parameter alone", () => {
    const runs = [0.1, 0.5, 0.2, 0.9].map((a, i) => run(i, { a, b: [0.3, 0.1, 0.8, 0.6][i]! }, 3 * a));
    const sensitivity = regressionSensitivity(runs, parameters, "y");
    expect(sensitivity.byParameter.a!.r2).toBeCloseTo(1, 12);
    expect(sensitivity.byParameter.a!.slope).toBeCloseTo(3, 10);
    expect(sensitivity.byParameter.b!.slope).toBeCloseTo(0, 10);
  });

  it("reports nothing with fewer runs than unknowns", () => {
    expect(regressionSensitivity([run(0, { a: 0.1, b: 0.2 }, 1), run(1, { a: 0.3, b: 0.4 }, 2)], parameters, "y").byParameter).toEqual({});
  });
});
