import { describe, expect, it } from "vitest";
import { jsonSyntaxIssues, lineAndColumn, readModelFile } from "@/lib/mechanics/model-file";
import { collectModelIssues, validateModel } from "@/lib/mechanics/validate-model";
import { greekAdvice, hasGreekLetter, spellGreekLetters } from "@/lib/mechanics/expr/greek";
import { parseExpression } from "@/lib/mechanics/expr/parse";
import type { Model } from "@/lib/mechanics/model";

const model = (): Model => ({
  title: "Jib trolley with hanging hook",
  coordinates: [
    { name: "x", unit: "m" },
    { name: "phi", unit: "rad" },
  ],
  parameters: [
    { name: "m", unit: "kg", value: 120 },
    { name: "l", unit: "m", value: 3 },
    { name: "g", unit: "m/s^2", value: 9.81 },
  ],
  kinetic: "1/2*m*(x'^2 + l^2*phi'^2 + 2*l*x'*phi'*cos(phi))",
  potential: "-m*g*l*cos(phi)",
});

describe("model file syntax", () => {
  it("gives 1-based lines and columns", () => {
    expect(lineAndColumn("ab\ncd\nef", 0)).toEqual({ line: 1, column: 1 });
    expect(lineAndColumn("ab\ncd\nef", 4)).toEqual({ line: 2, column: 2 });
    expect(lineAndColumn("ab\ncd\nef", 6)).toEqual({ line: 3, column: 1 });
  });

  it("reports every malformed line at once, each with its line and column", () => {
    const text = ["{", '  "title": "Hoist"', '  "coordinates": [],', '  "kinetic": 1/2,', "}"].join("\n");
    const { issues } = jsonSyntaxIssues(text);
    expect(issues.map((issue) => issue.message)).toEqual([
      'line 3, column 3: a "," is missing before this',
      'line 4, column 15: unexpected character "/"',
      'line 5, column 1: a property name in double quotes is expected (a comma too many before "}"?)',
    ]);
    expect(issues.every((issue) => issue.field === "file" && issue.code === "syntax")).toBe(true);
  });

  it("says an empty file is empty, and refuses comments", () => {
    expect(jsonSyntaxIssues("  \n").issues.map((issue) => issue.message)).toEqual(["the file is empty"]);
    expect(jsonSyntaxIssues('{\n  // note\n  "title": "x"\n}').issues[0]?.message).toBe("line 2, column 3: comments are not allowed in a model file");
  });

  it("reads a well-formed file as the model", () => {
    const { model: read, issues } = readModelFile(JSON.stringify(model(), null, 2));
    expect(issues).toEqual([]);
    expect(read).toEqual(model());
  });
});

describe("every model problem at once", () => {
  it("lists every format problem of the file, not only the first", () => {
    const { model: read, issues } = collectModelIssues({ ...model(), coordinates: [{ name: "x" }, { name: "phi", unit: 3 }], kinetic: 7 });
    expect(read).toBeNull();
    expect(issues.map((issue) => issue.field)).toEqual(["coordinates[0].unit", "coordinates[1].unit", "kinetic"]);
  });

  it("lists problems in several expressions and names together", () => {
    const { issues } = collectModelIssues({
      ...model(),
      parameters: [...model().parameters, { name: "m", unit: "kg" }],
      kinetic: "1/2*m*(x'^2 + L^2*phi'^2",
      potential: "-m*g*h*cos(phi) + k*x",
    });
    expect(issues.map((issue) => issue.toLine())).toEqual([
      'parameters[3].name: "m" is already declared as a parameter',
      'kinetic, column 25: expected ")" to close the "(" at column 7',
      'potential, column 6: unknown symbol "h"',
      'potential, column 19: unknown symbol "k"',
    ]);
    // validateModel still stops at the first, the same one.
    expect(() => validateModel({ ...model(), parameters: [...model().parameters, { name: "m", unit: "kg" }], kinetic: "x'" })).toThrow(
      '"m" is already declared',
    );
  });
});

describe("Greek letters", () => {
  it("spells letters as the names that render as them", () => {
    expect(spellGreekLetters("θ1 + ω'")).toBe("theta1 + omega'");
    expect(spellGreekLetters("Φ*ϕ*φ")).toBe("Phi*phi*phi");
    expect(hasGreekLetter("theta")).toBe(false);
    expect(hasGreekLetter("aθ")).toBe(true);
  });

  it("says how to write a Greek letter where one is refused", () => {
    expect(greekAdvice("θ1")).toBe('write Greek letters by name (θ as "theta"); they are shown as the letter');
    expect(() => parseExpression("m*θ'^2")).toThrow('unexpected character "θ": write Greek letters by name (θ as "theta")');
    const { issues } = collectModelIssues({ ...model(), coordinates: [{ name: "θ", unit: "rad" }] });
    expect(issues[0]?.toLine()).toBe('coordinates[0].name: "θ": write Greek letters by name (θ as "theta"); they are shown as the letter');
  });
});
