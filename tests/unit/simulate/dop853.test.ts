import { describe, expect, it } from "vitest";
import { Dop853, type RightHandSide } from "@/lib/simulate/dop853";

const oscillator: RightHandSide = (_t, y, dydt) => {
  dydt[0] = y[1]!;
  dydt[1] = -y[0]!;
};

describe("DOP853", () => {
  it("follows the harmonic oscillator x'' = −x to the tolerance, at step ends and in the dense output", () => {
    // Exact solution x = cos t, x' = −sin t (fact of the trade).
    const solver = new Dop853(2);
    solver.relativeTolerance = 1e-10;
    solver.absoluteTolerance = 1e-10;
    let worstStep = 0;
    let worstDense = 0;
    let steps = 0;
    const result = solver.solve(oscillator, 0, [1, 0], 20, (_step, xOld, x, y, dense) => {
      worstStep = Math.max(worstStep, Math.abs(y[0]! - Math.cos(x)), Math.abs(y[1]! + Math.sin(x)));
      if (!dense) return;
      steps++;
      for (let j = 1; j < 10; j++) {
        const t = xOld + ((x - xOld) * j) / 10;
        worstDense = Math.max(worstDense, Math.abs(dense(0, t) - Math.cos(t)), Math.abs(dense(1, t) + Math.sin(t)));
      }
    });
    expect(result.outcome).toBe("converged");
    expect(result.x).toBe(20);
    // Three periods at 1e-10: the global error stays within a few tolerances (measured 3e-10).
    expect(worstStep).toBeLessThan(1e-9);
    // The order-7 dense output between step ends is as accurate as the steps (measured 4.5e-10).
    expect(worstDense).toBeLessThan(1e-9);
    // An order-8 method takes long steps here: about 0.35 s, 12 evaluations each plus 3 for the dense output.
    expect(steps).toBeLessThan(80);
    expect(solver.evaluations).toBeLessThan(steps * 15 + 10);
  });

  it("converges at order 8: ten times tighter tolerance costs about 10^(1/8) times the steps", () => {
    // Hairer, Nørsett & Wanner, Solving ODE I, II.4: with error ∝ h^(p+1) per step the number of steps grows like
    // tol^(−1/(p+1)); p = 8 gives 10^(1/9) ≈ 1.29 per decade (a lower order would need far more).
    const stepsAt = (tol: number) => {
      const solver = new Dop853(2);
      solver.relativeTolerance = tol;
      solver.absoluteTolerance = tol;
      solver.solve(oscillator, 0, [1, 0], 20);
      return solver.acceptedSteps;
    };
    const ratio = stepsAt(1e-12) / stepsAt(1e-8);
    // Four decades: 10^(4/9) ≈ 2.8; a fifth-order method would need 10^(4/6) ≈ 4.6.
    expect(ratio).toBeGreaterThan(2);
    expect(ratio).toBeLessThan(3.6);
  });

  it("keeps the Kepler orbit's energy and closes it after one period", () => {
    // Hairer, Lubich & Wanner, Geometric Numerical Integration (2nd ed.), I.2.3: the Kepler problem
    // q'' = −q/|q|³ from q = (1 − e, 0), p = (0, √((1 + e)/(1 − e))) has energy H = −1/2 and period 2π.
    const e = 0.6;
    const kepler: RightHandSide = (_t, y, dydt) => {
      const r3 = Math.pow(y[0]! * y[0]! + y[1]! * y[1]!, 1.5);
      dydt[0] = y[2]!;
      dydt[1] = y[3]!;
      dydt[2] = -y[0]! / r3;
      dydt[3] = -y[1]! / r3;
    };
    const energy = (y: ArrayLike<number>) => 0.5 * (y[2]! ** 2 + y[3]! ** 2) - 1 / Math.hypot(y[0]!, y[1]!);
    const y0 = [1 - e, 0, 0, Math.sqrt((1 + e) / (1 - e))];
    expect(energy(y0)).toBeCloseTo(-0.5, 14);
    const solver = new Dop853(4);
    solver.relativeTolerance = 1e-12;
    solver.absoluteTolerance = 1e-12;
    let drift = 0;
    const result = solver.solve(kepler, 0, y0, 10 * 2 * Math.PI, (_step, _xOld, _x, y) => {
      drift = Math.max(drift, Math.abs(energy(y) + 0.5));
    });
    expect(result.outcome).toBe("converged");
    // Ten revolutions at 1e-12: energy drift well under 1e-9, and the orbit closes at 2π·10.
    expect(drift).toBeLessThan(1e-9);
    for (let i = 0; i < 4; i++) expect(Math.abs(result.y[i]! - y0[i]!)).toBeLessThan(1e-8);
  });

  it("reports a step limit, and stops when the step callback says so", () => {
    const limited = new Dop853(2);
    limited.maxSteps = 5;
    limited.relativeTolerance = 1e-12;
    limited.absoluteTolerance = 1e-12;
    expect(limited.solve(oscillator, 0, [1, 0], 100).outcome).toBe("max_steps");
    const stopped = new Dop853(2);
    const result = stopped.solve(oscillator, 0, [1, 0], 100, (step) => step < 3);
    expect(result.outcome).toBe("stopped");
    expect(stopped.acceptedSteps).toBe(3);
  });

  it("lets an error thrown by the right-hand side through (the integrator stops runs that way)", () => {
    class Stop extends Error {}
    const solver = new Dop853(1);
    const run = () =>
      solver.solve(
        (t, y, dydt) => {
          if (t > 1) throw new Stop("limit");
          dydt[0] = -y[0]!;
        },
        0,
        [1],
        2,
      );
    expect(run).toThrow(Stop);
    expect(solver.acceptedSteps).toBeGreaterThan(0);
  });
});
