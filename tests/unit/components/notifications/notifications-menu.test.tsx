// @vitest-environment jsdom
import { QueryClient, QueryClientProvider } from "@tanstack/react-query";
import { cleanup, configure, fireEvent, render, screen, waitFor, within } from "@testing-library/react";
import { afterEach, beforeEach, describe, expect, it, vi } from "vitest";
import { NotificationsMenu, type NotificationItem } from "@/components/notifications/notifications-menu";
import { useLeaveGuard } from "@/components/collab/use-leave-guard";
import { ShortcutsProvider } from "@/components/shortcuts";

const router = { push: vi.fn(), refresh: vi.fn() };
vi.mock("next/navigation", () => ({ useRouter: () => router }));
configure({ asyncUtilTimeout: 5000 });

const ID = "11111111-1111-4111-8111-111111111111";
const DERIVATION = "22222222-2222-4222-8222-222222222222";

let items: NotificationItem[] = [];
const posts: unknown[] = [];

beforeEach(() => {
  posts.length = 0;
  router.push.mockReset();
  items = [
    {
      id: ID,
      kind: "review_request",
      text: 'asked you to review revision 2 of "Hoist drum"',
      derivationId: DERIVATION,
      derivationTitle: "Hoist drum",
      actorName: "Tomas Reyes",
      readAt: null,
      createdAt: "2030-05-12T14:02:00.000Z",
    },
    {
      id: "33333333-3333-4333-8333-333333333333",
      kind: "approved",
      text: 'approved revision 1 of "Seat rig"',
      derivationId: null,
      derivationTitle: null,
      actorName: "Ines Marlow",
      readAt: "2030-05-11T10:00:00.000Z",
      createdAt: "2030-05-11T09:00:00.000Z",
    },
  ];
  vi.stubGlobal(
    "fetch",
    vi.fn(async (url: string, init?: RequestInit) => {
      if (init?.method === "POST") {
        const body = JSON.parse(String(init.body ?? "{}")) as { ids?: string[] };
        posts.push(body);
        items = items.map((item) => (!body.ids || body.ids.includes(item.id) ? { ...item, readAt: item.readAt ?? "2030-05-12T15:00:00.000Z" } : item));
        return new Response(null, { status: 204 });
      }
      const unread = items.filter((item) => !item.readAt).length;
      return new Response(JSON.stringify({ unread, notifications: items }), { status: 200, headers: { "content-type": "application/json" } });
    }),
  );
});
afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

function renderMenu() {
  const client = new QueryClient({ defaultOptions: { queries: { retry: false } } });
  return render(
    <QueryClientProvider client={client}>
      <ShortcutsProvider>
        <NotificationsMenu />
      </ShortcutsProvider>
    </QueryClientProvider>,
  );
}

/** A notebook page with one edit the server has not stored, whose author declines to leave. */
function UnstoredEdit({ asked }: { asked: string[] }) {
  useLeaveGuard({ pending: 1, whenStored: async () => false, waitMs: 0, confirm: (message) => (asked.push(message), false) });
  return null;
}

describe("notifications menu", () => {
  it("asks before leaving a page with unstored edits, and stays when told to", async () => {
    const asked: string[] = [];
    const client = new QueryClient({ defaultOptions: { queries: { retry: false } } });
    render(
      <QueryClientProvider client={client}>
        <ShortcutsProvider>
          <UnstoredEdit asked={asked} />
          <NotificationsMenu />
        </ShortcutsProvider>
      </QueryClientProvider>,
    );
    fireEvent.click(await screen.findByRole("button", { name: "Notifications, 1 unread" }));
    const panel = await screen.findByRole("region", { name: "Notifications" });
    fireEvent.click((await within(panel).findAllByTestId("notification"))[0]!);
    await waitFor(() => expect(asked).toEqual(["1 edit has not reached the server yet and would be lost. Leave this page anyway?"]));
    expect(router.push).not.toHaveBeenCalled();
  });

  it("shows the unread count, lists the notifications, and marks one read when it is opened", async () => {
    renderMenu();
    const button = await screen.findByRole("button", { name: "Notifications, 1 unread" });
    expect(screen.getByTestId("unread-count").textContent).toBe("1");
    fireEvent.click(button);
    const panel = await screen.findByRole("region", { name: "Notifications" });
    const entries = await within(panel).findAllByTestId("notification");
    expect(entries.map((entry) => entry.getAttribute("data-unread"))).toEqual(["true", null]);
    expect(entries[0]!.textContent).toContain('Tomas Reyes asked you to review revision 2 of "Hoist drum"');
    fireEvent.click(entries[0]!);
    await waitFor(() => expect(router.push).toHaveBeenCalledWith(`/derivations/${DERIVATION}`));
    await waitFor(() => expect(posts).toEqual([{ ids: [ID] }]));
    await screen.findByRole("button", { name: "Notifications" });
    expect(screen.queryByTestId("unread-count")).toBeNull();
  });

  it("marks everything read at once and closes with Escape, back on its button", async () => {
    renderMenu();
    const button = await screen.findByRole("button", { name: "Notifications, 1 unread" });
    fireEvent.click(button);
    const panel = await screen.findByRole("region", { name: "Notifications" });
    fireEvent.click(within(panel).getByRole("button", { name: "Mark all read" }));
    await waitFor(() => expect(posts).toEqual([{}]));
    await screen.findByRole("button", { name: "Notifications" });
    fireEvent.keyDown(within(panel).getByRole("button", { name: "Mark all read" }), { key: "Escape" });
    expect(screen.queryByRole("region", { name: "Notifications" })).toBeNull();
    expect(document.activeElement).toBe(button);
  });
});
