// @vitest-environment jsdom
import { afterEach, describe, expect, it } from "vitest";
import { cleanup, fireEvent, render, screen, within } from "@testing-library/react";
import { useState } from "react";
import { Notebook } from "@/components/notebook/notebook";
import { DEFAULT_STUDY_SETTINGS, type DerivationDocument, type StudyCell } from "@/lib/notebook/document";
import { studyDocument } from "./fixtures";

afterEach(cleanup);

function Harness({ initial }: { initial: DerivationDocument }) {
  const [doc, setDoc] = useState(initial);
  let n = 0;
  return (
    <>
      <Notebook document={doc} newId={() => `new${++n}-${doc.cells.length}`} onChange={(next) => setDoc(next)} />
      <output data-testid="kinds">{doc.cells.map((c) => c.kind).join(",")}</output>
      <output data-testid="studies">{JSON.stringify(doc.cells.filter((c): c is StudyCell => c.kind === "study").map((c) => c.settings))}</output>
    </>
  );
}

describe("study cell in the notebook", () => {
  it("is added from the cell menu, any number of times, with the default settings", () => {
    const { doc } = studyDocument();
    const withoutStudy = { ...doc, cells: doc.cells.filter((c) => c.kind !== "study") };
    render(<Harness initial={withoutStudy} />);
    for (let i = 0; i < 2; i++) {
      fireEvent.click(screen.getByRole("button", { name: "Add cell" }));
      fireEvent.click(within(screen.getByRole("group", { name: "Cell kinds" })).getByRole("button", { name: "Parameter study" }));
    }
    expect(
      screen
        .getByTestId("kinds")
        .textContent!.split(",")
        .filter((k) => k === "study"),
    ).toHaveLength(2);
    expect(JSON.parse(screen.getByTestId("studies").textContent!)).toEqual([DEFAULT_STUDY_SETTINGS, DEFAULT_STUDY_SETTINGS]);
    // The new cell takes the focus on its first control, the study mode.
    expect(document.activeElement).toBe(screen.getAllByRole("radio", { name: /Grid/ })[1]);
    // Not yet stored: the cell says where studies run.
    expect(screen.getAllByText("Studies run on the server once the derivation is saved.")).toHaveLength(2);
  });

  it("writes its settings through the notebook's operations", () => {
    const { doc } = studyDocument();
    render(<Harness initial={doc} />);
    fireEvent.click(screen.getByRole("radio", { name: /Tolerance run/ }));
    fireEvent.change(screen.getByLabelText("Samples per case"), { target: { value: "400" } });
    expect(JSON.parse(screen.getByTestId("studies").textContent!)[0]).toMatchObject({ mode: "tolerance", samples: "400" });
  });
});
