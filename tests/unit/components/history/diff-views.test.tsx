// @vitest-environment jsdom
import { cleanup, render, screen, within } from "@testing-library/react";
import { afterEach, describe, expect, it } from "vitest";
import { ParameterDiffTable } from "@/components/history/parameter-diff-table";
import { TermDiffView } from "@/components/history/term-diff-view";
import { TextDiffView } from "@/components/history/text-diff-view";
import { compareParameters } from "@/lib/history/document-diff";
import { compareEquations, motionNames } from "@/lib/history/term-diff";
import { textDiff } from "@/lib/history/text-diff";
import { modelToDocument } from "@/lib/notebook/document";
import { templateModel } from "@/lib/notebook/templates";

afterEach(cleanup);

function text(element: Element): string {
  return (element.textContent ?? "").replace(/\s+/g, " ").trim();
}

describe("TextDiffView", () => {
  it("marks removed and added lines for sight and for screen readers, with the changed words inside", () => {
    render(<TextDiffView lines={textDiff("m = 40 [kg]\ng = 9.81 [m/s^2]", "m = 55 [kg]\ng = 9.81 [m/s^2]")} label="Changes in Parameters" />);
    const group = screen.getByRole("group", { name: "Changes in Parameters" });
    const rows = group.querySelectorAll("[data-change]");
    expect([...rows].map((row) => row.getAttribute("data-change"))).toEqual(["removed", "added", "same"]);
    expect(text(rows[0]!)).toBe("−Removed: m = 40 [kg]");
    expect(text(rows[1]!)).toBe("+Added: m = 55 [kg]");
    expect(rows[0]!.querySelector("del")?.textContent).toBe("40");
    expect(rows[1]!.querySelector("ins")?.textContent).toBe("55");
    expect(rows[2]!.querySelector("ins, del")).toBeNull();
  });

  it("says so when there is nothing to show", () => {
    render(<TextDiffView lines={[]} label="Empty cell" />);
    expect(screen.getByText("Empty.")).toBeTruthy();
  });
});

describe("ParameterDiffTable", () => {
  it("writes a changed value as old → new and labels added and removed rows", () => {
    let n = 0;
    const before = modelToDocument(templateModel("single-pendulum"), () => `c${(n += 1)}`);
    const after = {
      ...before,
      cells: before.cells.map((cell) =>
        cell.kind === "parameters"
          ? {
              ...cell,
              rows: [
                ...cell.rows.filter((row) => row.name !== "g").map((row) => (row.name === "l" ? { ...row, value: "4" } : row)),
                { id: "p9", name: "c", unit: "N*m*s/rad", value: "", description: "pivot damping" },
              ],
            }
          : cell,
      ),
    };
    render(<ParameterDiffTable changes={compareParameters(before, after)} />);
    const rows = within(screen.getByTestId("parameter-diff")).getAllByRole("row").slice(1);
    expect(rows.map((row) => row.getAttribute("data-status"))).toEqual(["unchanged", "changed", "added", "removed"]);
    const cells = (row: Element) => [...row.querySelectorAll("td")].map(text);
    expect(cells(rows[1]!)).toEqual(["l", "3.5→ changed to 4", "m", "cable length", "Changed"]);
    expect(rows[1]!.querySelector("del")?.textContent).toBe("3.5");
    // A parameter without a value stays symbolic.
    expect(cells(rows[2]!)).toEqual(["c", "symbolic", "N*m*s/rad", "pivot damping", "Added"]);
    expect(cells(rows[3]!)).toEqual(["g", "9.81", "m/s^2", "gravitational acceleration", "Removed"]);
  });
});

describe("TermDiffView", () => {
  it("shows each term's status, typeset, and lists unchanged equations without repeating them", () => {
    const isMotion = motionNames({ coordinates: ["x", "theta"], inputs: ["F"] });
    const equations = compareEquations(
      [
        { coordinate: "x", residual: "M*x'' + b*x' - F" },
        { coordinate: "theta", residual: "m*l^2*theta'' + m*g*l*sin(theta)" },
      ],
      [
        { coordinate: "x", residual: "M*x'' + b2*x' - F + k*x" },
        { coordinate: "theta", residual: "m*l^2*theta'' + m*g*l*sin(theta)" },
      ],
      isMotion,
    );
    render(<TermDiffView equations={equations} />);
    const changed = screen.getAllByTestId("equation-change");
    expect(changed.map((section) => section.getAttribute("data-coordinate"))).toEqual(["x"]);
    const terms = within(changed[0]!).getAllByTestId("term-change");
    expect(terms.map((term) => term.getAttribute("data-status"))).toEqual(["unchanged", "changed", "unchanged", "added"]);
    expect(terms[1]!.querySelectorAll(".katex").length).toBeGreaterThanOrEqual(3);
    expect(text(changed[0]!)).toContain("1 added, 1 changed, 2 unchanged");
    expect(text(screen.getByTestId("term-diff"))).toContain("Unchanged: equation of");
  });
});
