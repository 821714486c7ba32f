/**
 * Simulation benchmark: the double pendulum (m1 = m2 = 1 kg, l1 = l2 = 1 m,
 * g = 9.81 m/s², both angles 2 rad at rest, 20 s, relative and absolute
 * tolerance 1e-10, output every 0.01 s) through the app's code path — derive
 * the model with the engine, compile M, f and the energy function (a
 * WebAssembly module generated from the expression trees, the tape where
 * WebAssembly is unavailable), integrate with the method the settings choose
 * ("auto": DOP853 at this tolerance).
 *
 * Then the same problem with a high-order general-purpose scientific
 * integrator on this machine: SciPy's solve_ivp with DOP853
 * (scripts/lib/bench-simulate-reference.py), run by HOLONOMY_PYTHON or python3
 * when SciPy imports; the reference fields are null otherwise.
 *
 * Prints one JSON object: {"totalMs", "cpuMs", "rhsEvaluations", "rhsPerSecond",
 * "energyDriftRel", "method", "evaluator", "referenceMs", "referenceCpuMs",
 * "referenceEvaluations", "ratio", "cpuRatio"}. totalMs (wall) and cpuMs (this
 * process's CPU time) are medians of seven runs of the integration (setup,
 * integration, energy along the output grid); derivation and compilation
 * happen once per model in the app and are not part of a run. rhsPerSecond =
 * rhsEvaluations / totalMs. ratio = totalMs / referenceMs (wall-clock
 * medians); cpuRatio = cpuMs / referenceCpuMs, the steadier figure when other
 * work shares the machine.
 */
import { spawnSync } from "node:child_process";
import path from "node:path";
import { compileExpressions, deriveModel, chainModel } from "../lib/mechanics";
import { energyDrift, integrate, type SimulationSettings, systemFromDerivation } from "../lib/simulate";

// m1 = m2 = 1 kg, l1 = l2 = 1 m, g = 9.81 m/s², built from Cartesian definitions like the app's template.
const model = chainModel({ links: 2, masses: [1, 1], lengths: [1, 1], gravity: 9.81 });

const settings: SimulationSettings = {
  initialCoordinates: { theta1: 2, theta2: 2 },
  endTime: 20,
  outputStep: 0.01,
  relativeTolerance: 1e-10,
  absoluteTolerance: 1e-10,
  timeLimitMs: 60_000,
};

const system = systemFromDerivation(model, deriveModel(model));

// Warm-up: V8 optimizes the hot paths (the integrator, the LU) and tiers the
// WebAssembly module up only after they have run for a while; a worker that
// simulates repeatedly runs warm. We time the steady state, so run the
// identical job a few times first.
for (let i = 0; i < 200; i++) integrate(system, settings);

// Timed: the median of several runs, so one pause of the shared machine does not decide it.
const runs: { ms: number; cpuMs: number; rhs: number; drift: number; method: string }[] = [];
for (let i = 0; i < 7; i++) {
  const cpu = process.cpuUsage();
  const started = performance.now();
  const result = integrate(system, settings);
  const drift = energyDrift(result.energy!).relativeDrift;
  const ms = performance.now() - started;
  const used = process.cpuUsage(cpu);
  if (result.status !== "completed") {
    process.stderr.write(`simulation failed: ${result.failure!.reason}: ${result.failure!.message}\n`);
    process.exit(1);
  }
  runs.push({ ms, cpuMs: (used.user + used.system) / 1000, rhs: result.stats.rhsEvaluations, drift, method: result.stats.method });
}
const median = <T>(items: T[], key: (item: T) => number): T => [...items].sort((a, b) => key(a) - key(b))[Math.floor(items.length / 2)]!;
const typical = median(runs, (r) => r.ms);
const cpuMs = median(runs, (r) => r.cpuMs).cpuMs;
const round = (v: number, digits: number) => Number(v.toPrecision(digits));

/** SciPy's DOP853 on the same problem, or null when Python or SciPy is missing. */
function reference(): { ms: number; cpuMs: number; nfev: number } | null {
  const python = process.env.HOLONOMY_PYTHON || "python3";
  const script = path.join(path.dirname(new URL(import.meta.url).pathname), "lib", "bench-simulate-reference.py");
  const run = spawnSync(python, [script], { encoding: "utf8", timeout: 120_000 });
  if (run.error || run.status !== 0) {
    if (run.status !== 3) process.stderr.write(`reference integrator did not run (${run.error?.message ?? `status ${run.status}`}); fields are null\n`);
    return null;
  }
  const parsed = JSON.parse(run.stdout.trim().split("\n").pop()!) as { ms: number; cpuMs: number; nfev: number };
  return parsed;
}
const ref = reference();

process.stdout.write(
  JSON.stringify({
    totalMs: round(typical.ms, 4),
    cpuMs: round(cpuMs, 4),
    rhsEvaluations: typical.rhs,
    rhsPerSecond: Math.round(typical.rhs / (typical.ms / 1000)),
    energyDriftRel: round(typical.drift, 3),
    method: typical.method,
    evaluator: compileExpressions(["x"], ["x"]).backend,
    referenceMs: ref ? round(ref.ms, 4) : null,
    referenceCpuMs: ref ? round(ref.cpuMs, 4) : null,
    referenceEvaluations: ref ? ref.nfev : null,
    ratio: ref ? round(typical.ms / ref.ms, 3) : null,
    cpuRatio: ref ? round(cpuMs / ref.cpuMs, 3) : null,
  }) + "\n",
);
