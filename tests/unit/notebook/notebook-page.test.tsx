// @vitest-environment jsdom
import { QueryClient, QueryClientProvider } from "@tanstack/react-query";
import { cleanup, configure, fireEvent, render, screen, waitFor, within } from "@testing-library/react";
import { afterEach, beforeEach, describe, expect, it, vi } from "vitest";
import { NotebookPage, type NotebookPageProps } from "@/components/notebook/notebook-page";
import type { CollabTicket } from "@/components/collab/shared-session";
import { ShortcutsProvider } from "@/components/shortcuts";
import { blankDocument, modelToDocument } from "@/lib/notebook/document";
import { yDocToDocument } from "@/lib/notebook/document/shared-doc";
import { templateModel } from "@/lib/notebook/templates";
import { MemoryCollabServer } from "../components/collab/memory-server";

vi.mock("next/navigation", () => ({ useRouter: () => ({ push: vi.fn() }) }));
configure({ asyncUtilTimeout: 5000 });

const UPDATED = "2030-01-01T10:00:00.000Z";
/** Two pages rendering at once are slow on a busy machine. */
const SLOW = { timeout: 15_000 };

function props(overrides: Partial<NotebookPageProps> = {}): NotebookPageProps {
  const document = modelToDocument(templateModel("single-pendulum"));
  return {
    derivationId: "d1",
    teamId: "t1",
    teamName: "Kestrel Lift & Motion",
    status: "draft",
    ownerName: "Ana Analyst",
    roleLabel: "Analyst",
    canEdit: true,
    canRename: true,
    initialDocument: document,
    initialUpdatedAt: UPDATED,
    rowTitle: document.title,
    ...overrides,
  };
}

function renderPage(p: NotebookPageProps) {
  const client = new QueryClient({ defaultOptions: { queries: { retry: false } } });
  return render(
    <QueryClientProvider client={client}>
      <ShortcutsProvider>
        <NotebookPage {...p} />
      </ShortcutsProvider>
    </QueryClientProvider>,
  );
}

const requests: { method: string; url: string; body: unknown }[] = [];

beforeEach(() => {
  requests.length = 0;
  tickets.length = 0;
  window.localStorage.clear();
});
afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

/** Tickets the collab-token route hands out, in order of request (a refusal when none is left). */
const tickets: CollabTicket[] = [];

function stubFetch(answer: (method: string, url: string) => { status: number; body: unknown }) {
  vi.stubGlobal(
    "fetch",
    vi.fn(async (url: string, init?: RequestInit) => {
      const method = init?.method ?? "GET";
      requests.push({ method, url, body: init?.body ? JSON.parse(String(init.body)) : undefined });
      const ticket = url.endsWith("/collab-token") ? tickets.shift() : undefined;
      const { status, body } = url.endsWith("/collab-token")
        ? ticket
          ? { status: 200, body: ticket }
          : { status: 404, body: { error: { code: "not_found:derivation", message: "Derivation not found." } } }
        : answer(method, url);
      return new Response(JSON.stringify(body), { status, headers: { "content-type": "application/json" } });
    }),
  );
}

