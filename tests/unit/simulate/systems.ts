import { systemFromMassMatrixForm, type MechanicalSystem } from "@/lib/simulate/system";

/**
 * Test systems written in mass-matrix form as expression strings, compiled
 * through the same path the app uses (lib/mechanics/compile.ts).
 */

/** Simple pendulum, point mass m on a massless rod of length l, θ from the downward vertical. */
export function pendulum(values: { m?: number; l?: number; g?: number } = {}): MechanicalSystem {
  return systemFromMassMatrixForm({
    coordinates: ["theta"],
    parameters: [
      { name: "m", value: values.m ?? 1.3 },
      { name: "l", value: values.l ?? 0.8 },
      { name: "g", value: values.g ?? 9.81 },
    ],
    massMatrix: [["m*l^2"]],
    forcing: ["-m*g*l*sin(theta)"],
    energy: "1/2*m*l^2*theta'^2 - m*g*l*cos(theta)",
  });
}

/**
 * Double pendulum with point masses and massless rods (textbook form, e.g.
 * J. R. Taylor, Classical Mechanics (2005), ch. 11 — from memory), multiplied
 * out to M q'' = f.
 */
export function doublePendulum(values: { m1?: number; m2?: number; l1?: number; l2?: number; g?: number } = {}): MechanicalSystem {
  return systemFromMassMatrixForm({
    coordinates: ["theta1", "theta2"],
    parameters: [
      { name: "m1", value: values.m1 ?? 1 },
      { name: "m2", value: values.m2 ?? 1 },
      { name: "l1", value: values.l1 ?? 1 },
      { name: "l2", value: values.l2 ?? 1 },
      { name: "g", value: values.g ?? 9.81 },
    ],
    massMatrix: [
      ["(m1+m2)*l1^2", "m2*l1*l2*cos(theta1-theta2)"],
      ["m2*l1*l2*cos(theta1-theta2)", "m2*l2^2"],
    ],
    forcing: ["-m2*l1*l2*theta2'^2*sin(theta1-theta2) - (m1+m2)*g*l1*sin(theta1)", "m2*l1*l2*theta1'^2*sin(theta1-theta2) - m2*g*l2*sin(theta2)"],
    energy: "1/2*(m1+m2)*l1^2*theta1'^2 + 1/2*m2*l2^2*theta2'^2 + m2*l1*l2*theta1'*theta2'*cos(theta1-theta2) - (m1+m2)*g*l1*cos(theta1) - m2*g*l2*cos(theta2)",
  });
}

/** m x'' + c x' + k x = u, with u an input. */
export function dampedOscillator(values: { m?: number; c?: number; k?: number; F0?: number } = {}): MechanicalSystem {
  return systemFromMassMatrixForm({
    coordinates: ["x"],
    inputs: ["u"],
    parameters: [
      { name: "m", value: values.m ?? 2 },
      { name: "c", value: values.c ?? 0.8 },
      { name: "k", value: values.k ?? 50 },
      { name: "F0", value: values.F0 ?? 0 },
    ],
    massMatrix: [["m"]],
    forcing: ["-c*x' - k*x + u"],
    energy: "1/2*m*x'^2 + 1/2*k*x^2",
  });
}

/**
 * Relative motion under a central force with V = −k/r, in polar coordinates
 * (r, φ), reduced mass μ: T = μ/2 (r'² + r² φ'²).
 */
export function keplerOrbit(values: { mu?: number; k?: number } = {}): MechanicalSystem {
  return systemFromMassMatrixForm({
    coordinates: ["r", "phi"],
    parameters: [
      { name: "mu", value: values.mu ?? 2 },
      { name: "k", value: values.k ?? 5 },
    ],
    massMatrix: [
      ["mu", "0"],
      ["0", "mu*r^2"],
    ],
    forcing: ["mu*r*phi'^2 - k/r^2", "-2*mu*r*r'*phi'"],
    energy: "1/2*mu*(r'^2 + r^2*phi'^2) - k/r",
  });
}

/** The engine's seeded generator (mulberry32), so randomised tests are repeatable. */
export { seededRandom } from "@/lib/mechanics/canonical/evaluate";

/** Standard normal deviates from a uniform generator (Box–Muller). */
export function gaussian(random: () => number): () => number {
  return () => {
    const u = Math.max(random(), Number.MIN_VALUE);
    const v = random();
    return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
  };
}
