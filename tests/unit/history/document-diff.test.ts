import { describe, expect, it } from "vitest";
import { cellText, compareDocuments, compareParameters } from "@/lib/history/document-diff";
import { createCell, modelToDocument, type DerivationDocument } from "@/lib/notebook/document";
import { templateModel } from "@/lib/notebook/templates";

function hookBlock(): DerivationDocument {
  let n = 0;
  return modelToDocument(templateModel("single-pendulum"), () => `c${(n += 1)}`);
}

function edit(doc: DerivationDocument, change: (cell: DerivationDocument["cells"][number]) => DerivationDocument["cells"][number]): DerivationDocument {
  return { ...doc, cells: doc.cells.map(change) };
}

describe("cellText", () => {
  it("writes rows one per line with units and descriptions, and expressions as typed", () => {
    const doc = hookBlock();
    const parameters = doc.cells.find((cell) => cell.kind === "parameters")!;
    expect(cellText(parameters).split("\n")).toContain("m = 40 [kg] — hook block mass");
    const kinetic = doc.cells.find((cell) => cell.kind === "kinetic")!;
    expect(cellText(kinetic)).toBe("1/2*m*l^2*theta'^2");
  });
});

describe("cellText of a study cell", () => {
  it("lists the varied parameters, the cases and the watched names, so a reviewer sees a changed study", () => {
    const study = createCell("study", "s1");
    study.settings = {
      ...study.settings,
      mode: "tolerance",
      samples: "50",
      parameters: [
        { name: "l", values: "", distribution: "uniform", min: "6.175", max: "6.825", mean: "", sd: "" },
        { name: "m", values: "", distribution: "normal", min: "500", max: "2000", mean: "1500", sd: "300" },
      ],
      cases: [{ name: "hard", initialCoordinates: { yl: "-6.5" }, initialRates: {}, inputs: { F: "1000*tanh(t)" } }],
      watch: ["rope_angle", "rope_tension"],
    };
    const lines = cellText(study).split("\n");
    expect(lines).toContain("mode: tolerance");
    expect(lines).toContain("vary l: uniform 6.175 … 6.825");
    expect(lines).toContain("vary m: normal, mean 1500, sd 300, within 500 … 2000");
    expect(lines).toContain("  input F(t) = 1000*tanh(t)");
    expect(lines).toContain("watch: rope_angle, rope_tension");
  });
});

describe("compareDocuments", () => {
  it("finds nothing to show between a document and itself", () => {
    const doc = hookBlock();
    const comparison = compareDocuments(doc, doc);
    expect(comparison.sameText).toBe(true);
    expect(comparison.cells.every((cell) => cell.status === "unchanged")).toBe(true);
    expect(comparison.parameters.every((change) => change.status === "unchanged")).toBe(true);
  });

  it("reports a changed expression cell with the changed words, and an added cell", () => {
    const before = hookBlock();
    let after = edit(before, (cell) => (cell.kind === "potential" ? { ...cell, expr: "-m*g*l*cos(theta) + 1/2*k*theta^2" } : cell));
    after = { ...after, cells: [...after.cells, { id: "n1", kind: "note", collapsed: false, markdown: "Spring added at the pivot." }] };
    const comparison = compareDocuments(before, after);
    const potential = comparison.cells.find((cell) => cell.kind === "potential")!;
    expect(potential.status).toBe("changed");
    expect(potential.lines.map((line) => line.kind)).toEqual(["removed", "added"]);
    const added = potential.lines[1]!;
    expect(
      added.kind === "added" &&
        added.parts
          ?.filter((part) => part.changed)
          .map((part) => part.text)
          .join(""),
    ).toContain("k*theta^2");
    const note = comparison.cells.find((cell) => cell.id === "n1")!;
    expect(note).toMatchObject({ status: "added", added: 1, removed: 0 });
    expect(comparison.sameText).toBe(false);
  });

  it("lists a removed cell last and notices reordering", () => {
    const before = hookBlock();
    const [first, second, ...rest] = before.cells;
    const after = { ...before, cells: [second!, first!, ...rest.slice(0, -1)] };
    const comparison = compareDocuments(before, after);
    expect(comparison.moved).toBe(true);
    expect(comparison.cells.at(-1)).toMatchObject({ id: before.cells.at(-1)!.id, status: "removed" });
  });

  it("tells a layout-only change (a collapsed cell) from a change of text", () => {
    const before = hookBlock();
    const after = edit(before, (cell) => (cell.kind === "kinetic" ? { ...cell, collapsed: true } : cell));
    expect(compareDocuments(before, after).sameText).toBe(true);
  });
});

describe("compareParameters", () => {
  it("matches rows by name, then by id so a renamed parameter is one changed row; new and deleted rows are added and removed", () => {
    const before = hookBlock();
    const after = edit(before, (cell) =>
      cell.kind === "parameters"
        ? {
            ...cell,
            rows: [
              ...cell.rows.filter((row) => row.name !== "g").map((row) => (row.name === "l" ? { ...row, name: "L", value: "4.0" } : row)),
              { id: "p9", name: "c", unit: "N*m*s/rad", value: "2", description: "pivot damping" },
            ],
          }
        : cell,
    );
    const changes = compareParameters(before, after);
    expect(changes.map((change) => `${change.status}:${change.before?.name ?? ""}>${change.after?.name ?? ""}`)).toEqual([
      "unchanged:m>m",
      "changed:l>L",
      "added:>c",
      "removed:g>",
    ]);
    expect(changes[1]!.fields).toEqual(["name", "value"]);
  });
});