describe("NotebookPage", () => {
  it("lists the evaluator's errors with field and column when an evaluation fails", async () => {
    stubFetch((method, url) =>
      url.endsWith("/evaluate")
        ? {
            status: 422,
            body: {
              error: {
                code: "unprocessable:model",
                message: 'potential, column 5: unknown symbol "q"',
                details: { diagnostics: [{ code: "unknown-symbol", field: "potential", column: 5, length: 1, message: 'unknown symbol "q"' }] },
              },
            },
          }
        : { status: 200, body: { updatedAt: UPDATED } },
    );
    renderPage(props());
    const errors = await screen.findByTestId("evaluation-errors");
    expect(errors.textContent).toContain('Potential energy, column 5: unknown symbol "q"');
    expect(screen.getByTestId("evaluation-status").dataset.state).toBe("failed");
    // The evaluated document is the page's own (unsaved edits included).
    const evaluate = requests.find((r) => r.url.endsWith("/evaluate"));
    expect((evaluate?.body as { document: { title: string } }).document.title).toBe("Hook block on a fixed hoist cable");
  });

  it("is read-only for a reader: live, no save state, inputs read-only, nothing sent", async () => {
    stubFetch(() => ({ status: 200, body: { cached: true, modelHash: "h", result: { equations: [] }, timings: {}, requestMs: 3, evaluatedAt: UPDATED } }));
    const p = props({ canEdit: false, canRename: false, roleLabel: "Viewer" });
    const server = new MemoryCollabServer(p.initialDocument);
    tickets.push(server.ticket({ id: "v", name: "Vi Viewer", readOnly: true }));
    renderPage({ ...p, collabProvider: server.provider });
    expect(screen.getByTestId("read-only-badge")).toBeTruthy();
    await waitFor(() => expect(screen.getByTestId("connection-status").dataset.state).toBe("live"));
    expect(screen.getByTestId("connection-status").textContent).toBe("Live");
    const name = screen.getByRole("textbox", { name: "Name, coordinate 1" }) as HTMLInputElement;
    expect(name.readOnly).toBe(true);
    fireEvent.change(name, { target: { value: "phi" } });
    await waitFor(() => expect(screen.getByTestId("evaluation-status").dataset.state).toBe("current"));
    expect(requests.filter((r) => !(r.method === "POST" && (r.url.endsWith("/evaluate") || r.url.endsWith("/collab-token"))))).toEqual([]);
    expect(yDocToDocument(server.doc)).toEqual(p.initialDocument);
    expect(server.dropped).toBe(0);
  });

  it("puts two people on one document: typing reaches the other, Saved only once stored, both avatars shown", async () => {
    stubFetch(() => ({ status: 200, body: { cached: true, modelHash: "h", result: { equations: [] }, timings: {}, requestMs: 3, evaluatedAt: UPDATED } }));
    const p = props();
    const server = new MemoryCollabServer(p.initialDocument);
    tickets.push(server.ticket({ id: "a", name: "Ana Analyst", colour: "#0f5f63" }), server.ticket({ id: "b", name: "Bo Lead", colour: "#8c3b7a" }));
    const first = renderPage({ ...p, collabProvider: server.provider });
    await waitFor(() => expect(within(first.container).getByTestId("connection-status").dataset.state).toBe("saved"), SLOW);
    const second = renderPage({ ...p, collabProvider: server.provider });
    await waitFor(() => expect(within(second.container).getByTestId("connection-status").dataset.state).toBe("saved"), SLOW);

    // Editable once the shared document has arrived (a frame after the connection is live).
    for (const page of [first, second]) await waitFor(() => expect(within(page.container).getByTestId("notebook-page").dataset.readOnly).toBeUndefined(), SLOW);
    server.holdAcks = true;
    const mine = within(first.container).getByRole("textbox", { name: "Name, coordinate 1" }) as HTMLInputElement;
    const theirs = within(second.container).getByRole("textbox", { name: "Name, coordinate 1" }) as HTMLInputElement;
    fireEvent.change(mine, { target: { value: `${mine.value}2` } });
    await waitFor(() => expect(theirs.value).toBe(mine.value), SLOW);
    expect(mine.value).toBe("theta2");
    // Sent and relayed, but not yet confirmed as stored: not "Saved".
    await waitFor(() => expect(within(first.container).getByTestId("connection-status").dataset.state).toBe("saving"), SLOW);
    server.releaseAcks();
    await waitFor(() => expect(within(first.container).getByTestId("connection-status").dataset.state).toBe("saved"), SLOW);
    expect(yDocToDocument(server.doc).cells.find((cell) => cell.kind === "coordinates")).toMatchObject({ rows: [{ name: "theta2" }] });

    await waitFor(
      () =>
        expect(
          within(first.container)
            .getAllByTestId("presence-avatar")
            .map((avatar) => avatar.dataset.name),
        ).toEqual(["Ana Analyst", "Bo Lead"]),
      SLOW,
    );
    expect(within(second.container).getByRole("group", { name: "Viewing now: Bo Lead (you), Ana Analyst" })).toBeTruthy();
  }, 40_000);

  it("says why the connection was refused, and keeps the notebook read-only", async () => {
    stubFetch(() => ({ status: 200, body: { cached: true, modelHash: "h", result: { equations: [] }, timings: {}, requestMs: 3, evaluatedAt: UPDATED } }));
    renderPage(props());
    await waitFor(() => expect(screen.getByTestId("connection-status").dataset.state).toBe("refused"));
    expect(screen.getByTestId("connection-status").textContent).toMatch(/^Refused: Derivation not found/);
    expect((screen.getByRole("textbox", { name: "Name, coordinate 1" }) as HTMLInputElement).readOnly).toBe(true);
    expect(screen.queryByRole("button", { name: "Add cell" })).toBeNull();
  });

  it("shows the export safety note beside the export actions", async () => {
    stubFetch(() => ({ status: 200, body: { cached: true, modelHash: "h", result: { equations: [] }, timings: {}, requestMs: 3, evaluatedAt: UPDATED } }));
    renderPage(props());
    fireEvent.click(screen.getByRole("button", { name: "Export ▾" }));
    const group = screen.getByRole("group", { name: "Export" });
    expect(within(group).getByTestId("export-safety-note").textContent).toMatch(/Derived equations are a model/);
    expect(within(group).getByRole("button", { name: "Model file (.model.json)" })).toBeTruthy();
  });

  it("opens a blank notebook quietly: no evaluation, no warnings for cells not yet written", async () => {
    stubFetch(() => ({ status: 200, body: { updatedAt: UPDATED } }));
    const document = blankDocument("New hoist study", counter());
    renderPage(props({ initialDocument: document, rowTitle: document.title }));
    // Long enough for the editors to lint and for an automatic evaluation to have been asked for.
    await screen.findAllByRole("textbox", { name: /energy/ });
    await new Promise((resolve) => setTimeout(resolve, 1_500));
    expect(requests.filter((r) => r.url.endsWith("/evaluate"))).toEqual([]);
    expect(screen.queryByText("expression is empty")).toBeNull();
    expect(screen.queryByRole("alert")).toBeNull();
    expect(screen.getByTestId("evaluation-status").dataset.state).toBe("none");
  });

  it("says why a reader cannot edit: approved and locked, or the role", () => {
    stubFetch(() => ({ status: 200, body: { cached: true, modelHash: "h", result: { equations: [] }, timings: {}, requestMs: 3, evaluatedAt: UPDATED } }));
    const { unmount } = renderPage(props({ canEdit: false, canRename: false, status: "approved", readOnlyReason: "approved" }));
    expect(screen.getByTestId("read-only-note").textContent).toMatch(/^Approved and locked\. .*a lead of the team can unlock it, giving a reason/);
    expect(screen.getByTestId("read-only-badge").textContent).toBe("Read-only: approved and locked");
    unmount();
    renderPage(props({ canEdit: false, canRename: false, roleLabel: "Reviewer", readOnlyReason: "role" }));
    expect(screen.getByTestId("read-only-note").textContent).toMatch(/^Read-only for your role\. As reviewer you can read, evaluate and export/);
    expect(screen.getByTestId("read-only-badge").textContent).toBe("Read-only for reviewers");
  });

  it("lets the review area's lock banner stand in for the read-only note when locked", () => {
    stubFetch(() => ({ status: 200, body: { cached: true, modelHash: "h", result: { equations: [] }, timings: {}, requestMs: 3, evaluatedAt: UPDATED } }));
    renderPage(
      props({
        canEdit: false,
        canRename: false,
        status: "approved",
        readOnlyReason: "approved",
        locked: true,
        review: <p data-testid="review-area">Locked at revision 2</p>,
      }),
    );
    expect(screen.getByTestId("review-area").textContent).toBe("Locked at revision 2");
    expect(screen.queryByTestId("read-only-note")).toBeNull();
    expect(screen.getByTestId("read-only-badge").textContent).toBe("Read-only: approved and locked");
  });

  it("keeps one h1, holding the editable title", async () => {
    stubFetch(() => ({ status: 200, body: { updatedAt: UPDATED } }));
    const p = props();
    const server = new MemoryCollabServer(p.initialDocument);
    tickets.push(server.ticket({ id: "a", name: "Ana Analyst" }));
    renderPage({ ...p, collabProvider: server.provider });
    await screen.findByRole("textbox", { name: "Derivation title" });
    const headings = screen.getAllByRole("heading", { level: 1 });
    expect(headings).toHaveLength(1);
    expect(within(headings[0]!).getByRole("textbox", { name: "Derivation title" })).toBeTruthy();
  });
});

function counter() {
  let n = 0;
  return () => `b${++n}`;
}
