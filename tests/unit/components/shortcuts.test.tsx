// @vitest-environment jsdom
import { afterEach, describe, expect, it, vi } from "vitest";
import { cleanup, fireEvent, render, screen } from "@testing-library/react";
import { ShortcutsProvider, isControlTarget, parseChord, useShortcut, useShortcutHelp } from "@/components/shortcuts";

vi.mock("next/navigation", () => ({ useRouter: () => ({ push: vi.fn() }) }));
// jsdom has neither media queries nor modal dialogs.
window.matchMedia ??= (() => ({ matches: false, addEventListener() {}, removeEventListener() {} })) as unknown as typeof window.matchMedia;
HTMLDialogElement.prototype.showModal ??= function (this: HTMLDialogElement) {
  this.setAttribute("open", "");
};
HTMLDialogElement.prototype.close ??= function (this: HTMLDialogElement) {
  this.removeAttribute("open");
};
afterEach(() => {
  cleanup();
  delete document.documentElement.dataset.theme;
});

function Page({ onExport, onNew }: { onExport: () => void; onNew: () => void }) {
  useShortcut("n", "New derivation", onNew);
  useShortcut("Alt+Shift+X", "Export the model file", onExport);
  useShortcutHelp("Ctrl+S", "Save now");
  return (
    <div>
      <button type="button">+ Add parameter</button>
      <input aria-label="Description" />
      {/* A plain link on purpose: single-key shortcuts must not fire from any link. */}
      {/* eslint-disable-next-line @next/next/no-html-link-for-pages */}
      <a href="/teams">Teams</a>
      <div role="textbox" tabIndex={0} aria-label="Expression" />
      <p data-testid="plain">text</p>
    </div>
  );
}

function renderPage() {
  const onExport = vi.fn();
  const onNew = vi.fn();
  render(
    <ShortcutsProvider>
      <Page onExport={onExport} onNew={onNew} />
    </ShortcutsProvider>,
  );
  return { onExport, onNew };
}

describe("keyboard shortcuts", () => {
  it("acts on a single key only when no control has the focus", () => {
    const { onNew } = renderPage();
    for (const control of [
      screen.getByRole("button", { name: "+ Add parameter" }),
      screen.getByRole("textbox", { name: "Description" }),
      screen.getByRole("link", { name: "Teams" }),
      screen.getByRole("textbox", { name: "Expression" }),
    ]) {
      fireEvent.keyDown(control, { key: "n", code: "KeyN" });
    }
    expect(onNew).not.toHaveBeenCalled();
    fireEvent.keyDown(screen.getByTestId("plain"), { key: "n", code: "KeyN" });
    expect(onNew).toHaveBeenCalledTimes(1);
  });

  it("keeps downloads and the theme behind a chord: x and t alone do nothing anywhere", () => {
    const { onExport } = renderPage();
    fireEvent.keyDown(document.body, { key: "x", code: "KeyX" });
    fireEvent.keyDown(document.body, { key: "t", code: "KeyT" });
    expect(onExport).not.toHaveBeenCalled();
    expect(document.documentElement.dataset.theme).toBeUndefined();

    // The chord works from a field too, and with the character a layout gives Alt+Shift+X.
    fireEvent.keyDown(screen.getByRole("textbox", { name: "Description" }), { key: "˛", code: "KeyX", altKey: true, shiftKey: true });
    expect(onExport).toHaveBeenCalledTimes(1);
    fireEvent.keyDown(document.body, { key: "T", code: "KeyT", altKey: true, shiftKey: true });
    expect(document.documentElement.dataset.theme).toMatch(/^(dark|light)$/);
  });

  it("lists keys handled elsewhere without acting on them", () => {
    renderPage();
    const event = new KeyboardEvent("keydown", { key: "s", code: "KeyS", ctrlKey: true, bubbles: true, cancelable: true });
    document.body.dispatchEvent(event);
    expect(event.defaultPrevented).toBe(false);
    fireEvent.keyDown(screen.getByTestId("plain"), { key: "?" });
    const list = screen.getByTestId("shortcut-list");
    expect(list.textContent).toContain("Save now");
    expect(list.textContent).toContain("Export the model file");
  });

  it("parses chords and tells controls from the page", () => {
    expect(parseChord("Alt+Shift+X")).toEqual({ key: "x", alt: true, ctrl: false, meta: false, shift: true });
    expect(parseChord("g t")).toBeNull();
    expect(parseChord("?")).toBeNull();
    expect(parseChord("+")).toBeNull();
    renderPage();
    expect(isControlTarget(screen.getByRole("button", { name: "+ Add parameter" }))).toBe(true);
    expect(isControlTarget(screen.getByTestId("plain"))).toBe(false);
    expect(isControlTarget(null)).toBe(false);
  });
});
