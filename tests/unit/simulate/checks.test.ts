import { describe, expect, it } from "vitest";
import { checkSmallOscillation, energyDrift, estimatePeriod, explainSmallOscillation, INTEGRATION_ERROR_FACTOR, upwardCrossings } from "@/lib/simulate/checks";
import { systemFromMassMatrixForm } from "@/lib/simulate/system";
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

  it("puts a large swing's lower frequency down to its amplitude: ω(A)/ω₀ ≈ 1 − A²/16", () => {
    const omega = Math.sqrt(g / 0.8);
    const amplitude = 0.05;
    const report = checkSmallOscillation(pendulum({ l: 0.8 }), { expectedFrequency: omega, amplitude });
    // Landau & Lifshitz, Mechanics, 3rd ed., §28 (anharmonic oscillations; from memory): the simple
    // pendulum's frequency falls by A²/16 at amplitude A, here 1.6e-4 — above the old fixed 1e-4.
    expect(report.relativeError!).toBeCloseTo(amplitude ** 2 / 16, 6);
    expect(report.amplitudeShift!).toBeCloseTo(-(amplitude ** 2) / 16, 6);
    expect(report.passed).toBe(true);
    expect(report.threshold!).toBeGreaterThan(report.relativeError!);
    expect(explainSmallOscillation(report)).toMatch(
      /^They agree: the relative difference 1\.6e-4 is accounted for — the swing of amplitude 0\.05 shifts the frequency by -1\.6e-4/,
    );
  });

  it("flags a linearization off by 2.5e-4 at a small amplitude, and says what the difference means", () => {
    const omega = Math.sqrt(g / 0.8);
    const report = checkSmallOscillation(pendulum({ l: 0.8 }), { expectedFrequency: omega * (1 - 2.5e-4) });
    expect(report.passed).toBe(false);
    // At 1e-4 rad the amplitude accounts for 1e-8/16 (Landau & Lifshitz §28, as above): next to nothing.
    expect(Math.abs(report.amplitudeShift!)).toBeLessThan(1e-9);
    expect(report.threshold!).toBeLessThan(1e-8);
    const text = explainSmallOscillation(report);
    expect(text).toMatch(/^They disagree: of the relative difference 2\.5e-4, /);
    expect(text).toContain("the 2.5e-4 left is more than the");
    expect(text).toContain("does not describe small motions of these equations about this point");
  });

  it("compares a damped swing with the damped frequency and derives the allowance from the integration tolerance", () => {
    // Seat rig of the demo: m = 95 kg, k = 42 kN/m, c = 1300 N·s/m, ζ = 0.33. Its free swing oscillates at
    // ω_d = ω√(1 − ζ²), with λ = −ζω ± iω_d (Thomson & Dahleh, Theory of Vibration with Applications, 5th ed., §2.6 — from memory).
    const [m, k, c] = [95, 42000, 1300];
    const seat = systemFromMassMatrixForm({
      coordinates: ["z"],
      parameters: [
        { name: "m", value: m },
        { name: "k", value: k },
        { name: "c", value: c },
      ],
      massMatrix: [["m"]],
      forcing: ["-k*z - c*z'"],
    });
    const omega = Math.sqrt(k / m);
    const decay = c / (2 * m);
    const damped = Math.sqrt(omega * omega - decay * decay);
    const report = checkSmallOscillation(seat, { expectedFrequency: omega, eigenvalue: { re: -decay, im: damped } });
    expect(report.comparedFrequency).toBe(damped);
    expect(report.passed).toBe(true);
    expect(report.relativeError!).toBeLessThan(1e-8);
    // The swing decays by e^(−2.16) a period, so it is timed for ln(10³)/2.16 → 3 periods, not 10.
    expect(report.periods).toBe(3);
    expect(explainSmallOscillation(report)).toContain("compared with the damped frequency 19.8819 rad/s");
    // Compared with the undamped ω instead, the 5 % difference (1 − √(1 − ζ²)) is a disagreement.
    const undamped = checkSmallOscillation(seat, { expectedFrequency: omega });
    expect(undamped.passed).toBe(false);
    expect(undamped.relativeError!).toBeCloseTo(1 - damped / omega, 6);

    const loose = checkSmallOscillation(seat, {
      expectedFrequency: omega,
      eigenvalue: { re: -decay, im: damped },
      settings: { relativeTolerance: 1e-6, absoluteTolerance: 1e-15 },
    });
    expect(loose.integrationAllowance).toBeCloseTo(INTEGRATION_ERROR_FACTOR * 1e-6, 12);
    expect(loose.passed).toBe(true);
  });

  it("reports a check that cannot be made", () => {
    // Upside-down pendulum (g < 0 flips gravity): no oscillation about θ = 0.
    const report = checkSmallOscillation(pendulum({ g: -g }), { expectedFrequency: 3, periods: 3 });
    expect(report.passed).toBe(false);
    expect(report.problem).toMatch(/no oscillation/);
  });
});
