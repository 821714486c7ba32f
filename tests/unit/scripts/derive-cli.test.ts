import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, readdirSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { describe, expect, it } from "vitest";

const root = path.resolve(import.meta.dirname, "../../..");
const examples = path.join(root, "examples");

// Each run starts a fresh process that transpiles TypeScript; on a busy machine that takes seconds.
const TIMEOUT = 150_000;

/** Through npm exactly as the contract states. */
function runCli(file: string) {
  const result = spawnSync("npm", ["run", "--silent", "derive", "--", file], { cwd: root, encoding: "utf8", timeout: TIMEOUT - 10_000 });
  return { status: result.status, stdout: result.stdout, stderr: result.stderr };
}

/** The same script without npm's start-up, for the many invalid-input cases. */
function runScript(file: string) {
  const result = spawnSync(process.execPath, ["--import", "tsx", "scripts/derive.ts", file], { cwd: root, encoding: "utf8", timeout: TIMEOUT - 10_000 });
  return { status: result.status, stdout: result.stdout, stderr: result.stderr };
}

const scratch = mkdtempSync(path.join(tmpdir(), "holonomy-derive-"));
function withChange(change: (model: Record<string, unknown>) => void): string {
  const model = JSON.parse(readFileSync(path.join(examples, "gantry-crane-trolley.model.json"), "utf8"));
  change(model);
  const file = path.join(scratch, `case-${Math.random().toString(36).slice(2)}.model.json`);
  writeFileSync(file, JSON.stringify(model, null, 2));
  return file;
}

