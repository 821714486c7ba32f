import { describe, expect, it } from "vitest";
import { EigenvalueDecomposition, Matrix, inverse } from "ml-matrix";
import { energyDrift, estimatePeriod, upwardCrossings } from "@/lib/simulate/checks";
import { SimulationSetupError } from "@/lib/simulate/errors";
import { integrate, integrateInSlices } from "@/lib/simulate/integrate";
import type { MechanicalSystem } from "@/lib/simulate/system";
import { dampedOscillator, doublePendulum, keplerOrbit, pendulum } from "./systems";

const g = 9.81;

describe("integrate: published check values", () => {
  // Abramowitz & Stegun, Handbook of Mathematical Functions, 17.3 and Table 17.1:
  // complete elliptic integral K against the modular angle α = θ0/2; the pendulum
  // released from rest at θ0 has period T = 4 √(l/g) K(sin(θ0/2)).
  const table171 = [
    { thetaDeg: 60, K: 1.68575 }, // α = 30°
    { thetaDeg: 90, K: 1.854075 }, // α = 45°
    { thetaDeg: 150, K: 2.768063 }, // α = 75°
  ];
  for (const { thetaDeg, K } of table171) {
    it(`large-amplitude pendulum period at θ0 = ${thetaDeg}° matches 4√(l/g)·K (A&S Table 17.1)`, () => {
      const l = 0.8;
      const expected = 4 * Math.sqrt(l / g) * K;
      const theta0 = (thetaDeg * Math.PI) / 180;
      const result = integrate(pendulum({ l, g }), {
        initialCoordinates: { theta: theta0 },
        endTime: 3.2 * expected,
        outputStep: expected / 400,
        relativeTolerance: 1e-12,
        absoluteTolerance: 1e-12,
      });
      expect(result.status).toBe("completed");
      const estimate = estimatePeriod(result.trajectory.times, result.trajectory.coordinates[0]!, result.trajectory.rates[0]!, 0);
      expect(estimate).not.toBeNull();
      expect(estimate!.crossings).toBe(3);
      // K is tabulated to 7 significant figures: agreement to 1e-6 relative is the table's own precision.
      expect(Math.abs(estimate!.period - expected) / expected).toBeLessThan(1e-6);
    });
  }

  it("small-oscillation frequency of the pendulum is √(g/l) (linearization; any mechanics text — from memory)", () => {
    const l = 0.8;
    const omega = Math.sqrt(g / l);
    const result = integrate(pendulum({ l, g }), {
      initialCoordinates: { theta: 1e-4 },
      endTime: (10 * 2 * Math.PI) / omega,
      outputStep: (2 * Math.PI) / omega / 100,
      relativeTolerance: 1e-12,
      absoluteTolerance: 1e-16,
    });
    const estimate = estimatePeriod(result.trajectory.times, result.trajectory.coordinates[0]!, result.trajectory.rates[0]!, 0)!;
    // The amplitude correction T ≈ T0 (1 + θ0²/16) is 6e-10 here, far below the check.
    expect(Math.abs((2 * Math.PI) / estimate.period - omega) / omega).toBeLessThan(1e-8);
  });

  it("keeps the double pendulum's energy to 1e-8 relative over 20 s at tolerance 1e-10", () => {
    // Energy function h = T + V is conserved (no dissipation, no explicit t): any
    // analytical mechanics text — from memory. Both angles 2 rad, at rest.
    const result = integrate(doublePendulum(), {
      initialCoordinates: [2, 2],
      endTime: 20,
      outputStep: 0.01,
      relativeTolerance: 1e-10,
      absoluteTolerance: 1e-10,
    });
    expect(result.status).toBe("completed");
    expect(result.trajectory.times.length).toBe(2001);
    // The tolerance holds on the interpolated grid because odex steps at a hundredth of it (see integrate.ts).
    expect(result.stats.stepTolerance).toEqual({ relative: 1e-12, absolute: 1e-12 });
    const drift = energyDrift(result.energy!);
    // h0 = −(m1+m2) g l1 cos 2 − m2 g l2 cos 2 = −3 g cos 2 (hand calculation).
    expect(result.energy![0]).toBeCloseTo(-3 * g * Math.cos(2), 12);
    expect(drift.relativeDrift).toBeLessThan(1e-8);
    expect(drift.warning).toBe(false);
    // The motion is violent (not a trivially small drift): the second angle flips over.
    const theta2 = result.trajectory.coordinates[1]!;
    expect(Math.max(...theta2) - Math.min(...theta2)).toBeGreaterThan(Math.PI);
  });

  it("matches the damped oscillator's closed form (Rao, Mechanical Vibrations — from memory)", () => {
    const m = 2;
    const c = 0.8;
    const k = 50;
    const x0 = 0.1;
    const v0 = -0.3;
    const w0 = Math.sqrt(k / m);
    const zeta = c / (2 * Math.sqrt(k * m));
    const wd = w0 * Math.sqrt(1 - zeta * zeta);
    const closedForm = (t: number) => Math.exp(-zeta * w0 * t) * (x0 * Math.cos(wd * t) + ((v0 + zeta * w0 * x0) / wd) * Math.sin(wd * t));
    const result = integrate(dampedOscillator({ m, c, k }), {
      initialCoordinates: [x0],
      initialRates: [v0],
      endTime: 10,
      outputStep: 0.005,
      relativeTolerance: 1e-11,
      absoluteTolerance: 1e-13,
    });
    expect(result.status).toBe("completed");
    let worst = 0;
    result.trajectory.times.forEach((t, i) => {
      worst = Math.max(worst, Math.abs(result.trajectory.coordinates[0]![i]! - closedForm(t)));
    });
    expect(worst).toBeLessThan(1e-10);
    // A dissipative system must lose energy: the drift check flags it.
    expect(energyDrift(result.energy!).warning).toBe(true);
  });

  it("completes a Kepler orbit in the period of Kepler's third law (Goldstein, Classical Mechanics, ch. 3 — from memory)", () => {
    const mu = 2;
    const k = 5;
    const r0 = 1;
    const phiRate0 = 2; // above the circular-orbit rate √(k/(μ r0³)) ≈ 1.58: an ellipse with perihelion r0
    // Energy E = μ r0² φ'²/2 − k/r0 and semi-major axis a = −k/(2E) (Goldstein ch. 3 — from memory).
    const energy = (mu * r0 * r0 * phiRate0 * phiRate0) / 2 - k / r0;
    const a = -k / (2 * energy);
    const period = 2 * Math.PI * Math.sqrt((mu * a ** 3) / k);
    const result = integrate(keplerOrbit({ mu, k }), {
      initialCoordinates: { r: r0, phi: 0 },
      initialRates: { r: 0, phi: phiRate0 },
      endTime: 1.2 * period,
      outputStep: period / 2000,
      relativeTolerance: 1e-12,
      absoluteTolerance: 1e-12,
    });
    expect(result.status).toBe("completed");
    const { times, coordinates, rates } = result.trajectory;
    const fullTurn = upwardCrossings(times, coordinates[1]!, rates[1]!, 2 * Math.PI);
    expect(fullTurn).toHaveLength(1);
    expect(Math.abs(fullTurn[0]! - period) / period).toBeLessThan(1e-8);
    // Aphelion 2a − r0 is reached half a period in (same source).
    const maxR = Math.max(...coordinates[0]!);
    expect(maxR).toBeCloseTo(2 * a - r0, 6);
    // Angular momentum μ r² φ' is conserved (same source).
    const l0 = mu * r0 * r0 * phiRate0;
    for (let i = 0; i < times.length; i += 97) {
      expect(Math.abs(mu * coordinates[0]![i]! ** 2 * rates[1]![i]! - l0) / l0).toBeLessThan(1e-9);
    }
  });

  it("swings the double pendulum's two normal modes at ω² = (2 ∓ √2) g/l (Taylor, Classical Mechanics, normal modes — from memory)", () => {
    const l = 1;
    // Cross-check of the remembered values: eigenvalues of M⁻¹K of the linearized
    // system (M = l²[[2,1],[1,1]], K = g l [[2,0],[0,1]]) from ml-matrix.
    const eig = new EigenvalueDecomposition(
      inverse(
        new Matrix([
          [2 * l * l, l * l],
          [l * l, l * l],
        ]),
      ).mmul(
        new Matrix([
          [2 * g * l, 0],
          [0, g * l],
        ]),
      ),
    );
    const library = [...eig.realEigenvalues].sort((x, y) => x - y);
    const remembered = [(2 - Math.SQRT2) * (g / l), (2 + Math.SQRT2) * (g / l)];
    expect(library[0]).toBeCloseTo(remembered[0]!, 10);
    expect(library[1]).toBeCloseTo(remembered[1]!, 10);

    const shapes = [
      [1, Math.SQRT2],
      [1, -Math.SQRT2],
    ];
    shapes.forEach((shape, mode) => {
      const omega = Math.sqrt(remembered[mode]!);
      const amplitude = 1e-5;
      const result = integrate(doublePendulum({ l1: l, l2: l }), {
        initialCoordinates: shape.map((s) => s * amplitude),
        endTime: (10 * 2 * Math.PI) / omega,
        outputStep: (2 * Math.PI) / omega / 100,
        relativeTolerance: 1e-12,
        absoluteTolerance: 1e-17,
      });
      const estimate = estimatePeriod(result.trajectory.times, result.trajectory.coordinates[1]!, result.trajectory.rates[1]!, 0)!;
      expect(estimate.spread).toBeLessThan(1e-6); // a pure mode: every interval the same
      expect(Math.abs((2 * Math.PI) / estimate.period - omega) / omega).toBeLessThan(1e-7);
    });
  });
});

