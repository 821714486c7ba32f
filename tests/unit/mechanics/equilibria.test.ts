import { describe, expect, it } from "vitest";
import { findEquilibria, wrapAngle } from "@/lib/mechanics/equilibria";
import type { MassMatrixSystem } from "@/lib/mechanics/compile";

/**
 * Bead of mass m on a hoop of radius R spinning at a constant rate ω about its
 * vertical diameter, θ measured from the bottom. From L = ½ m R² (θ'² + ω² sin²θ) + m g R cos θ:
 *   m R² θ'' = m R² ω² sin θ cos θ − m g R sin θ.
 * J. R. Taylor, Classical Mechanics (2005), the bead-on-a-spinning-hoop example of ch. 7 (from memory).
 */
const beadOnHoop = (omega: number): MassMatrixSystem => ({
  coordinates: ["theta"],
  coordinateUnits: ["rad"],
  massMatrix: [["m*R^2"]],
  forcing: ["m*R^2*w^2*sin(theta)*cos(theta) - m*g*R*sin(theta)"],
  parameters: { m: 0.05, R: 0.3, g: 9.81, w: omega },
});

describe("findEquilibria", () => {
  it("bead on a spinning hoop above the critical rate: cos θ = g/(ω²R) is stable, the bottom and top unstable", () => {
    const omega = 10; // ω² R = 30 > g
    const equilibria = findEquilibria(beadOnHoop(omega));
    const theta0 = Math.acos(9.81 / (omega * omega * 0.3));
    // Taylor, Classical Mechanics, ch. 7 (from memory): equilibria θ = 0, π and cos θ = g/(ω²R) when ω² > g/R.
    // Listed stable first (the linearization cell's default), then by angle.
    expect(equilibria.map((e) => e.q[0])).toEqual([-theta0, theta0, 0, Math.PI].map((v) => expect.closeTo(v, 10)));
    const byAngle = (angle: number) => equilibria.find((e) => Math.abs(wrapAngle(e.q[0]! - angle)) < 1e-8)!;
    expect(byAngle(theta0).stability).toBe("stable");
    expect(byAngle(-theta0).stability).toBe("stable");
    expect(byAngle(0).stability).toBe("unstable");
    expect(byAngle(Math.PI).stability).toBe("unstable");
    // Small oscillations about θ0: Ω² = ω² sin²θ0 (from memory; re-derived from ∂f/∂θ at cos θ0 = g/(ω²R)).
    expect(byAngle(theta0).linearization.modes[0]!.omegaSquared).toBeCloseTo(omega * omega * Math.sin(theta0) ** 2, 8);
    expect(byAngle(theta0).isolated).toBe(true);
  });

  it("bead on a spinning hoop below the critical rate: only the bottom is stable", () => {
    const equilibria = findEquilibria(beadOnHoop(3)); // ω² R = 2.7 < g
    // Same source (from memory): for ω² < g/R the bottom is the only stable equilibrium.
    expect(equilibria.map((e) => e.q[0])).toEqual([expect.closeTo(0, 10), expect.closeTo(Math.PI, 10)]);
    expect(equilibria.map((e) => e.stability)).toEqual(["stable", "unstable"]);
  });

  it("double pendulum: four equilibria, only hanging down is stable", () => {
    const equilibria = findEquilibria({
      coordinates: ["theta1", "theta2"],
      coordinateUnits: ["rad", "rad"],
      massMatrix: [
        ["(m1 + m2)*l1^2", "m2*l1*l2*cos(theta1 - theta2)"],
        ["m2*l1*l2*cos(theta1 - theta2)", "m2*l2^2"],
      ],
      forcing: ["-m2*l1*l2*theta2'^2*sin(theta1 - theta2) - (m1 + m2)*g*l1*sin(theta1)", "m2*l1*l2*theta1'^2*sin(theta1 - theta2) - m2*g*l2*sin(theta2)"],
      parameters: { m1: 1, m2: 1, l1: 1, l2: 1, g: 9.81 },
    });
    // Fact of the trade: a double pendulum rests with each link straight down or straight up.
    expect(equilibria).toHaveLength(4);
    const stable = equilibria.filter((e) => e.stability === "stable");
    expect(stable).toHaveLength(1);
    expect(stable[0]!.q).toEqual([expect.closeTo(0, 10), expect.closeTo(0, 10)]);
  });

  it("a damped pendulum with a held torque input: the equilibrium is asymptotically stable at sin θ = u/(m g l)", () => {
    const [m, g, l, u] = [2, 9.81, 0.5, 3];
    const equilibria = findEquilibria(
      {
        coordinates: ["theta"],
        coordinateUnits: ["rad"],
        inputs: ["u"],
        massMatrix: [["m*l^2"]],
        forcing: ["u - c*theta' - m*g*l*sin(theta)"],
        parameters: { m, g, l, c: 0.4 },
      },
      { inputs: [u] },
    );
    // Static balance of torques, fact of the trade: m g l sin θ = u.
    const down = equilibria.find((e) => e.stability === "stable")!;
    expect(down.q[0]).toBeCloseTo(Math.asin(u / (m * g * l)), 10);
    expect(down.asymptotic).toBe(true);
    expect(equilibria.filter((e) => e.stability === "unstable").map((e) => e.q[0])).toEqual([expect.closeTo(Math.PI - Math.asin(u / (m * g * l)), 10)]);
  });

  it("marks a family of equilibria along a cyclic coordinate as not isolated", () => {
    // Cart–pole, pole as a point mass, θ from upright: Florian (2007), "Correct equations for the dynamics of the cart-pole system" (from memory; REFERENCES.md).
    const equilibria = findEquilibria({
      coordinates: ["x", "theta"],
      coordinateUnits: ["m", "rad"],
      massMatrix: [
        ["M + m", "m*l*cos(theta)"],
        ["m*l*cos(theta)", "m*l^2"],
      ],
      forcing: ["m*l*theta'^2*sin(theta)", "m*g*l*sin(theta)"],
      parameters: { M: 1, m: 0.2, l: 0.5, g: 9.81 },
    });
    expect(equilibria.length).toBeGreaterThan(0);
    expect(equilibria.every((e) => !e.isolated)).toBe(true);
    expect(new Set(equilibria.map((e) => Math.round(Math.abs(e.q[1]!) * 1e6)))).toEqual(new Set([0, Math.round(Math.PI * 1e6)]));
    // Upright (θ = 0) is unstable. Hanging (θ = π) has ±iω and, from the cart with neither
    // stiffness nor damping, λ = 0 twice with one eigenvector: a Jordan block, the cart drifts
    // at constant speed after a push, which the rule counts as unstable (fact of the trade:
    // a defective eigenvalue on the imaginary axis gives a solution growing like t).
    const upright = equilibria.filter((e) => Math.abs(e.q[1]!) < 1e-9);
    const hanging = equilibria.filter((e) => Math.abs(e.q[1]!) > 3);
    expect(upright.length).toBeGreaterThan(0);
    expect(hanging.length).toBeGreaterThan(0);
    expect(upright.map((e) => e.stability)).toEqual(upright.map(() => "unstable"));
    expect(hanging.map((e) => e.stability)).toEqual(hanging.map(() => "unstable"));
    expect(hanging[0]!.stabilityReason).toMatch(/Jordan block/);
  });

  it("a cart–pole whose cart is damped hangs in marginal equilibrium: λ = 0 once, with its own eigenvector", () => {
    const equilibria = findEquilibria({
      coordinates: ["x", "theta"],
      coordinateUnits: ["m", "rad"],
      massMatrix: [
        ["M + m", "m*l*cos(theta)"],
        ["m*l*cos(theta)", "m*l^2"],
      ],
      forcing: ["m*l*theta'^2*sin(theta) - b*x'", "m*g*l*sin(theta)"],
      parameters: { M: 1, m: 0.2, l: 0.5, g: 9.81, b: 0.3 },
    });
    // Same model as above with wheel damping b: the cart's rest position is free (λ = 0) but a push dies out (λ = −b/M…).
    const hanging = equilibria.filter((e) => Math.abs(e.q[1]!) > 3);
    expect(hanging.map((e) => e.stability)).toEqual(hanging.map(() => "marginal"));
    expect(hanging[0]!.stabilityReason).toMatch(/λ = 0 is an eigenvalue/);
    // Marginal before unstable in the list.
    expect(equilibria[0]!.stability).toBe("marginal");
  });

  it("wraps angles into (−π, π]", () => {
    expect(wrapAngle(3 * Math.PI)).toBeCloseTo(Math.PI, 12);
    expect(wrapAngle(-Math.PI)).toBeCloseTo(Math.PI, 12);
    expect(wrapAngle(7)).toBeCloseTo(7 - 2 * Math.PI, 12);
  });
});

