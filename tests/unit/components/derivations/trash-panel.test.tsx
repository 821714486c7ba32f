// @vitest-environment jsdom
import { QueryClient, QueryClientProvider } from "@tanstack/react-query";
import { cleanup, fireEvent, render, screen, waitFor, within } from "@testing-library/react";
import { afterEach, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";
import { TrashPanel, type TrashedRow } from "@/components/derivations/trash-panel";
import type { MemberRole } from "@/lib/domain";

beforeAll(() => {
  HTMLDialogElement.prototype.showModal ??= function showModal(this: HTMLDialogElement) {
    this.open = true;
  };
  HTMLDialogElement.prototype.close ??= function close(this: HTMLDialogElement) {
    this.open = false;
  };
});

const DAY = 86_400_000;
const deletedAt = new Date(Date.now() - 3 * DAY);
const rows: TrashedRow[] = [
  {
    id: "d-own",
    title: "Hoist drum brake",
    status: "draft",
    ownerId: "me",
    ownerName: "Ana Analyst",
    deletedAt: deletedAt.toISOString(),
    deletedBy: { id: "me", name: "Ana Analyst" },
    purgeAt: new Date(deletedAt.getTime() + 30 * DAY).toISOString(),
  },
  {
    id: "d-theirs",
    title: "Gantry rail friction",
    status: "in_review",
    ownerId: "colleague",
    ownerName: "Leo Lead",
    deletedAt: deletedAt.toISOString(),
    deletedBy: { id: "colleague", name: "Leo Lead" },
    purgeAt: new Date(deletedAt.getTime() + 30 * DAY).toISOString(),
  },
];

let requests: { url: string; method: string }[];
let listed: TrashedRow[];

beforeEach(() => {
  requests = [];
  listed = rows;
  vi.stubGlobal(
    "fetch",
    vi.fn(async (url: string, init: RequestInit) => {
      requests.push({ url, method: init.method ?? "GET" });
      if ((init.method ?? "GET") === "GET") return new Response(JSON.stringify({ retentionDays: 30, derivations: listed }), { status: 200 });
      return new Response(JSON.stringify({ derivation: { id: "d-own" } }), { status: 200 });
    }),
  );
});

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

async function openTrash(role: MemberRole, count = 2) {
  const client = new QueryClient({ defaultOptions: { queries: { retry: false } } });
  render(
    <QueryClientProvider client={client}>
      <TrashPanel teamId="team-1" role={role} currentUserId="me" />
    </QueryClientProvider>,
  );
  await waitFor(() => expect(screen.getByTestId("trash-count").textContent).toBe(`(${count})`));
  fireEvent.click(screen.getByRole("button", { name: /Trash/ }));
  return screen.getByTestId("trash-table");
}

describe("TrashPanel", () => {
  it("lets an analyst restore only their own derivation, and never delete for good", async () => {
    const table = await openTrash("analyst");
    expect(within(table).getAllByText(/27 days left/)).toHaveLength(2);
    expect(within(table).queryByRole("button", { name: "Restore Hoist drum brake" })).not.toBeNull();
    expect(within(table).queryByRole("button", { name: "Restore Gantry rail friction" })).toBeNull();
    expect(within(table).queryByRole("button", { name: /for good/ })).toBeNull();

    fireEvent.click(within(table).getByRole("button", { name: "Restore Hoist drum brake" }));
    await waitFor(() => expect(requests).toContainEqual({ url: "/api/teams/team-1/trash/d-own/restore", method: "POST" }));
  });

  it("counts the days left from when the list was read and never shows more than the retention period", async () => {
    // Deleted "in a minute" by the server's clock: a server a little ahead of the browser.
    const ahead = new Date(Date.now() + 60_000);
    listed = [{ ...rows[0]!, deletedAt: ahead.toISOString(), purgeAt: new Date(ahead.getTime() + 30 * DAY).toISOString() }];
    const table = await openTrash("analyst", 1);
    expect(table.textContent).toContain("(30 days left)");
  });

  it("lets a lead restore anything and delete for good after confirming", async () => {
    const table = await openTrash("lead");
    expect(within(table).getAllByRole("button", { name: /^Restore / })).toHaveLength(2);
    fireEvent.click(within(table).getByRole("button", { name: "Delete Gantry rail friction for good" }));
    const dialog = screen.getByRole("dialog", { hidden: true });
    expect(dialog.textContent).toContain("This cannot be undone.");
    fireEvent.click(within(dialog).getByRole("button", { name: "Delete for good", hidden: true }));
    await waitFor(() => expect(requests).toContainEqual({ url: "/api/teams/team-1/trash/d-theirs", method: "DELETE" }));
  });
});