describe("integrate: inputs, parameters and output grid", () => {
  it("drives an undamped oscillator with an input expression of t and a parameter (forced response — Rao, from memory)", () => {
    const m = 2;
    const k = 50;
    const F0 = 4;
    const w = 3;
    const w0 = Math.sqrt(k / m);
    // From rest: x(t) = F0/(k − m w²) · (sin wt − (w/w0) sin w0 t).
    const closedForm = (t: number) => (F0 / (k - m * w * w)) * (Math.sin(w * t) - (w / w0) * Math.sin(w0 * t));
    const system = dampedOscillator({ m, k, c: 0 });
    const byExpression = integrate(system, {
      initialCoordinates: [0],
      endTime: 6,
      outputStep: 0.01,
      inputs: { u: "F0*sin(3*t)" },
      parameters: { F0 },
      relativeTolerance: 1e-11,
      absoluteTolerance: 1e-13,
    });
    const byFunction = integrate(system, {
      initialCoordinates: [0],
      endTime: 6,
      outputStep: 0.01,
      inputs: { u: (t) => F0 * Math.sin(w * t) },
      relativeTolerance: 1e-11,
      absoluteTolerance: 1e-13,
    });
    for (const result of [byExpression, byFunction]) {
      expect(result.status).toBe("completed");
      result.trajectory.times.forEach((t, i) => {
        expect(Math.abs(result.trajectory.coordinates[0]![i]! - closedForm(t))).toBeLessThan(1e-10);
      });
    }
    expect(byExpression.parameterValues.F0).toBe(F0);
  });

  it("ends the grid exactly at the end time and honours explicit output times", () => {
    const result = integrate(pendulum(), { initialCoordinates: [0.3], endTime: 1.05, outputStep: 0.1 });
    const times = Array.from(result.trajectory.times);
    expect(times).toHaveLength(12);
    expect(times[10]).toBeCloseTo(1.0, 15);
    expect(times[11]).toBe(1.05);
    const explicit = integrate(pendulum(), { initialCoordinates: [0.3], endTime: 2, outputTimes: [0, 0.123, 1.5, 2] });
    expect(Array.from(explicit.trajectory.times)).toEqual([0, 0.123, 1.5, 2]);
    expect(explicit.trajectory.coordinates[0]![0]).toBe(0.3);
  });

  it("gives the same trajectory when run in slices as in one go", async () => {
    const settings = { initialCoordinates: [2, 2], endTime: 5, outputStep: 0.01, relativeTolerance: 1e-11, absoluteTolerance: 1e-11 };
    const whole = integrate(doublePendulum(), settings);
    const sliced = await integrateInSlices(doublePendulum(), settings, 0.5);
    expect(sliced.status).toBe("completed");
    expect(sliced.trajectory.times.length).toBe(whole.trajectory.times.length);
    let worst = 0;
    for (let i = 0; i < whole.trajectory.times.length; i++) {
      worst = Math.max(worst, Math.abs(whole.trajectory.coordinates[0]![i]! - sliced.trajectory.coordinates[0]![i]!));
    }
    // Restarting the integrator changes its steps, so the (chaotic) trajectories
    // agree to the tolerance's reach over 5 s, not bit for bit.
    expect(worst).toBeLessThan(1e-5);
  });

  it("refuses bad settings with the field named", () => {
    const system = dampedOscillator();
    const attempt = (settings: Parameters<typeof integrate>[1]) => {
      try {
        integrate(system, settings);
      } catch (error) {
        return error as SimulationSetupError;
      }
      throw new Error("no error");
    };
    const base = { initialCoordinates: [0.1], endTime: 1, outputStep: 0.01 };
    expect(attempt({ ...base, parameters: { q: 1 } })).toMatchObject({ code: "unknown_name", field: "parameters.q" });
    expect(attempt({ ...base, inputs: { u: "2*sin(w*t)" } })).toMatchObject({ code: "expression", field: "inputs.u" });
    expect(attempt({ ...base, inputs: { u: "2*sin(w*t)" } }).message).toMatch(/column 7/);
    expect(attempt({ ...base, outputStep: 1e-9 })).toMatchObject({ code: "too_large", field: "outputStep" });
    expect(attempt({ ...base, endTime: 0 })).toMatchObject({ code: "settings", field: "endTime" });
    expect(attempt({ ...base, initialCoordinates: [1, 2] })).toMatchObject({ code: "dimension", field: "initialCoordinates" });
    expect(attempt({ ...base, relativeTolerance: 0 })).toMatchObject({ field: "relativeTolerance" });
    const symbolic: MechanicalSystem = { ...system, parameters: [{ name: "m" }, ...system.parameters.slice(1)] };
    expect(() => integrate(symbolic, base)).toThrow(expect.objectContaining({ code: "missing_parameter", field: "parameters.m" }));
  });
});

