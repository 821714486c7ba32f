// @vitest-environment jsdom
import { afterEach, describe, expect, it, vi } from "vitest";
import { configure, act, cleanup, render, screen, waitFor } from "@testing-library/react";
import { useState } from "react";
import { EditorView } from "@codemirror/view";
import { CompletionContext, insertBracket } from "@codemirror/autocomplete";
import { ExpressionEditor, type ExpressionEditorProps } from "@/components/notebook/editor/expression-editor";
import { symbolCompletionSource } from "@/components/notebook/editor/completion";
import { localDiagnostics } from "@/components/notebook/editor/diagnostics";
import type { DocumentSymbols } from "@/lib/notebook/document";

afterEach(cleanup);
// Editors lint after a pause and KaTeX loads on first use; allow for a busy machine.
configure({ asyncUtilTimeout: 5000 });

const symbols: DocumentSymbols = { coordinates: ["theta"], parameters: ["m", "l", "g"], inputs: ["u"], definitions: ["y"] };

/** The mounted editor's view; CodeMirror loads on first use, so wait for it to replace the stand-in. */
async function viewOf(label: string): Promise<EditorView> {
  return waitFor(() => {
    const content = screen.getByRole("textbox", { name: label });
    const view = EditorView.findFromDOM(content);
    if (!view) throw new Error("no editor view yet");
    return view;
  });
}

/** Types text at the end of the editor the way keyboard input reaches CodeMirror. */
function typeAtEnd(view: EditorView, text: string) {
  act(() => {
    view.dispatch({
      changes: { from: view.state.doc.length, insert: text },
      selection: { anchor: view.state.doc.length + text.length },
      userEvent: "input.type",
    });
  });
}

function Controlled(props: Partial<ExpressionEditorProps> & { initial: string; onValue?: (v: string) => void }) {
  const [value, setValue] = useState(props.initial);
  return (
    <ExpressionEditor
      label="Kinetic energy T"
      symbols={symbols}
      lintDelay={0}
      {...props}
      value={value}
      onChange={(next) => {
        setValue(next);
        props.onValue?.(next);
      }}
    />
  );
}

