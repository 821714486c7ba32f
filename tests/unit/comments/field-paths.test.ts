import { describe, expect, it } from "vitest";
import { fieldPathsWithContent, fieldTextOf } from "@/lib/comments/field-paths";
import { createTextAnchor, resolveTextAnchor } from "@/lib/comments/text-anchor";
import { blankDocument, createCell, type DerivationDocument } from "@/lib/notebook/document";
import { documentToYDoc, replaceSharedDocument } from "@/lib/notebook/document/shared-doc";

function pendulum(): DerivationDocument {
  const doc = blankDocument("Hoist hook pendulum");
  const kinetic = { ...createCell("kinetic", "kin"), expr: "1/2*m*l^2*theta'^2" };
  const potential = { ...createCell("potential", "pot"), expr: "-m*g*l*cos(theta)" };
  const definitions = { ...createCell("definitions", "defs"), rows: [{ id: "r1", name: "y", expr: "-l*cos(theta)", description: "" }] };
  return { ...doc, cells: [kinetic, potential, definitions] };
}

describe("field paths of comment anchors", () => {
  it("finds the field an editor's text belongs to, in a cell or in a row", () => {
    const ydoc = documentToYDoc(pendulum());
    expect(fieldPathsWithContent(ydoc, "kin", "1/2*m*l^2*theta'^2")).toEqual(["expr"]);
    expect(fieldPathsWithContent(ydoc, "defs", "-l*cos(theta)")).toEqual(["rows/r1/expr"]);
    expect(fieldTextOf(ydoc, "defs", "rows/r1/expr")?.toString()).toBe("-l*cos(theta)");
    expect(fieldPathsWithContent(ydoc, "missing", "x")).toEqual([]);
  });

  it("follows a restored revision that keeps the span's text and detaches when it does not", () => {
    const ydoc = documentToYDoc(pendulum());
    const anchor = createTextAnchor(fieldTextOf(ydoc, "pot", "expr")!, 1, 5);
    const withPotential = (expr: string) => {
      const doc = pendulum();
      return { ...doc, cells: doc.cells.map((cell) => (cell.id === "pot" ? { ...cell, expr } : cell)) };
    };
    // A restore changes only the differing middle of each field, so the span's characters survive.
    replaceSharedDocument(ydoc, withPotential("-m*g*l*cos(theta) + 1/2*k*theta^2"));
    expect(resolveTextAnchor(ydoc, fieldTextOf(ydoc, "pot", "expr"), anchor)).toMatchObject({ state: "attached", text: "m*g*l" });
    replaceSharedDocument(ydoc, withPotential("0"));
    expect(resolveTextAnchor(ydoc, fieldTextOf(ydoc, "pot", "expr"), anchor)).toEqual({ state: "detached", reason: "deleted" });
    // The cell removed: its field is gone.
    const doc = pendulum();
    replaceSharedDocument(ydoc, { ...doc, cells: doc.cells.filter((cell) => cell.id !== "pot") });
    expect(fieldTextOf(ydoc, "pot", "expr")).toBeNull();
    expect(resolveTextAnchor(ydoc, fieldTextOf(ydoc, "pot", "expr"), anchor)).toEqual({ state: "detached", reason: "missing" });
  });
});