describe("integrate: failures keep the partial trajectory", () => {
  /** A coordinate whose inertia vanishes at t = 0.5 s (a test double, hand-written). */
  const losingInertia: MechanicalSystem = {
    coordinateNames: ["x", "y"],
    inputNames: [],
    parameters: [],
    massForcing: (v, out) => {
      const t = v[4]!;
      out[0] = 1;
      out[1] = 0;
      out[2] = 0;
      out[3] = Math.max(0, 1 - 2 * t);
      out[4] = -v[0]!; // x'' = −x
      out[5] = 0;
    },
  };

  it("stops at a singular mass matrix with the reason and the time reached", () => {
    const result = integrate(losingInertia, { initialCoordinates: [1, 0], endTime: 2, outputStep: 0.01, relativeTolerance: 1e-10 });
    expect(result.status).toBe("failed");
    expect(result.failure!.reason).toBe("singular_mass_matrix");
    expect(result.failure!.timeReached).toBeGreaterThan(0.3);
    expect(result.failure!.timeReached).toBeLessThanOrEqual(0.5);
    const { times, coordinates } = result.trajectory;
    expect(times.length).toBeGreaterThan(30);
    expect(times[times.length - 1]!).toBeLessThanOrEqual(result.failure!.timeReached);
    // Up to there the kept trajectory is right: x = cos t.
    times.forEach((t, i) => expect(Math.abs(coordinates[0]![i]! - Math.cos(t))).toBeLessThan(1e-8));
  });

  it("stops at the wall-time limit with the time reached and what was computed", () => {
    const result = integrate(doublePendulum(), { initialCoordinates: [2, 2], endTime: 100_000, outputStep: 0.5, relativeTolerance: 1e-12, timeLimitMs: 250 });
    expect(result.status).toBe("failed");
    expect(result.failure!.reason).toBe("time_limit");
    expect(result.failure!.timeReached).toBeGreaterThan(0);
    expect(result.failure!.timeReached).toBeLessThan(100_000);
    expect(result.trajectory.times.length).toBeGreaterThan(1);
    expect(result.trajectory.times[result.trajectory.times.length - 1]!).toBeLessThanOrEqual(result.failure!.timeReached);
    expect(result.stats.wallTimeMs).toBeLessThan(1000);
    expect(result.energy!.length).toBe(result.trajectory.times.length);
  });

  it("stops when cancelled, reporting progress on the way", () => {
    const signal = { aborted: false };
    const seen: number[] = [];
    const result = integrate(doublePendulum(), {
      initialCoordinates: [2, 2],
      endTime: 100_000,
      outputStep: 0.5,
      relativeTolerance: 1e-12,
      progressIntervalMs: 1,
      signal,
      onProgress: (progress) => {
        seen.push(progress.fraction);
        if (seen.length === 3) signal.aborted = true;
      },
    });
    expect(result.failure!.reason).toBe("cancelled");
    expect(seen.length).toBe(3);
    expect(seen[2]!).toBeGreaterThan(seen[0]!);
  });

  it("reports step-size underflow when the solution blows up in finite time", () => {
    // x'' = 2x³ with x(0) = 1, x'(0) = 1 has the solution x = 1/(1 − t) (check by
    // substitution), which escapes at t = 1.
    const escaping: MechanicalSystem = {
      coordinateNames: ["x"],
      inputNames: [],
      parameters: [],
      massForcing: (v, out) => {
        out[0] = 1;
        out[1] = 2 * v[0]! ** 3;
      },
    };
    const result = integrate(escaping, { initialCoordinates: [1], initialRates: [1], endTime: 2, outputStep: 0.01, relativeTolerance: 1e-10 });
    expect(result.status).toBe("failed");
    expect(["step_size_underflow", "non_finite_state"]).toContain(result.failure!.reason);
    expect(result.failure!.timeReached).toBeGreaterThan(0.999);
    expect(result.failure!.timeReached).toBeLessThan(1.001);
    const { times, coordinates } = result.trajectory;
    for (let i = 0; i < times.length && times[i]! <= 0.9; i++) {
      expect(Math.abs(coordinates[0]![i]! * (1 - times[i]!) - 1)).toBeLessThan(1e-8);
    }
  });

  it("counts every right-hand-side evaluation", () => {
    let calls = 0;
    const counted: MechanicalSystem = {
      coordinateNames: ["x"],
      inputNames: [],
      parameters: [],
      massForcing: (v, out) => {
        calls++;
        out[0] = 1;
        out[1] = -v[0]!;
      },
    };
    const result = integrate(counted, { initialCoordinates: [1], endTime: 3, outputStep: 0.1 });
    expect(result.stats.rhsEvaluations).toBe(calls);
    expect(calls).toBeGreaterThan(10);
  });
});
