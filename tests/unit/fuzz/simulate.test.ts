import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { EngineLimitError, ExpressionError, ModelError } from "@/lib/mechanics";
import { integrate, SimulationSetupError, SingularMatrixError, systemFromMassMatrixForm, type SimulationSettings } from "@/lib/simulate";
import { adversarialExpression, describeThrown, fuzzSettings, grammarExpression, timed } from "./support";

// Each run gets a short wall-clock budget; the simulator must stop itself at
// it (status "failed", reason "time_limit") rather than run on.
const TIME_LIMIT_MS = 150;
const SLACK_MS = 1500;

const COORDINATES = ["x", "q"];
const PARAMETERS = ["m", "k", "c"];
const names = [...COORDINATES, ...PARAMETERS, "u", "t"];

const number = fc.oneof(
  { weight: 4, arbitrary: fc.double({ min: -10, max: 10, noNaN: true }) },
  {
    weight: 1,
    arbitrary: fc.constantFrom(0, -0, Number.NaN, Number.POSITIVE_INFINITY, Number.NEGATIVE_INFINITY, 1e308, -1e308, 5e-324, Number.MAX_SAFE_INTEGER),
  },
);

const expression = fc.oneof({ weight: 5, arbitrary: grammarExpression(names) }, { weight: 1, arbitrary: adversarialExpression() });
const positive = fc.double({ min: 0.1, max: 10, noNaN: true });

/** A mass-matrix system of one or two coordinates with fuzzed entries. */
const systemForm = fc.integer({ min: 1, max: 2 }).chain((n) =>
  fc.record({
    coordinates: fc.constant(COORDINATES.slice(0, n)),
    massMatrix: fc.oneof(
      {
        weight: 2,
        arbitrary: fc.constant(
          n === 1
            ? [["m"]]
            : [
                ["m", "0"],
                ["0", "m*k^2 + 1"],
              ],
        ),
      },
      {
        weight: 1,
        arbitrary: fc.array(fc.array(fc.oneof(fc.constant("m"), fc.constant("0"), expression), { minLength: n, maxLength: n }), { minLength: n, maxLength: n }),
      },
    ),
    forcing: fc.array(expression, { minLength: n, maxLength: n }),
    energy: fc.option(expression, { nil: undefined }),
    values: fc.oneof({ weight: 3, arbitrary: fc.tuple(positive, positive, positive) }, { weight: 1, arbitrary: fc.tuple(number, number, number) }),
  }),
);

/** Settings a person would give. */
const saneSettings = fc.record({
  initialCoordinates: fc.record({ x: fc.double({ min: -1, max: 1, noNaN: true }), q: fc.double({ min: -1, max: 1, noNaN: true }) }),
  endTime: fc.double({ min: 0.01, max: 2, noNaN: true }),
  outputStep: fc.double({ min: 0.005, max: 0.5, noNaN: true }),
});

/** Settings with any field absurd. */
const absurdSettings = fc.record(
  {
    initialCoordinates: fc.oneof(
      fc.record({ x: number, q: number }, { requiredKeys: [] }),
      fc.array(number, { maxLength: 3 }),
      fc.dictionary(fc.string({ maxLength: 4 }), number, { maxKeys: 2 }),
    ),
    initialRates: fc.record({ x: number, q: number }, { requiredKeys: [] }),
    startTime: number,
    endTime: fc.oneof(fc.double({ min: 0.01, max: 5, noNaN: true }), number),
    outputStep: fc.oneof(fc.double({ min: 1e-3, max: 1, noNaN: true }), number),
    relativeTolerance: fc.oneof(fc.constant(1e-6), number),
    absoluteTolerance: fc.oneof(fc.constant(1e-8), number),
    inputs: fc.dictionary(fc.constantFrom("u", "v", "__proto__"), fc.oneof(grammarExpression(["t", "m", "k", "c", "x"]), adversarialExpression()), {
      maxKeys: 2,
    }),
    parameters: fc.dictionary(fc.constantFrom(...PARAMETERS, "zz", "constructor"), number, { maxKeys: 3 }),
    maxSteps: fc.oneof(fc.constant(20_000), fc.integer({ min: -5, max: 50_000 }), number),
  },
  { requiredKeys: ["initialCoordinates", "endTime"] },
);

const settings = fc.oneof({ weight: 2, arbitrary: saneSettings }, { weight: 1, arbitrary: absurdSettings });

function isTypedSimulationError(error: unknown): boolean {
  return (
    error instanceof SimulationSetupError ||
    error instanceof SingularMatrixError ||
    error instanceof ExpressionError ||
    error instanceof ModelError ||
    error instanceof EngineLimitError
  );
}

describe("simulator under fuzzing", () => {
  it("answers every system and settings with a result or a typed setup error, within its time limit", () => {
    let ran = 0;
    fc.assert(
      fc.property(systemForm, settings, (form, given) => {
        const [m, k, c] = form.values;
        const built = timed(() =>
          systemFromMassMatrixForm({
            coordinates: form.coordinates,
            inputs: ["u"],
            parameters: [
              { name: "m", value: m },
              { name: "k", value: k },
              { name: "c", value: c },
            ],
            massMatrix: form.massMatrix,
            forcing: form.forcing,
            energy: form.energy,
          }),
        );
        if ("error" in built.outcome) {
          expect(isTypedSimulationError(built.outcome.error), describeThrown(built.outcome.error)).toBe(true);
          return;
        }
        const system = built.outcome.value;
        const run = timed(() => integrate(system, { ...(given as SimulationSettings), timeLimitMs: TIME_LIMIT_MS, maxOutputPoints: 20_000 }));
        expect(run.ms, `simulating ${JSON.stringify({ form, given })}`).toBeLessThan(TIME_LIMIT_MS + SLACK_MS);
        if ("error" in run.outcome) {
          expect(isTypedSimulationError(run.outcome.error), describeThrown(run.outcome.error)).toBe(true);
          return;
        }
        ran++;
        const result = run.outcome.value;
        expect(["completed", "failed"]).toContain(result.status);
        expect(result.status === "failed").toBe(result.failure !== null);
        const { times, coordinates, rates } = result.trajectory;
        // The kept trajectory is consistent and finite up to where the run stopped.
        for (const column of [...coordinates, ...rates]) expect(column.length).toBe(times.length);
        for (let i = 1; i < times.length; i++) expect(times[i]!).toBeGreaterThan(times[i - 1]!);
        for (const column of [...coordinates, ...rates]) for (const value of column) expect(Number.isFinite(value)).toBe(true);
      }),
      fuzzSettings("simulator", 150),
    );
    // The generator must reach the integrator, not only the setup checks.
    expect(ran).toBeGreaterThan(0);
  }, 120_000);
});
