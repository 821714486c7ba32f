// @vitest-environment jsdom
import { afterEach, describe, expect, it, vi } from "vitest";
import { cleanup, fireEvent, render, screen } from "@testing-library/react";
import { CommentBox } from "@/components/comments/comment-box";

const members = [
  { id: "7c1e2a4e-1111-4c55-9a1e-000000000001", name: "Ines Marlow" },
  { id: "7c1e2a4e-1111-4c55-9a1e-000000000002", name: "Priya Nandakumar" },
];

afterEach(() => {
  cleanup();
  vi.useRealTimers();
});

describe("CommentBox", () => {
  it("puts the caret after a picked mention at once, so the next keystroke lands there", () => {
    vi.useFakeTimers({ toFake: ["requestAnimationFrame", "setTimeout"] });
    const onSubmit = vi.fn();
    render(<CommentBox members={members} label="New comment" submitLabel="Comment" onSubmit={onSubmit} />);
    const box = screen.getByRole("combobox", { name: "New comment" }) as HTMLTextAreaElement;
    box.focus();
    fireEvent.change(box, { target: { value: "Check @Ine", selectionStart: 10, selectionEnd: 10 } });
    fireEvent.mouseDown(screen.getByRole("option", { name: "Ines Marlow" }));
    // No frame has passed: the text and the caret are already final.
    expect(box.value).toBe("Check @Ines Marlow ");
    expect(box.selectionStart).toBe("Check @Ines Marlow ".length);
    expect(document.activeElement).toBe(box);
    // Keys typed before the next frame stay where they were typed: nothing moves the caret back later.
    fireEvent.change(box, { target: { value: `${box.value}is this` } });
    vi.advanceTimersToNextFrame();
    vi.runAllTimers();
    expect(box.selectionStart).toBe(box.value.length);
    fireEvent.change(box, { target: { value: `${box.value} sign right?` } });
    fireEvent.keyDown(box, { key: "Enter", ctrlKey: true });
    expect(onSubmit).toHaveBeenCalledTimes(1);
    expect(onSubmit.mock.calls[0]![0]).toContain("is this sign right?");
  });
});