describe("findEquilibria with position constraints", () => {
  it("Cartesian pendulum: hanging down is stable, standing up unstable, each with its rod force", () => {
    const equilibria = findEquilibria({
      coordinates: ["x", "y"],
      coordinateUnits: ["m", "m"],
      massMatrix: [
        ["m", "0"],
        ["0", "m"],
      ],
      forcing: ["2*x*lambda_rod", "-m*g + 2*y*lambda_rod"],
      parameters: { m: 2, g: 9.81, l: 1.5 },
      constraints: [{ name: "rod", kind: "position", symbol: "lambda_rod", expr: "x^2 + y^2 - l^2" }],
    });
    // A pendulum rests straight down (stable) or straight up (unstable): fact of the trade.
    expect(equilibria.map((e) => e.q)).toEqual([
      [expect.closeTo(0, 9), expect.closeTo(-1.5, 9)],
      [expect.closeTo(0, 9), expect.closeTo(1.5, 9)],
    ]);
    expect(equilibria.map((e) => e.stability)).toEqual(["stable", "unstable"]);
    expect(equilibria.every((e) => e.isolated)).toBe(true);
    // The rod holds the weight: T = −2 l λ = m g hanging (tension), −m g standing (compression); fact of the trade.
    expect(equilibria.map((e) => -2 * 1.5 * e.multipliers![0]!)).toEqual([expect.closeTo(2 * 9.81, 9), expect.closeTo(-2 * 9.81, 9)]);
  });
});
