// @vitest-environment jsdom
import { afterEach, describe, expect, it, vi } from "vitest";
import { cleanup, fireEvent, render, screen } from "@testing-library/react";
import { FileInput, fileTooLarge, formatBytes } from "@/components/ui/file-input";

afterEach(cleanup);

function choose(input: HTMLElement, file: File) {
  Object.defineProperty(input, "files", { value: [file], configurable: true });
  fireEvent.change(input);
}

describe("FileInput", () => {
  it("states its limit and passes on a file that fits", () => {
    const onFile = vi.fn();
    const onRefused = vi.fn();
    render(<FileInput label="Model file" maxBytes={500_000} hint="A .model.json file" onFile={onFile} onRefused={onRefused} />);
    const input = screen.getByLabelText("Model file");
    expect(screen.getByTestId("file-limit").textContent).toBe("A .model.json file, up to 488 kB.");
    expect(input.getAttribute("aria-describedby")).toBe(screen.getByTestId("file-limit").id);
    const file = new File(["{}"], "hoist.model.json", { type: "application/json" });
    choose(input, file);
    expect(onFile).toHaveBeenCalledWith(file);
    expect(onRefused).not.toHaveBeenCalled();
  });

  it("refuses a too-large file in the browser, before anything is sent", () => {
    const onFile = vi.fn();
    const onRefused = vi.fn();
    const fetchSpy = vi.fn();
    vi.stubGlobal("fetch", fetchSpy);
    render(<FileInput label="Upload measured CSV" maxBytes={1_024} onFile={onFile} onRefused={onRefused} />);
    choose(screen.getByLabelText("Upload measured CSV"), new File(["x".repeat(2_048)], "swing-test.csv", { type: "text/csv" }));
    expect(onRefused).toHaveBeenCalledWith('The file "swing-test.csv" is 2 kB; the limit is 1 kB. Nothing was sent.');
    expect(onFile).toHaveBeenCalledWith(null);
    expect(fetchSpy).not.toHaveBeenCalled();
    vi.unstubAllGlobals();
  });

  it("formats sizes in the binary units the server states its limits in", () => {
    expect(formatBytes(512)).toBe("512 bytes");
    expect(formatBytes(500_000)).toBe("488 kB");
    expect(formatBytes(10 * 1024 * 1024)).toBe("10 MB");
    expect(formatBytes(1.5 * 1024 * 1024)).toBe("1.5 MB");
    expect(fileTooLarge(new File(["ab"], "a.csv"), 2)).toBeNull();
  });
});
