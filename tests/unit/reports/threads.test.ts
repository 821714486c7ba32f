import { describe, expect, it } from "vitest";
import { anchorPlace, reportThreads } from "@/lib/reports/threads";
import { craneDocument, thread } from "./fixtures";

const doc = craneDocument();
const definitions = doc.cells.find((cell) => cell.kind === "definitions")!;
const xl = (definitions as { rows: { id: string; name: string }[] }).rows.find((row) => row.name === "xl")!;
const kinetic = doc.cells.find((cell) => cell.kind === "kinetic")!;

describe("anchorPlace", () => {
  it("names the cell by its kind, and a row's field by the row's name", () => {
    expect(anchorPlace(doc, kinetic.id, "expr")).toBe("Kinetic energy");
    expect(anchorPlace(doc, definitions.id, `rows/${xl.id}/expr`)).toBe("Definitions, xl, expr");
  });

  it("says so when the cell or the row is gone", () => {
    expect(anchorPlace(doc, "no-such-cell", "expr")).toBe("a cell since removed");
    expect(anchorPlace(doc, definitions.id, "rows/gone/expr")).toBe("Definitions, a row since removed");
  });
});

describe("reportThreads", () => {
  const mention = "@[Sam Okafor](00000000-0000-4000-8000-0000000000b2)";
  const threads = reportThreads(
    [
      thread({
        id: "t-resolved",
        status: "resolved",
        createdAt: "2026-11-28T08:00:00.000Z",
        resolvedAt: "2026-11-29T08:00:00.000Z",
        resolvedByName: null,
        anchor: { kind: "text", cellId: kinetic.id, fieldPath: "expr", start: "", end: "", quote: "1/2*M*x'^2" },
        comments: [
          {
            id: "c1",
            authorId: null,
            authorName: null,
            body: `Checked by ${mention}`,
            createdAt: "2026-11-28T08:00:00.000Z",
            editedAt: null,
            deleted: false,
            mayEdit: false,
            mayDelete: false,
          },
        ],
      }),
      thread({
        id: "t-open-later",
        createdAt: "2026-12-01T09:00:00.000Z",
        anchor: {
          kind: "term",
          key: `eq/theta/t1`,
          cellId: "eq",
          coordinate: "theta",
          termId: "t1",
          termText: "m*l^2*theta''",
          termLatex: "m l^{2} \\ddot{\\theta}",
        },
        writtenOn: { revisionNumber: 3, sameAsRevision: false },
      }),
      thread({
        id: "t-open-first",
        createdAt: "2026-12-01T08:00:00.000Z",
        anchor: { kind: "text", cellId: definitions.id, fieldPath: `rows/${xl.id}/expr`, start: "", end: "", quote: "l*sin(theta)" },
        comments: [
          {
            id: "c2",
            authorId: null,
            authorName: "Priya Anand",
            body: "",
            createdAt: "2026-12-01T08:00:00.000Z",
            editedAt: null,
            deleted: true,
            mayEdit: false,
            mayDelete: false,
          },
        ],
      }),
    ],
    doc,
  );

  it("prints open threads first, then resolved ones, each oldest first", () => {
    expect(threads.map((t) => t.id)).toEqual(["t-open-first", "t-open-later", "t-resolved"]);
  });

  it("keeps each anchor: the field with its quote, or the term of an equation", () => {
    expect(threads[0]!.anchor).toEqual({ kind: "text", where: "Definitions, xl, expr", quote: "l*sin(theta)" });
    expect(threads[1]!.anchor).toMatchObject({ kind: "term", where: "a cell since removed, equation of theta", termLatex: "m l^{2} \\ddot{\\theta}" });
    expect(threads[1]!.writtenOn).toBe("edits after revision 3");
    expect(threads[0]!.writtenOn).toBe("revision 3");
  });

  it("writes mentions as @Name, a deleted comment without its body, and who resolved a thread", () => {
    expect(threads[2]!.comments[0]!.body).toBe("Checked by @Sam Okafor");
    expect(threads[2]!.comments[0]!.authorName).toBe("a former member");
    expect(threads[0]!.comments[0]).toMatchObject({ deleted: true, body: "" });
    expect(threads[2]!.resolved).toEqual({ byName: "a former member", at: "2026-11-29T08:00:00.000Z" });
    expect(threads[0]!.resolved).toBeNull();
  });
});
