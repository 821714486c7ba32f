import { describe, expect, it } from "vitest";
import { checkSmallOscillation, energyDrift, estimatePeriod, upwardCrossings } from "@/lib/simulate/checks";
import { doublePendulum, pendulum } from "./systems";

const g = 9.81;

describe("energy drift", () => {
  it("measures the largest deviation relative to the initial energy and warns above the threshold", () => {
    const report = energyDrift([-10, -10.00001, -9.99998, -10.00002], { threshold: 1e-6 });
    expect(report.maxDeviation).toBeCloseTo(2e-5, 12);
    expect(report.relativeDrift).toBeCloseTo(2e-6, 12);
    expect(report.warning).toBe(true);
    expect(Array.from(report.series).map((v) => Number(v.toFixed(9)))).toEqual([0, -1e-6, 2e-6, -2e-6]);
    expect(energyDrift([-10, -10.00001], { threshold: 1e-5 }).warning).toBe(false);
  });

  it("uses the given scale when the initial energy is zero, and reports NaN as infinite drift", () => {
    const report = energyDrift([0, 1e-9, -2e-9], { scale: 4 });
    expect(report.reference).toBe(4);
    expect(report.relativeDrift).toBeCloseTo(5e-10, 20);
    expect(energyDrift([1, Number.NaN, 1]).relativeDrift).toBe(Infinity);
    expect(energyDrift([1, Number.NaN, 1]).warning).toBe(true);
  });
});

describe("period from crossings", () => {
  it("recovers the period of a sampled sine, closely with the Hermite refinement", () => {
    const w = 2 * Math.PI * 1.7;
    const times = Array.from({ length: 400 }, (_, k) => k * 0.01);
    // A phase shift puts the crossings away from the samples and off the inflection point of a biased signal.
    const values = times.map((t) => Math.sin(w * t + 0.3) + 0.4);
    const rates = times.map((t) => w * Math.cos(w * t + 0.3));
    const hermite = estimatePeriod(times, values, rates, 0)!;
    const linear = estimatePeriod(times, values, undefined, 0)!;
    expect(Math.abs(hermite.period - 1 / 1.7)).toBeLessThan(1e-7);
    // Without rates the crossing times carry the O(h²) error of the chord.
    expect(Math.abs(linear.period - 1 / 1.7)).toBeLessThan(1e-3);
    expect(hermite.crossings).toBe(linear.crossings);
    // Each crossing solves sin(w t + 0.3) = −0.4, up to the cubic Hermite
    // interpolation error h⁴·max|f⁗|/384 = 1e-8·w⁴/384 ≈ 3.4e-7 (standard bound).
    for (const crossing of upwardCrossings(times, values, rates, 0)) {
      expect(Math.abs(Math.sin(w * crossing + 0.3) + 0.4)).toBeLessThan(3.5e-7);
    }
  });

  it("returns null without two crossings", () => {
    expect(estimatePeriod([0, 1, 2], [1, 2, 3])).toBeNull();
  });
});

describe("small-oscillation check", () => {
  it("passes a pendulum against ω = √(g/l) and fails it against a wrong frequency", () => {
    // Linearization of the pendulum: ω² = g/l (any mechanics text — from memory).
    const right = checkSmallOscillation(pendulum({ l: 0.8 }), { expectedFrequency: Math.sqrt(g / 0.8) });
    expect(right.passed).toBe(true);
    expect(right.relativeError!).toBeLessThan(1e-6);
    const wrong = checkSmallOscillation(pendulum({ l: 0.8 }), { expectedFrequency: Math.sqrt(g / 0.8) * 1.01 });
    expect(wrong.passed).toBe(false);
    expect(wrong.relativeError!).toBeCloseTo(0.01 / 1.01, 5);
  });

  it("checks both double-pendulum modes along their mode shapes (Taylor, Classical Mechanics, normal modes — from memory)", () => {
    // m1 = m2, l1 = l2 = l: ω² = (2 ∓ √2) g/l with shapes (1, ±√2).
    const system = doublePendulum({ l1: 0.5, l2: 0.5 });
    const slow = checkSmallOscillation(system, { expectedFrequency: Math.sqrt(((2 - Math.SQRT2) * g) / 0.5), modeShape: [1, Math.SQRT2] });
    const fast = checkSmallOscillation(system, { expectedFrequency: Math.sqrt(((2 + Math.SQRT2) * g) / 0.5), modeShape: [1, -Math.SQRT2] });
    expect(slow.passed && fast.passed).toBe(true);
    expect(slow.coordinate).toBe("theta2");
    expect(Math.max(slow.relativeError!, fast.relativeError!)).toBeLessThan(1e-6);
  });

  it("reports a check that cannot be made", () => {
    // Upside-down pendulum (g < 0 flips gravity): no oscillation about θ = 0.
    const report = checkSmallOscillation(pendulum({ g: -g }), { expectedFrequency: 3, periods: 3 });
    expect(report.passed).toBe(false);
    expect(report.problem).toMatch(/no oscillation/);
  });
});
