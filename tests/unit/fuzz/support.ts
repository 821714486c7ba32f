import fc from "fast-check";

/**
 * Settings shared by the property-based fuzz suites.
 *
 * Every suite prints the seed it runs with, so a failure can be replayed:
 *
 *   HOLONOMY_FUZZ_SEED=1234 npx vitest run --project unit tests/unit/fuzz
 *
 * fast-check's failure message also names the seed and the shrunk path; give
 * both (`HOLONOMY_FUZZ_SEED=1234 HOLONOMY_FUZZ_PATH="3:1:0"`) to replay exactly
 * the failing case. The default run is kept short; `HOLONOMY_FUZZ_RUNS=20`
 * multiplies every property's number of runs for a long session.
 */

function integerFromEnv(name: string): number | null {
  const text = process.env[name];
  if (text === undefined || text.trim() === "") return null;
  const value = Number(text);
  if (!Number.isSafeInteger(value)) throw new Error(`${name} must be an integer, got "${text}"`);
  return value;
}

const seed = integerFromEnv("HOLONOMY_FUZZ_SEED") ?? (Date.now() ^ (Math.random() * 0x7fffffff)) | 0;
const multiplier = Math.max(1, integerFromEnv("HOLONOMY_FUZZ_RUNS") ?? 1);
const replayPath = process.env.HOLONOMY_FUZZ_PATH?.trim() || undefined;

/**
 * fast-check parameters for one property: the shared seed, `runs` × the
 * HOLONOMY_FUZZ_RUNS multiplier, and the replay path when one is given.
 * Logs one line naming the seed, so every run can be reproduced.
 */
export function fuzzSettings<Ts = unknown>(suite: string, runs: number): fc.Parameters<Ts> {
  const numRuns = runs * multiplier;
  console.info(`[fuzz] ${suite}: seed ${seed}, ${numRuns} runs (replay with HOLONOMY_FUZZ_SEED=${seed})`);
  return { seed, numRuns, ...(replayPath ? { path: replayPath } : {}) };
}

/** Runs `work`, returning how long it took in milliseconds with its outcome. */
export function timed<T>(work: () => T): { ms: number; outcome: { value: T } | { error: unknown } } {
  const began = performance.now();
  try {
    const value = work();
    return { ms: performance.now() - began, outcome: { value } };
  } catch (error) {
    return { ms: performance.now() - began, outcome: { error } };
  }
}

/** A short description of a thrown value for an assertion message. */
export function describeThrown(error: unknown): string {
  if (error instanceof Error) return `${error.name}: ${error.message}\n${error.stack ?? ""}`;
  return String(error);
}

// ---------------------------------------------------------------------------
// Expression text

const NAMES = ["x", "q", "theta", "theta1", "m", "l", "g", "k", "c", "u", "t", "pi", "_a", "Omega", "zz9", "alpha"];
const FUNCTIONS = ["sin", "cos", "tan", "exp", "log", "sqrt", "abs", "sinh", "cosh", "tanh", "asin", "acos", "atan"];

/** Expression text built from the grammar (mostly well formed, names drawn from a small set). */
export function grammarExpression(names: readonly string[] = NAMES): fc.Arbitrary<string> {
  const { expr } = fc.letrec<{ expr: string; atom: string }>((tie) => ({
    atom: fc.oneof(
      { weight: 3, arbitrary: fc.constantFrom(...names) },
      { weight: 2, arbitrary: fc.tuple(fc.constantFrom(...names), fc.constantFrom("'", "''")).map(([n, p]) => n + p) },
      {
        weight: 3,
        arbitrary: fc.oneof(
          fc.integer({ min: 0, max: 40 }).map(String),
          fc.double({ min: 0, max: 1e6, noNaN: true }).map((v) => String(v).replace("e+", "e")),
        ),
      },
    ),
    expr: fc.oneof(
      { depthSize: "small", withCrossShrink: true },
      tie("atom"),
      fc.tuple(tie("expr"), fc.constantFrom(" + ", " - ", "*", "/", "^"), tie("expr")).map(([a, op, b]) => `${a}${op}${b}`),
      tie("expr").map((a) => `(${a})`),
      tie("expr").map((a) => `-${a}`),
      fc.tuple(fc.constantFrom(...FUNCTIONS), tie("expr")).map(([f, a]) => `${f}(${a})`),
    ),
  }));
  return expr;
}

const ADVERSARIAL_PIECES = [
  "(",
  ")",
  "((",
  "))",
  "^",
  "**",
  "'",
  "'''",
  "..",
  "1e999",
  "1e-999",
  "9".repeat(400),
  "0.",
  ".5",
  "e",
  "2x",
  "θ",
  "\u0000",
  "\uD800",
  "😀",
  "\t",
  "\n",
  ",",
  ";",
  "=",
  "[",
  "]",
  "{",
  "}",
  "#",
  "\\",
  "constructor",
  "__proto__",
  "toString",
  "hasOwnProperty",
  "foo(",
  "sin",
  "sin'",
  "pi'",
  "^-",
  "--",
  "+-+",
  "^33",
  "^-33",
  "/0",
];

/** Expression text with adversarial pieces spliced into grammatical text. */
export function adversarialExpression(): fc.Arbitrary<string> {
  return fc.tuple(grammarExpression(), fc.array(fc.tuple(fc.nat(), fc.constantFrom(...ADVERSARIAL_PIECES)), { maxLength: 4 })).map(([text, inserts]) => {
    let out = text;
    for (const [at, piece] of inserts) {
      const index = out.length === 0 ? 0 : at % (out.length + 1);
      out = out.slice(0, index) + piece + out.slice(index);
    }
    return out;
  });
}

/** Deep nesting and long chains: the shapes that stress recursion and limits. */
export function extremeExpression(): fc.Arbitrary<string> {
  return fc.oneof(
    fc.integer({ min: 1, max: 5000 }).map((n) => "(".repeat(n) + "x" + ")".repeat(n)),
    fc.integer({ min: 1, max: 5000 }).map((n) => "-".repeat(n) + "x"),
    fc.integer({ min: 1, max: 3000 }).map((n) => Array.from({ length: n }, () => "x").join("^")),
    fc.integer({ min: 1, max: 3000 }).map((n) => "sin(".repeat(n) + "x" + ")".repeat(n)),
    fc.integer({ min: 1, max: 4000 }).map((n) => Array.from({ length: n }, (_, i) => `x${i % 7}`).join("*")),
    fc.integer({ min: 7990, max: 8010 }).map((n) => "x+".repeat(Math.ceil(n / 2)).slice(0, n - 1) + "x"),
  );
}

/** Any text at all, with full Unicode. */
export function anyText(maxLength = 200): fc.Arbitrary<string> {
  return fc.oneof(
    fc.string({ maxLength }),
    fc.string({ unit: "binary", maxLength }),
    fc.string({ unit: fc.constantFrom(..."x()+-*/^'.0123456789e sinco"), maxLength }),
  );
}
