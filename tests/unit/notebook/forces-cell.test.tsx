// @vitest-environment jsdom
import { afterEach, describe, expect, it } from "vitest";
import { cleanup, render, screen } from "@testing-library/react";
import { ForcesCellEditor } from "@/components/notebook/expression-cell";
import { createCell, type ForcesCell } from "@/lib/notebook/document";

afterEach(cleanup);

describe("generalized forces cell", () => {
  it("labels each force as Q with the coordinate as a subscript, not Q[x]", () => {
    const cell: ForcesCell = { ...(createCell("forces", "forces-1") as ForcesCell), entries: [{ coordinate: "x", expr: "F" }] };
    render(<ForcesCellEditor cell={cell} symbols={{ coordinates: ["x", "theta"], parameters: [], inputs: ["F"], definitions: [] }} onOperation={() => {}} />);
    for (const coordinate of ["x", "theta"]) {
      const label = screen.getByTestId(`force-label-${coordinate}`);
      expect(label.querySelector("sub")?.textContent).toBe(coordinate);
      expect(label.textContent).toBe(`Q${coordinate} =`);
      expect(label.textContent).not.toContain("[");
    }
  });
});
