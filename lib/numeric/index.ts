// Public API of the shared numerics: dense linear solves used by both the engine
// (lib/mechanics) and the simulator (lib/simulate), so neither imports the other.
export { SingularMatrixError } from "./errors";
export { createLuWorkspace, factorInPlace, substituteInPlace, solveInPlace, DEFAULT_SINGULAR_TOLERANCE } from "./linear-solve";
export type { LuWorkspace } from "./linear-solve";
