// @vitest-environment jsdom
import { QueryClient, QueryClientProvider } from "@tanstack/react-query";
import { act, cleanup, fireEvent, render, screen, waitFor } from "@testing-library/react";
import { afterEach, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";
import { ImportDerivationDialog, NewDerivationDialog } from "@/components/derivations/new-derivation-dialogs";

// jsdom has no modal dialogs; the component only needs showModal/close to toggle `open`.
beforeAll(() => {
  HTMLDialogElement.prototype.showModal ??= function showModal(this: HTMLDialogElement) {
    this.open = true;
  };
  HTMLDialogElement.prototype.close ??= function close(this: HTMLDialogElement) {
    this.open = false;
  };
});

interface Call {
  url: string;
  key: string | null;
  body: unknown;
  answer: (response: Response) => void;
}

let calls: Call[];

beforeEach(() => {
  calls = [];
  vi.stubGlobal(
    "fetch",
    vi.fn(
      (url: string, init: RequestInit) =>
        new Promise<Response>((resolve) => {
          const headers = new Headers(init.headers);
          calls.push({ url, key: headers.get("Idempotency-Key"), body: init.body, answer: resolve });
        }),
    ),
  );
});

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

const isDisabled = (element: HTMLElement) => (element as HTMLButtonElement).disabled;

function withQueryClient(node: React.ReactNode) {
  const client = new QueryClient({ defaultOptions: { queries: { retry: false }, mutations: { retry: false } } });
  return render(<QueryClientProvider client={client}>{node}</QueryClientProvider>);
}

const created = (id: string) => new Response(JSON.stringify({ derivation: { id } }), { status: 201, headers: { "content-type": "application/json" } });
const unavailable = () =>
  new Response(JSON.stringify({ error: { code: "unavailable:database", message: "The database is not reachable right now. Try again in a moment." } }), {
    status: 503,
  });

describe("NewDerivationDialog", () => {
  it("sends one request for a double click and keeps Create disabled until the answer", async () => {
    const onCreated = vi.fn();
    withQueryClient(<NewDerivationDialog open teamId="team-1" onCreated={onCreated} onClose={() => undefined} />);
    fireEvent.change(screen.getByLabelText("Title"), { target: { value: "Trolley sway" } });
    const create = screen.getByRole("button", { name: "Create" });
    fireEvent.click(create);
    fireEvent.click(create);
    fireEvent.submit(create.closest("form")!);

    // Disabled at once, before the request has even gone out.
    expect(isDisabled(create)).toBe(true);
    expect(create.textContent).toBe("Creating…");
    await waitFor(() => expect(calls).toHaveLength(1));
    expect(calls[0]!.url).toBe("/api/teams/team-1/derivations");
    expect(calls[0]!.key).toMatch(/^[0-9a-f]{8}-[0-9a-f]{4}-4[0-9a-f]{3}-[89ab][0-9a-f]{3}-[0-9a-f]{12}$/);
    expect(JSON.parse(calls[0]!.body as string)).toEqual({ title: "Trolley sway", template: "blank" });

    await act(async () => calls[0]!.answer(created("d-1")));
    await waitFor(() => expect(onCreated).toHaveBeenCalledWith("d-1"));
    expect(onCreated).toHaveBeenCalledTimes(1);
    expect(calls).toHaveLength(1);
  });

  it("retries a failed request with the same key, and uses a new key once the input changes", async () => {
    withQueryClient(<NewDerivationDialog open teamId="team-1" onCreated={() => undefined} onClose={() => undefined} />);
    fireEvent.change(screen.getByLabelText("Title"), { target: { value: "Seat rig" } });
    fireEvent.click(screen.getByRole("button", { name: "Create" }));
    await waitFor(() => expect(calls).toHaveLength(1));
    await act(async () => calls[0]!.answer(unavailable()));
    await screen.findByText("The database is not reachable right now. Try again in a moment.");
    const create = screen.getByRole("button", { name: "Create" });
    expect(isDisabled(create)).toBe(false);

    fireEvent.click(create);
    await waitFor(() => expect(calls).toHaveLength(2));
    expect(calls[1]!.key).toBe(calls[0]!.key);
    await act(async () => calls[1]!.answer(unavailable()));
    await waitFor(() => expect(isDisabled(screen.getByRole("button", { name: "Create" }))).toBe(false));

    fireEvent.change(screen.getByLabelText("Title"), { target: { value: "Seat rig, damped" } });
    fireEvent.click(screen.getByRole("button", { name: "Create" }));
    await waitFor(() => expect(calls).toHaveLength(3));
    expect(calls[2]!.key).not.toBe(calls[0]!.key);
  });
});

describe("ImportDerivationDialog", () => {
  function choose(file: File) {
    const input = screen.getByLabelText("Model file or notebook archive") as HTMLInputElement;
    Object.defineProperty(input, "files", { value: [file], configurable: true });
    fireEvent.change(input);
  }

  it("disables Import while the upload runs and sends a notebook archive to the notebook import", async () => {
    const onImported = vi.fn();
    withQueryClient(<ImportDerivationDialog open teamId="team-1" onImported={onImported} onClose={() => undefined} />);
    choose(new File([new Uint8Array([0x50, 0x4b, 0x03, 0x04, 0, 0])], "gimbal.notebook.zip", { type: "application/zip" }));
    const button = screen.getByRole("button", { name: "Import" });
    fireEvent.click(button);
    fireEvent.click(button);
    expect(isDisabled(button)).toBe(true);
    expect(button.textContent).toBe("Importing…");
    await waitFor(() => expect(calls).toHaveLength(1));
    expect(calls[0]!.url).toBe("/api/teams/team-1/derivations/import/notebook");
    expect(calls[0]!.key).not.toBeNull();
    expect(calls[0]!.body).toBeInstanceOf(FormData);
    await act(async () => calls[0]!.answer(created("d-2")));
    await waitFor(() => expect(onImported).toHaveBeenCalledWith("d-2"));
    expect(calls).toHaveLength(1);
  });

  it("sends a model file to the model import and lists every problem the server found", async () => {
    withQueryClient(<ImportDerivationDialog open teamId="team-1" onImported={() => undefined} onClose={() => undefined} />);
    choose(new File(['{"title":"x"}'], "hoist.model.json", { type: "application/json" }));
    fireEvent.click(screen.getByRole("button", { name: "Import" }));
    await waitFor(() => expect(calls).toHaveLength(1));
    expect(calls[0]!.url).toBe("/api/teams/team-1/derivations/import");
    const problems = { "document.json: cells[1].kind": ["unknown kind"], "runs/002.json": ["missing from the archive"] };
    await act(async () =>
      calls[0]!.answer(
        new Response(
          JSON.stringify({ error: { code: "unprocessable:archive", message: "The archive has 2 problems, listed below.", fieldErrors: problems } }),
          { status: 422 },
        ),
      ),
    );
    const alert = await screen.findByTestId("import-error");
    expect(alert.textContent).toContain("document.json: cells[1].kind: unknown kind");
    expect(alert.textContent).toContain("runs/002.json: missing from the archive");
    expect(isDisabled(screen.getByRole("button", { name: "Import" }))).toBe(false);
  });
});
