// @vitest-environment jsdom
import { cleanup, fireEvent, render, screen } from "@testing-library/react";
import { afterEach, describe, expect, it } from "vitest";
import * as Y from "yjs";
import { mapThroughDelta, SharedInput, textChange } from "@/components/collab/shared-text-input";
import { internalTarget, leaveQuestion } from "@/components/collab/use-leave-guard";
import { spellGreekLetters } from "@/lib/mechanics/browser";

afterEach(cleanup);

/** Two Y.Docs that exchange every update at once, like two browsers on one server. */
function linkedTexts(initial: string) {
  const a = new Y.Doc();
  const b = new Y.Doc();
  a.getText("t").insert(0, initial);
  Y.applyUpdate(b, Y.encodeStateAsUpdate(a));
  a.on("update", (update: Uint8Array, origin: unknown) => origin !== "remote" && Y.applyUpdate(b, update, "remote"));
  b.on("update", (update: Uint8Array, origin: unknown) => origin !== "remote" && Y.applyUpdate(a, update, "remote"));
  return { a: a.getText("t"), b: b.getText("t") };
}

describe("textChange", () => {
  it("finds the one replaced middle between two texts", () => {
    expect(textChange("m*g*l", "m*g*l*2")).toEqual({ index: 5, remove: 0, insert: "*2" });
    expect(textChange("theta", "thta")).toEqual({ index: 2, remove: 1, insert: "" });
    expect(textChange("aaa", "aa")).toEqual({ index: 2, remove: 1, insert: "" });
    expect(textChange("x1", "y2")).toEqual({ index: 0, remove: 2, insert: "y2" });
  });
});

describe("mapThroughDelta", () => {
  it("moves a caret with text inserted or deleted before it and leaves it for changes after", () => {
    expect(mapThroughDelta(3, [{ insert: "ab" }])).toBe(5);
    expect(mapThroughDelta(3, [{ retain: 3 }, { insert: "ab" }])).toBe(3);
    expect(mapThroughDelta(3, [{ retain: 1 }, { delete: 1 }])).toBe(2);
    expect(mapThroughDelta(3, [{ retain: 2 }, { delete: 4 }])).toBe(2);
    expect(mapThroughDelta(3, [{ retain: 5 }, { delete: 1 }])).toBe(3);
  });
});

describe("SharedInput", () => {
  it("merges two people typing in one field instead of keeping the last one's text", () => {
    const { a, b } = linkedTexts("m");
    render(
      <>
        <SharedInput text={a} origin="a" aria-label="first" />
        <SharedInput text={b} origin="b" aria-label="second" />
      </>,
    );
    const first = screen.getByRole("textbox", { name: "first" }) as HTMLInputElement;
    const second = screen.getByRole("textbox", { name: "second" }) as HTMLInputElement;
    fireEvent.change(first, { target: { value: "m1" } });
    fireEvent.change(second, { target: { value: "0m1" } });
    expect(first.value).toBe("0m1");
    expect(second.value).toBe("0m1");
    expect(a.toString()).toBe("0m1");
  });

  it("rewrites typed Greek letters, reports the edit, and writes nothing when read-only", () => {
    const { a } = linkedTexts("");
    const edits: [string, string][] = [];
    const { rerender } = render(
      <SharedInput text={a} origin="a" aria-label="name" transformInsert={spellGreekLetters} onEdit={(before, after) => edits.push([before, after])} />,
    );
    const field = screen.getByRole("textbox", { name: "name" }) as HTMLInputElement;
    fireEvent.change(field, { target: { value: "θ" } });
    expect(a.toString()).toBe("theta");
    expect(field.value).toBe("theta");
    expect(edits).toEqual([["", "theta"]]);
    rerender(<SharedInput text={a} origin="a" aria-label="name" readOnly />);
    fireEvent.change(field, { target: { value: "phi" } });
    expect(a.toString()).toBe("theta");
  });
});

describe("leaving with unstored edits", () => {
  function click(href: string, options: MouseEventInit = {}) {
    const link = document.createElement("a");
    link.href = href;
    document.body.appendChild(link);
    const event = new MouseEvent("click", { bubbles: true, cancelable: true, button: 0, ...options });
    Object.defineProperty(event, "target", { value: link });
    const target = internalTarget(event, window.location);
    link.remove();
    return target;
  }

  it("stops plain clicks on links to other pages of the app, and nothing else", () => {
    expect(click("/teams/t1")).toBe("/teams/t1");
    expect(click("/teams/t1", { ctrlKey: true })).toBeNull();
    expect(click("https://elsewhere.example/x")).toBeNull();
    expect(click(`${window.location.pathname}#cell-3`)).toBeNull();
  });

  it("asks in words that say how much would be lost", () => {
    expect(leaveQuestion(1)).toBe("1 edit has not reached the server yet and would be lost. Leave this page anyway?");
    expect(leaveQuestion(3)).toMatch(/^3 edits have not reached/);
  });
});