describe("ExpressionEditor", () => {
  it("mounts with the value, an accessible name, and reports typing through onChange", async () => {
    const onValue = vi.fn();
    render(<Controlled initial="1/2*m*l^2*theta'^2" onValue={onValue} />);
    const view = await viewOf("Kinetic energy T");
    expect(view.state.doc.toString()).toBe("1/2*m*l^2*theta'^2");
    typeAtEnd(view, " + 0");
    expect(onValue).toHaveBeenLastCalledWith("1/2*m*l^2*theta'^2 + 0");
  });

  it("underlines a parse error at its column and lists it under the editor", async () => {
    render(<Controlled initial="m*g*y" />);
    const view = await viewOf("Kinetic energy T");
    typeAtEnd(view, " + (l");
    const item = await screen.findByText(/expected "\)"/);
    // "m*g*y + (l" is 10 characters; the parser reports the missing ")" at the end, column 11.
    expect(item.textContent).toContain("col 11");
    // At the very end of the text the mark is a point rather than an underline.
    await waitFor(() => expect(view.dom.querySelector(".cm-lintPoint-error")).not.toBeNull());
    typeAtEnd(view, ")*x");
    await waitFor(() => expect(view.dom.querySelector(".cm-lintRange-error")?.textContent).toBe("x"));
  });

  it("flags unknown names and rates of parameters from the derivation's symbols", async () => {
    render(<Controlled initial="m*g*h + l'" />);
    expect(await screen.findByText(/unknown symbol "h"/)).toBeTruthy();
    expect(screen.getByText(/"l" is a parameter and has no rate/)).toBeTruthy();
  });

  it("shows evaluator diagnostics for the text they were computed for, and hides them once it changes", async () => {
    const text = "1/2*m*theta'^2";
    const onValue = vi.fn();
    render(
      <Controlled
        initial={text}
        onValue={onValue}
        diagnostics={[{ from: 4, to: 14, message: "unit mismatch: term m*theta'^2 is kg*rad^2/s^2, expected J", source: "units" }]}
        diagnosticsFor={text}
      />,
    );
    expect(await screen.findByText(/unit mismatch: term m\*theta'\^2/)).toBeTruthy();
    typeAtEnd(await viewOf("Kinetic energy T"), "*l^2");
    await waitFor(() => expect(screen.queryByText(/unit mismatch/)).toBeNull());
  });

  it("keeps a single-line editor on one line", async () => {
    const onValue = vi.fn();
    render(<Controlled initial="x" onValue={onValue} />);
    const view = await viewOf("Kinetic energy T");
    typeAtEnd(view, "\n+ y");
    expect(view.state.doc.lines).toBe(1);
    expect(onValue).toHaveBeenLastCalledWith("x + y");
  });

  it("follows a new value from the parent without echoing it back", async () => {
    const onChange = vi.fn();
    const { rerender } = render(<ExpressionEditor label="V" value="m*g*y" onChange={onChange} />);
    rerender(<ExpressionEditor label="V" value="-m*g*l*cos(theta)" onChange={onChange} />);
    expect((await viewOf("V")).state.doc.toString()).toBe("-m*g*l*cos(theta)");
    expect(onChange).not.toHaveBeenCalled();
  });

  it("destroys its EditorView on unmount", async () => {
    const { unmount } = render(<ExpressionEditor label="V" value="m*g*y" onChange={() => {}} />);
    const view = await viewOf("V");
    const destroy = vi.spyOn(view, "destroy");
    unmount();
    expect(destroy).toHaveBeenCalledTimes(1);
    expect(view.dom.isConnected).toBe(false);
  });

  it("is read-only when asked", async () => {
    render(<ExpressionEditor label="V" value="m*g*y" onChange={() => {}} readOnly />);
    expect((await viewOf("V")).state.readOnly).toBe(true);
    expect(screen.getByRole("textbox", { name: "V" }).getAttribute("contenteditable")).toBe("false");
  });
});

describe("quiet blanks, Greek letters and brackets", () => {
  it("says nothing about a required expression never written, and flags it once written and cleared", async () => {
    render(<Controlled initial="" placeholder="e.g. 1/2*m*x'^2" />);
    const view = await viewOf("Kinetic energy T");
    // Let a lint pass run on the blank text: it must stay quiet.
    typeAtEnd(view, "");
    await new Promise((resolve) => setTimeout(resolve, 50));
    expect(screen.queryByText("expression is empty")).toBeNull();
    typeAtEnd(view, "m");
    act(() => view.dispatch({ changes: { from: 0, to: view.state.doc.length, insert: "" }, userEvent: "delete" }));
    expect(await screen.findByText("expression is empty")).toBeTruthy();
  });

  it("reads a typed Greek letter as its name and keeps the caret after it", async () => {
    const onValue = vi.fn();
    render(<Controlled initial="1/2*m*l^2*" onValue={onValue} />);
    const view = await viewOf("Kinetic energy T");
    typeAtEnd(view, "θ'");
    expect(onValue).toHaveBeenLastCalledWith("1/2*m*l^2*theta'");
    expect(view.state.selection.main.head).toBe(view.state.doc.length);
    typeAtEnd(view, "^2");
    expect(view.state.doc.toString()).toBe("1/2*m*l^2*theta'^2");
  });

  it("reports unbalanced parentheses when the editor closed one itself", async () => {
    render(<Controlled initial="m*g*l*cos" />);
    const view = await viewOf("Kinetic energy T");
    act(() => view.dispatch({ selection: { anchor: view.state.doc.length } }));
    // Typing "(" goes through the bracket closer, which inserts "()" with the caret between.
    const opened = insertBracket(view.state, "(");
    expect(opened).not.toBeNull();
    // (Applied without scrolling the caret into view, which jsdom cannot measure.)
    act(() => view.dispatch({ changes: opened!.changes, selection: opened!.selection, userEvent: "input.type" }));
    expect(view.state.doc.toString()).toBe("m*g*l*cos()");
    act(() => view.dispatch({ changes: { from: 10, insert: "theta" }, selection: { anchor: 15 }, userEvent: "input.type" }));
    // The analyst types their own ")" at the end, after the one the editor added.
    typeAtEnd(view, ")");
    expect(view.state.doc.toString()).toBe("m*g*l*cos(theta))");
    expect(await screen.findByText(/unmatched "\)"/)).toBeTruthy();
  });
});

describe("completion and local checks", () => {
  it("offers coordinates with rate and acceleration, definitions, parameters, inputs and functions", async () => {
    render(<Controlled initial="th" />);
    const view = await viewOf("Kinetic energy T");
    const result = symbolCompletionSource(new CompletionContext(view.state, 2, false));
    expect(result?.from).toBe(0);
    const labels = result!.options.map((o) => `${o.label}:${o.detail}`);
    expect(labels).toEqual(
      expect.arrayContaining([
        "theta:coordinate",
        "theta':rate",
        "theta'':acceleration",
        "y':rate of definition",
        "m:parameter",
        "u:input",
        "sin:function",
        "t:time",
      ]),
    );
  });

  it("finds nothing wrong with a valid expression and allows blank only when told", () => {
    expect(localDiagnostics("1/2*m*(l*theta')^2 + u*t", symbols, { checkSymbols: true })).toEqual([]);
    expect(localDiagnostics("  ", symbols, { allowEmpty: true })).toEqual([]);
    expect(localDiagnostics("", symbols)).toMatchObject([{ message: "expression is empty" }]);
  });
});

describe("off-screen editors", () => {
  it("show plain text until focused, then build the editor with the cursor at the end", async () => {
    // An observer that never reports the element on screen, as for an editor far down the page.
    const observe = vi.fn();
    vi.stubGlobal(
      "IntersectionObserver",
      class {
        observe = observe;
        disconnect() {}
        unobserve() {}
        takeRecords() {
          return [];
        }
      },
    );
    try {
      const onChange = vi.fn();
      const { container } = render(<ExpressionEditor label="V" value="m*g*y" onChange={onChange} />);
      expect(observe).toHaveBeenCalled();
      expect(container.querySelector(".cm-editor")).toBeNull();
      const stand = screen.getByRole("textbox", { name: "V" });
      expect(stand.textContent).toBe("m*g*y");
      act(() => stand.focus());
      const view = await viewOf("V");
      expect(view.hasFocus || document.activeElement === view.contentDOM).toBe(true);
      expect(view.state.selection.main.head).toBe(5);
      typeAtEnd(view, "1");
      expect(onChange).toHaveBeenLastCalledWith("m*g*y1");
    } finally {
      vi.unstubAllGlobals();
    }
  });
});
