// @vitest-environment jsdom
import { QueryClient, QueryClientProvider } from "@tanstack/react-query";
import { act, cleanup, fireEvent, render, screen, waitFor, within } from "@testing-library/react";
import { afterEach, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";
import { DerivationsBoard, type DerivationRow } from "@/components/derivations/derivations-board";
import { derivationListKey } from "@/components/derivations/query-keys";
import { ShortcutsProvider } from "@/components/shortcuts";

vi.mock("next/navigation", () => ({ useRouter: () => ({ push: vi.fn() }) }));

beforeAll(() => {
  HTMLDialogElement.prototype.showModal ??= function showModal(this: HTMLDialogElement) {
    this.open = true;
  };
  HTMLDialogElement.prototype.close ??= function close(this: HTMLDialogElement) {
    this.open = false;
  };
});

const row = (id: string, title: string, ownerId: string): DerivationRow => ({
  id,
  teamId: "team-1",
  title,
  status: "draft",
  ownerId,
  ownerName: ownerId === "me" ? "Ana Analyst" : "Leo Lead",
  updatedByName: null,
  coordinatesCount: 1,
  createdAt: "2030-01-01T09:00:00.000Z",
  updatedAt: "2030-01-01T10:00:00.000Z",
});

let stored: DerivationRow[];
let requests: { url: string; method: string }[];

beforeEach(() => {
  stored = [row("d-own", "Hoist drum brake", "me"), row("d-theirs", "Gantry rail friction", "lead")];
  requests = [];
  vi.stubGlobal(
    "fetch",
    vi.fn(async (url: string, init: RequestInit) => {
      const method = init.method ?? "GET";
      requests.push({ url, method });
      if (method === "DELETE") {
        stored = stored.filter((entry) => !url.endsWith(entry.id));
        return new Response(null, { status: 204 });
      }
      return new Response(JSON.stringify({ derivations: stored, page: 1, pageSize: 20, total: stored.length }), { status: 200 });
    }),
  );
});

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

function renderBoard(client: QueryClient) {
  render(
    <QueryClientProvider client={client}>
      <ShortcutsProvider>
        <DerivationsBoard teamId="team-1" role="analyst" currentUserId="me" owners={[]} />
      </ShortcutsProvider>
    </QueryClientProvider>,
  );
}

describe("DerivationsBoard", () => {
  it("offers an analyst Delete on their own derivations only, and a notice that stays until the row is back", async () => {
    const client = new QueryClient({ defaultOptions: { queries: { retry: false } } });
    renderBoard(client);
    const table = await screen.findByTestId("derivations-table");
    await within(table).findByText("Hoist drum brake");
    expect(within(table).queryByRole("button", { name: "Delete Hoist drum brake" })).not.toBeNull();
    expect(within(table).queryByRole("button", { name: "Delete Gantry rail friction" })).toBeNull();

    fireEvent.click(within(table).getByRole("button", { name: "Delete Hoist drum brake" }));
    fireEvent.click(screen.getByRole("button", { name: "Move to trash", hidden: true }));
    const notice = await screen.findByTestId("trashed-notice");
    expect(notice.textContent).toContain("Hoist drum brake");
    await waitFor(() => expect(within(table).queryByText("Hoist drum brake")).toBeNull());
    expect(screen.queryByTestId("trashed-notice")).not.toBeNull();
    expect(requests).toContainEqual({ url: "/api/derivations/d-own", method: "DELETE" });

    // Restored elsewhere (the trash panel refreshes the list): the notice has nothing left to undo.
    stored = [row("d-own", "Hoist drum brake", "me"), ...stored];
    await act(() => client.invalidateQueries({ queryKey: derivationListKey("team-1") }));
    await within(table).findByText("Hoist drum brake");
    await waitFor(() => expect(screen.queryByTestId("trashed-notice")).toBeNull());
  });
});