describe("derive CLI", () => {
  it.each(readdirSync(examples).filter((f) => f.endsWith(".model.json")))(
    "prints one JSON object of the contract's shape for %s",
    (name) => {
      const { status, stdout, stderr } = runCli(path.join(examples, name));
      expect(stderr).toBe("");
      expect(status).toBe(0);
      const output = JSON.parse(stdout);
      expect(Object.keys(output).sort()).toEqual(["conserved", "coordinates", "energy", "equations", "forcing", "massMatrix", "timingMs"]);
      const n = output.coordinates.length;
      expect(output.equations).toHaveLength(n);
      for (const e of output.equations) {
        expect(Object.keys(e).sort()).toEqual(["coordinate", "latex", "residual"]);
        expect(typeof e.residual).toBe("string");
        expect(e.latex.length).toBeGreaterThan(0);
      }
      expect(output.massMatrix).toHaveLength(n);
      for (const row of output.massMatrix) expect(row).toHaveLength(n);
      expect(output.forcing).toHaveLength(n);
      expect(typeof output.energy).toBe("string");
      expect(Array.isArray(output.conserved)).toBe(true);
      expect(output.timingMs).toBeGreaterThanOrEqual(0);
    },
    TIMEOUT,
  );

  it(
    "writes the double pendulum's equations in the compact textbook form",
    () => {
      const output = JSON.parse(runCli(path.join(examples, "double-pendulum.model.json")).stdout);
      // Taylor, Classical Mechanics (2005), ch. 11 (from memory), multiplied by m2*l2.
      expect(output.equations[1].residual).toBe(
        "m2*l1*l2*theta1''*cos(theta1 - theta2) + m2*l2^2*theta2'' - m2*l1*l2*theta1'^2*sin(theta1 - theta2) + m2*l2*g*sin(theta2)",
      );
      expect(output.conserved.map((c: { name: string }) => c.name)).toEqual(["energy function"]);
    },
    TIMEOUT,
  );

  const invalid: [string, () => string, RegExp][] = [
    ["a parse error", () => withChange((m) => (m.kinetic = "1/2*M*x'^2 + ")), /^kinetic, column 14: /],
    ["an unknown symbol", () => withChange((m) => (m.potential = "m*g*yl + q")), /^potential, column 10: unknown symbol "q"$/],
    ["the rate of a parameter", () => withChange((m) => (m.kinetic = "1/2*M*x'^2 + m'")), /^kinetic, column 14: "m" is a parameter/],
    [
      "a circular definition",
      () =>
        withChange((m) => {
          const d = m.definitions as { expr: string }[];
          d[0]!.expr = "x + l*sin(phi) + 0*yl";
          d[1]!.expr = "-l*cos(phi) + 0*xl";
        }),
      /^definitions\[\d\]\.expr, column \d+: circular definition: /,
    ],
    ["a unit mismatch", () => withChange((m) => (m.potential = "m*g*yl + M*x")), /^potential, column \d+: /],
    ["a rate of an input in a force", () => withChange((m) => (m.forces = { x: "F'" })), /^forces\.x, column 1: /],
    [
      "a rate constraint not linear in the rates",
      () => withChange((m) => (m.rateConstraints = [{ name: "slip", expr: "x'^2" }])),
      /^rateConstraints\[0\]\.expr: the constraint is not linear in the rates/,
    ],
    [
      "a redundant constraint",
      () =>
        withChange((m) => {
          m.constraints = [
            { name: "rail", expr: "x - l" },
            { name: "rail2", expr: "2*x - 2*l" },
          ];
        }),
      /^constraints\[1\]: "rail2" is a combination of "rail"/,
    ],
    [
      "malformed JSON",
      () => {
        const file = path.join(scratch, "broken.model.json");
        writeFileSync(file, '{"title": "x",\n  coordinates: []}');
        return file;
      },
      /^model, line 2, column 3: not valid JSON/,
    ],
  ];
  it(
    "answers --help with the usage, the output keys and the multiplier convention",
    () => {
      const result = spawnSync(process.execPath, [path.join(root, "bin/holonomy-derive.mjs"), "--help"], {
        cwd: root,
        encoding: "utf8",
        timeout: TIMEOUT - 10_000,
      });
      expect(result.status).toBe(0);
      expect(result.stdout).toMatch(/^usage: holonomy-derive <file\.model\.json>/);
      expect(result.stdout).toContain('constraints   { name, kind: "position" | "rate", expr, multiplier }');
      expect(result.stdout).toContain("-lambda_<name>*dg/dq");
    },
    TIMEOUT,
  );

  it(
    "adds constraints with their multipliers and outputs, through the package binary",
    () => {
      const file = path.join(scratch, "atwood.model.json");
      writeFileSync(
        file,
        JSON.stringify({
          title: "Atwood machine",
          coordinates: [
            { name: "y1", unit: "m" },
            { name: "y2", unit: "m" },
          ],
          parameters: [
            { name: "m1", unit: "kg" },
            { name: "m2", unit: "kg" },
            { name: "g", unit: "m/s^2" },
            { name: "L", unit: "m" },
          ],
          kinetic: "m1/2*y1'^2 + m2/2*y2'^2",
          potential: "m1*g*y1 + m2*g*y2",
          constraints: [{ name: "rope", expr: "y1 + y2 - L" }],
          outputs: [{ name: "tension", expr: "lambda_rope", unit: "N" }],
        }),
      );
      const pkg = JSON.parse(readFileSync(path.join(root, "package.json"), "utf8"));
      const result = spawnSync(process.execPath, [path.join(root, pkg.bin["holonomy-derive"]), file], {
        cwd: root,
        encoding: "utf8",
        timeout: TIMEOUT - 10_000,
      });
      expect(result.stderr).toBe("");
      const output = JSON.parse(result.stdout);
      expect(output.equations.map((e: { residual: string }) => e.residual)).toEqual(["m1*y1'' - lambda_rope + m1*g", "m2*y2'' - lambda_rope + m2*g"]);
      expect(output.constraints).toHaveLength(1);
      expect(output.constraints[0]).toMatchObject({ name: "rope", kind: "position", expr: "y1 + y2 - L" });
      // Atwood machine: rope tension 2 m1 m2 g/(m1 + m2) (any mechanics text; from memory).
      expect(output.constraints[0].multiplier).toBe("2*m1*m2*g/(m1 + m2)");
      expect(output.outputs).toEqual([{ name: "tension", expr: "lambda_rope", unit: "N" }]);
    },
    TIMEOUT,
  );

  it.each(invalid)(
    "exits with status 2 and one stderr line for %s",
    (_, make, pattern) => {
      const { status, stdout, stderr } = runScript(make());
      expect(status).toBe(2);
      expect(stdout).toBe("");
      const lines = stderr.split("\n").filter((l) => l !== "");
      expect(lines).toHaveLength(1);
      expect(lines[0]).toMatch(pattern);
    },
    TIMEOUT,
  );
});
