import { describe, expect, it } from "vitest";
import { FitError } from "@/lib/simulate/errors";
import { fitParameters } from "@/lib/simulate/fit";
import { integrate } from "@/lib/simulate/integrate";
import { parseMeasuredCsv, type MeasuredData } from "@/lib/simulate/measured";
import { dampedOscillator, gaussian, pendulum, seededRandom } from "./systems";

/** Synthetic rig data: the model's own response plus seeded Gaussian noise. */
function syntheticData(noise: number, seed: number): MeasuredData {
  const truth = integrate(dampedOscillator({ m: 2, c: 0.8, k: 50 }), {
    initialCoordinates: [0.1],
    endTime: 6,
    outputStep: 0.02,
    relativeTolerance: 1e-11,
    absoluteTolerance: 1e-13,
  });
  const normal = gaussian(seededRandom(seed));
  const values = truth.trajectory.coordinates[0]!.map((v) => v + noise * normal());
  return { times: truth.trajectory.times, timeUnit: "s", series: [{ coordinate: "x", unit: "m", targetUnit: "m", scale: 1, values }] };
}

describe("parameter fit", () => {
  it("recovers damping and stiffness from noisy synthetic data, with honest standard errors", () => {
    const noise = 1e-3; // 1 % of the 0.1 m amplitude
    const measured = syntheticData(noise, 7);
    const result = fitParameters({
      system: dampedOscillator({ m: 2 }),
      measured,
      parameters: [
        { name: "c", initial: 0.5, min: 0 },
        { name: "k", initial: 45, min: 0 },
      ],
      settings: { initialCoordinates: [0.1] },
    });
    expect(result.status).toBe("converged");
    const [c, k] = result.parameters;
    // Stated tolerance: within 3 % of the true values (c = 0.8 N·s/m, k = 50 N/m) …
    expect(Math.abs(c!.value - 0.8) / 0.8).toBeLessThan(0.03);
    expect(Math.abs(k!.value - 50) / 50).toBeLessThan(0.03);
    // … and within four standard errors, which must be small but not zero.
    for (const [p, truth] of [
      [c!, 0.8],
      [k!, 50],
    ] as const) {
      expect(p.standardError).not.toBeNull();
      expect(p.standardError!).toBeGreaterThan(0);
      expect(p.standardError! / truth).toBeLessThan(0.02);
      expect(Math.abs(p.value - truth)).toBeLessThan(4 * p.standardError!);
    }
    // The residual RMS estimates the noise level that was added.
    expect(result.residualRms / noise).toBeGreaterThan(0.85);
    expect(result.residualRms / noise).toBeLessThan(1.15);
    expect(result.residualRmsByCoordinate.x).toBeCloseTo(result.residualRms, 12);
    expect(result.fitted[0]!.values.length).toBe(measured.times.length);
    expect(result.covariance![0]![1]! / result.covariance![1]![0]!).toBeCloseTo(1, 12);
  });

  it("spreads the estimates over seeds as the standard errors say (seeded Monte Carlo)", () => {
    // If the standard error is right, (estimate − truth)/SE is roughly standard
    // normal; over 8 noise seeds its mean square should be near 1.
    const z: number[] = [];
    for (let seed = 1; seed <= 8; seed++) {
      const result = fitParameters({
        system: dampedOscillator({ m: 2 }),
        measured: syntheticData(2e-3, 100 + seed),
        parameters: [{ name: "c", initial: 0.6, min: 0 }],
        settings: { initialCoordinates: [0.1] },
      });
      const c = result.parameters[0]!;
      z.push((c.value - 0.8) / c.standardError!);
    }
    const meanSquare = z.reduce((s, v) => s + v * v, 0) / z.length;
    expect(meanSquare).toBeGreaterThan(0.2);
    expect(meanSquare).toBeLessThan(3);
  });

  it("fits a pendulum's length from a CSV in degrees and milliseconds", () => {
    const lTrue = 0.65;
    const truth = integrate(pendulum({ l: lTrue }), { initialCoordinates: [0.6], endTime: 4, outputStep: 0.025, relativeTolerance: 1e-11 });
    const normal = gaussian(seededRandom(42));
    const lines = ["# test rig P-1: pendulum released from 34.4 deg", "t [ms], theta [deg]"];
    truth.trajectory.times.forEach((t, i) => {
      lines.push(`${(t * 1000).toFixed(1)}, ${((truth.trajectory.coordinates[0]![i]! * 180) / Math.PI + 0.05 * normal()).toFixed(4)}`);
    });
    const measured = parseMeasuredCsv(lines.join("\n"), { coordinates: [{ name: "theta", unit: "rad" }] });
    const result = fitParameters({ system: pendulum({ l: 0.5 }), measured, parameters: [{ name: "l", min: 0.1, max: 2 }] });
    expect(result.status).toBe("converged");
    expect(Math.abs(result.parameters[0]!.value - lTrue) / lTrue).toBeLessThan(0.005);
    expect(result.parameters[0]!.initial).toBe(0.5);
    // 0.05° of noise is 8.7e-4 rad.
    expect(result.residualRms).toBeLessThan(1.2 * ((0.05 * Math.PI) / 180));
  });

  it("bounds the work: iteration cap and wall-time limit keep the best guess", () => {
    const measured = syntheticData(1e-3, 3);
    const capped = fitParameters({
      system: dampedOscillator({ m: 2 }),
      measured,
      parameters: [
        { name: "c", initial: 0.2 },
        { name: "k", initial: 30 },
      ],
      settings: { initialCoordinates: [0.1] },
      maxIterations: 1,
    });
    expect(capped.status).toBe("max_iterations");
    expect(capped.iterations).toBe(1);
    const timed = fitParameters({
      system: dampedOscillator({ m: 2 }),
      measured,
      parameters: [
        { name: "c", initial: 0.2 },
        { name: "k", initial: 30 },
      ],
      settings: { initialCoordinates: [0.1] },
      timeLimitMs: 5,
    });
    expect(timed.status).toBe("time_limit");
    expect(timed.wallTimeMs).toBeLessThan(3000);
    expect(timed.parameters[0]!.standardError).toBeNull();
    expect(Number.isFinite(timed.parameters[0]!.value)).toBe(true);
  });

  it("refuses an unknown parameter, and data without the model's coordinates", () => {
    const measured = syntheticData(1e-3, 3);
    expect(() => fitParameters({ system: dampedOscillator(), measured, parameters: [{ name: "zeta" }] })).toThrow(FitError);
    const other: MeasuredData = { ...measured, series: [{ ...measured.series[0]!, coordinate: "y" }] };
    expect(() => fitParameters({ system: dampedOscillator(), measured: other, parameters: [{ name: "c" }] })).toThrow(
      expect.objectContaining({ code: "no_data" }),
    );
  });
});
