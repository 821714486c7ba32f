import type { Model } from "@/lib/mechanics";

/**
 * Two arms of a test-rig double pendulum: chaotic at large swings, so a long span at a tight
 * tolerance keeps a queue worker busy for a few seconds (the cross-process job tests).
 */
export const doubleArm: Model = {
  title: "Rig double arm",
  coordinates: [
    { name: "a", unit: "rad" },
    { name: "b", unit: "rad" },
  ],
  parameters: [
    { name: "m", unit: "kg", value: 1 },
    { name: "l", unit: "m", value: 1 },
    { name: "g", unit: "m/s^2", value: 9.81 },
  ],
  definitions: [
    { name: "x1", expr: "l*sin(a)" },
    { name: "y1", expr: "-l*cos(a)" },
    { name: "x2", expr: "x1 + l*sin(b)" },
    { name: "y2", expr: "y1 - l*cos(b)" },
  ],
  kinetic: "1/2*m*(x1'^2 + y1'^2) + 1/2*m*(x2'^2 + y2'^2)",
  potential: "m*g*y1 + m*g*y2",
};

/**
 * Settings of a doubleArm run that lasts seconds whatever the simulator's speed: it ends at its
 * 4 s time limit (stored as a run that failed on the time limit), long before its end time.
 */
export const LONG_ARM_RUN = {
  initialCoordinates: { a: 2, b: 2.5 },
  endTime: 1_000_000,
  outputStep: 50,
  relativeTolerance: 1e-10,
  absoluteTolerance: 1e-10,
  timeLimitMs: 4_000,
};
