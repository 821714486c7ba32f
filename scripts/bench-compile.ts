/**
 * Micro-benchmark of the compiled right-hand side (lib/mechanics/compile.ts):
 * the double pendulum in mass-matrix form, 2×2 M and 2 forcing entries, with
 * the LU solve the simulator performs at every evaluation.
 *
 *   npx tsx scripts/bench-compile.ts
 *
 * Prints one JSON object. The simulator needs at least 1e6 evaluations per second.
 */
import { compileMassMatrixSystem, deriveModel } from "../lib/mechanics";

// Double pendulum with point masses on massless rods, derived by the engine from Cartesian
// definitions (m1 = m2 = 1 kg, l1 = l2 = 1 m, g = 9.81 m/s^2), as the simulator receives it.
const parameters = { m1: 1, m2: 1, l1: 1, l2: 1, g: 9.81 };
const derived = deriveModel({
  title: "Double pendulum",
  coordinates: [
    { name: "theta1", unit: "rad" },
    { name: "theta2", unit: "rad" },
  ],
  parameters: Object.entries(parameters).map(([name, value]) => ({ name, value, unit: name === "g" ? "m/s^2" : name.startsWith("m") ? "kg" : "m" })),
  definitions: [
    { name: "x1", expr: "l1*sin(theta1)" },
    { name: "y1", expr: "-l1*cos(theta1)" },
    { name: "x2", expr: "x1 + l2*sin(theta2)" },
    { name: "y2", expr: "y1 - l2*cos(theta2)" },
  ],
  kinetic: "1/2*m1*(x1'^2 + y1'^2) + 1/2*m2*(x2'^2 + y2'^2)",
  potential: "m1*g*y1 + m2*g*y2",
});
const system = { coordinates: derived.coordinates, massMatrix: derived.massMatrix, forcing: derived.forcing, parameters };

const rhs = compileMassMatrixSystem(system);
const x = new Float64Array([2, 2, 0, 0]);
const dxdt = new Float64Array(4);
const none = new Float64Array(0);

function run(count: number): number {
  let checksum = 0;
  for (let i = 0; i < count; i++) {
    // Vary the state so nothing can be hoisted out of the loop.
    x[0] = 2 + i * 1e-7;
    x[3] = i * 1e-7;
    rhs.stateDerivative(i * 1e-6, x, none, dxdt);
    checksum += dxdt[2]!;
  }
  return checksum;
}

run(200_000); // warm up the JIT
const count = 3_000_000;
const start = process.hrtime.bigint();
const checksum = run(count);
const seconds = Number(process.hrtime.bigint() - start) / 1e9;

console.log(
  JSON.stringify({
    system: "double pendulum, mass-matrix form with LU solve",
    instructions: rhs.instructionCount,
    evaluations: count,
    totalMs: Math.round(seconds * 1e4) / 10,
    rhsPerSecond: Math.round(count / seconds),
    checksum,
  }),
);
