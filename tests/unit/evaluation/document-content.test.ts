import { describe, expect, it } from "vitest";
import { demoDerivations } from "@/db/seed/demo";
import { documentFromContent, validDocumentOrThrow } from "@/lib/evaluation/document-content";
import { AppError } from "@/lib/errors";
import { DOCUMENT_SCHEMA_VERSION, modelToDocument } from "@/lib/notebook/document";

function thrown(run: () => unknown): AppError {
  try {
    run();
  } catch (error) {
    if (error instanceof AppError) return error;
    throw error;
  }
  throw new Error("expected an AppError");
}

const sled = { title: "Sled", coordinates: [{ name: "x", unit: "m" }], parameters: [], kinetic: "1/2*m*x'^2", potential: "0" };

describe("validDocumentOrThrow", () => {
  it("answers 400 with the issues keyed under the request field", () => {
    const error = thrown(() => validDocumentOrThrow({ cells: "not-an-array" }, { field: "content" }));
    expect(error.status).toBe(400);
    expect(error.fieldErrors).toEqual({
      "content.schemaVersion": ["missing: a notebook document names its schema version"],
      "content.title": [expect.any(String)],
      "content.cells": [expect.any(String)],
    });
  });

  it("answers 422 for a document from a newer Holonomy", () => {
    const error = thrown(() => validDocumentOrThrow({ ...modelToDocument(sled), schemaVersion: DOCUMENT_SCHEMA_VERSION + 1 }));
    expect(error.code).toBe("unprocessable:derivation");
    expect(error.message).toMatch(/newer version of Holonomy/);
    expect(Object.keys(error.fieldErrors ?? {})).toEqual(["document.schemaVersion"]);
  });

  it("returns a current document for every demo derivation the seed writes, the pre-notebook model file included", () => {
    for (const item of demoDerivations) {
      const document = validDocumentOrThrow(item.content, { field: "content", title: item.title });
      expect(document.schemaVersion).toBe(DOCUMENT_SCHEMA_VERSION);
      expect(document.title).toBe(item.title);
    }
    expect(demoDerivations.some((item) => !("cells" in item.content))).toBe(true);
  });
});

describe("documentFromContent", () => {
  it("reads a stored model file under the row's title when it has none, and answers 422 for content it cannot read", () => {
    const { title: _title, ...untitled } = sled;
    expect(documentFromContent(untitled, "Row title").title).toBe("Row title");
    const error = thrown(() => documentFromContent({ cells: 3 }, "Row title"));
    expect(error.code).toBe("unprocessable:derivation");
    expect(error.details?.issues).toEqual(expect.arrayContaining([expect.objectContaining({ path: "cells" })]));
  });
});
