import { describe, expect, it } from "vitest";
import { DOCUMENT_SCHEMA_VERSION, documentToModel, modelToDocument, recoverModel } from "@/lib/notebook/document";
import type { Model } from "@/lib/mechanics";

const sled: Model = {
  title: "Test sled on rails",
  coordinates: [{ name: "x", unit: "m" }],
  parameters: [
    { name: "m", unit: "kg", value: 120 },
    { name: "k", unit: "N/m", value: 8000 },
  ],
  kinetic: "1/2*m*x'^2",
  potential: "1/2*k*x^2",
};

describe("recoverModel", () => {
  it("gives the exported model file for content that reads", () => {
    const document = modelToDocument(sled);
    expect(recoverModel(JSON.parse(JSON.stringify(document)), "Row title")).toEqual({ model: documentToModel(document), omitted: [] });
  });

  it("keeps only the title when the cells are not a list, and says so", () => {
    expect(recoverModel({ schemaVersion: DOCUMENT_SCHEMA_VERSION, title: "Sled", cells: "not-an-array" }, "Row title")).toEqual({
      model: { title: "Sled", coordinates: [], parameters: [], kinetic: "", potential: "" },
      omitted: ["cells: not a list of cells"],
    });
    expect(recoverModel("not even an object", "Row title").model.title).toBe("Row title");
  });

  it("keeps the readable cells and rows of a broken document and names what it leaves out", () => {
    const cells = JSON.parse(JSON.stringify(modelToDocument(sled).cells));
    cells[1].rows.push({ id: "bad", name: 5, unit: "kg", value: "1", description: "" });
    cells[1].rows[1].value = "8e3.5";
    cells.splice(2, 0, "garbage");
    cells.push({ id: "k2", collapsed: false, kind: "kinetic", expr: "0" }, { id: "n", kind: "note", markdown: 4 });
    const { model, omitted } = recoverModel({ schemaVersion: DOCUMENT_SCHEMA_VERSION, title: "Sled", cells }, "Row title");
    expect(model).toEqual({ ...sled, title: "Sled", parameters: [sled.parameters[0], { name: "k", unit: "N/m" }] });
    expect(omitted).toEqual([
      "cells[1].rows[2]: not a readable parameters row",
      "cells[2]: not a cell",
      "cells[7]: a second kinetic cell",
      'parameter k: the value "8e3.5" is not a number, so it is left symbolic',
    ]);
  });

  it("reads the known fields of a document from a newer Holonomy", () => {
    const newer = JSON.parse(JSON.stringify(modelToDocument(sled)));
    newer.schemaVersion = DOCUMENT_SCHEMA_VERSION + 1;
    newer.cells[0].rows[0].tolerance = "tight";
    expect(recoverModel(newer, "Row title").model).toEqual(sled);
  });

  it("keeps the readable entries of a pre-notebook model file", () => {
    const stored = { ...sled, coordinates: [{ name: "x", unit: "m" }, { name: 3 }], forces: { x: "F", y: 2 } };
    const { model, omitted } = recoverModel(stored, "Row title");
    expect(model).toEqual({ ...sled, forces: { x: "F" } });
    expect(omitted).toEqual(["coordinates[1]: not a readable entry", "forces.y: not text"]);
  });
});
