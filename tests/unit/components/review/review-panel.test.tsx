// @vitest-environment jsdom
import { cleanup, configure, fireEvent, render, screen, waitFor, within } from "@testing-library/react";
import { QueryClient, QueryClientProvider } from "@tanstack/react-query";
import { afterEach, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";
import { DerivationReview } from "@/components/review/derivation-review";
import { ShortcutsProvider } from "@/components/shortcuts";
import type { ReviewPanelData } from "@/lib/review/view";

const router = { push: vi.fn(), refresh: vi.fn() };
vi.mock("next/navigation", () => ({ useRouter: () => router }));
configure({ asyncUtilTimeout: 5000 });

const ANALYST = "00000000-0000-4000-8000-00000000000a";
const REVIEWER = "00000000-0000-4000-8000-00000000000b";
const LEAD = "00000000-0000-4000-8000-00000000000c";
const HASH = "3f5a9c0d2e7b41a8c6d9e0f1a2b3c4d5e6f708192a3b4c5d6e7f8091a2b3c4d5";

function data(overrides: Partial<ReviewPanelData> = {}): ReviewPanelData {
  return {
    derivationId: "d1",
    status: "draft",
    myId: ANALYST,
    latest: { id: "r2", number: 2, contentHash: HASH, authorIds: [ANALYST], authorNames: ["Tomas Reyes"] },
    currentIsLatest: true,
    request: null,
    lock: null,
    candidates: [
      { id: LEAD, name: "Ines Marlow", role: "lead" },
      { id: REVIEWER, name: "Priya Nandakumar", role: "reviewer" },
    ],
    can: { requestReview: true, review: false, approve: false, unlock: false },
    reportRevisionId: "r2",
    ...overrides,
  };
}

function inReview(overrides: Partial<ReviewPanelData> = {}): ReviewPanelData {
  return data({
    status: "in_review",
    request: {
      revisionId: "r2",
      revisionNumber: 2,
      requestedById: ANALYST,
      requestedByName: "Tomas Reyes",
      createdAt: "2030-05-12T14:02:00.000Z",
      message: "Please check the rope term.",
      open: true,
      reviewers: [{ id: REVIEWER, name: "Priya Nandakumar", decision: "pending", comment: "", decidedAt: null }],
    },
    ...overrides,
  });
}

const requests: { method: string; url: string; body: unknown }[] = [];
let answer: (method: string, url: string) => { status: number; body: unknown } = () => ({ status: 200, body: {} });

beforeAll(() => {
  // jsdom has <dialog> without its modal methods.
  HTMLDialogElement.prototype.showModal = function showModal(this: HTMLDialogElement) {
    this.setAttribute("open", "");
  };
  HTMLDialogElement.prototype.close = function close(this: HTMLDialogElement) {
    this.removeAttribute("open");
    this.dispatchEvent(new Event("close"));
  };
});

beforeEach(() => {
  requests.length = 0;
  router.push.mockReset();
  router.refresh.mockReset();
  answer = () => ({ status: 200, body: {} });
  vi.stubGlobal(
    "fetch",
    vi.fn(async (url: string, init?: RequestInit) => {
      const method = init?.method ?? "GET";
      requests.push({ method, url, body: init?.body ? JSON.parse(String(init.body)) : undefined });
      const { status, body } = answer(method, url);
      return new Response(JSON.stringify(body), { status, headers: { "content-type": "application/json" } });
    }),
  );
});
afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

/** An element's text with whitespace runs as single spaces, as a reader sees it. */
function text(element: Element): string {
  return (element.textContent ?? "").replace(/\s+/g, " ").trim();
}

function renderPanel(panel: ReviewPanelData) {
  const client = new QueryClient({ defaultOptions: { queries: { retry: false }, mutations: { retry: false } } });
  return render(
    <QueryClientProvider client={client}>
      <ShortcutsProvider>
        <DerivationReview data={panel} />
      </ShortcutsProvider>
    </QueryClientProvider>,
  );
}

describe("review panel", () => {
  it("offers an analyst's draft for review and sends the chosen reviewers", async () => {
    renderPanel(data());
    expect(text(screen.getByTestId("review-summary"))).toContain("Draft");
    expect(screen.queryByRole("button", { name: /Approve/ })).toBeNull();
    fireEvent.click(screen.getByRole("button", { name: "Request review…" }));
    const dialog = screen.getByRole("dialog", { name: "Request review" });

    // The same rule as the API: at least one person.
    fireEvent.click(within(dialog).getByRole("button", { name: "Send request" }));
    expect(text(await within(dialog).findByRole("alert"))).toContain("Choose at least one reviewer or lead.");
    expect(requests).toHaveLength(0);

    fireEvent.click(within(dialog).getByRole("checkbox", { name: /Priya Nandakumar/ }));
    fireEvent.change(within(dialog).getByLabelText("Message (optional)"), { target: { value: "Rope mass added." } });
    answer = (method, url) =>
      url === "/api/derivations/d1"
        ? { status: 200, body: { derivation: { title: "t", content: {}, updatedAt: "2030-01-01T00:00:00.000Z" } } }
        : { status: 201, body: {} };
    fireEvent.click(within(dialog).getByRole("button", { name: "Send request" }));
    await waitFor(() => expect(router.refresh).toHaveBeenCalled());
    expect(requests[0]).toEqual({ method: "POST", url: "/api/derivations/d1/review", body: { reviewerIds: [REVIEWER], message: "Rope mass added." } });
  });

  it("shows the server's field error when someone asked may not review", async () => {
    answer = () => ({
      status: 400,
      body: {
        error: {
          code: "bad_request:validation",
          message: "Some fields need attention.",
          fieldErrors: { reviewerIds: ["Jonah Weller is a viewer; ask reviewers or leads."] },
        },
      },
    });
    renderPanel(data());
    fireEvent.click(screen.getByRole("button", { name: "Request review…" }));
    const dialog = screen.getByRole("dialog", { name: "Request review" });
    fireEvent.click(within(dialog).getByRole("checkbox", { name: /Ines Marlow/ }));
    fireEvent.click(within(dialog).getByRole("button", { name: "Send request" }));
    expect(text(await within(dialog).findByRole("alert"))).toContain("Jonah Weller is a viewer");
    expect(router.refresh).not.toHaveBeenCalled();
  });

  it("lets an assigned reviewer sign off or request changes, which needs a comment", async () => {
    renderPanel(inReview({ myId: REVIEWER, can: { requestReview: false, review: true, approve: false, unlock: false } }));
    expect(text(screen.getByTestId("review-summary"))).toContain("In review — revision 2, asked by Tomas Reyes on 12 May 2030, 14:02 UTC; 0 of 1 signed off.");
    expect(screen.queryByRole("button", { name: "Request review…" })).toBeNull();
    fireEvent.click(screen.getByRole("button", { name: "Request changes" }));
    const dialog = screen.getByRole("dialog", { name: "Request changes" });
    fireEvent.click(within(dialog).getByRole("button", { name: "Request changes" }));
    expect(text(await within(dialog).findByRole("alert"))).toContain("Say what needs to change.");
    fireEvent.change(within(dialog).getByLabelText("What needs to change"), { target: { value: "Add the rope's own mass." } });
    fireEvent.click(within(dialog).getByRole("button", { name: "Request changes" }));
    await waitFor(() => expect(router.refresh).toHaveBeenCalled());
    expect(requests[0]).toEqual({
      method: "POST",
      url: "/api/derivations/d1/review/decision",
      body: { decision: "changes_requested", comment: "Add the rope's own mass." },
    });
  });

  it("lists each reviewer's decision and comment", () => {
    const panel = inReview();
    panel.request!.reviewers = [
      { id: REVIEWER, name: "Priya Nandakumar", decision: "signed_off", comment: "", decidedAt: "2030-05-13T09:00:00.000Z" },
      { id: LEAD, name: "Ines Marlow", decision: "changes_requested", comment: "Check the drum inertia.", decidedAt: "2030-05-13T10:00:00.000Z" },
    ];
    renderPanel(panel);
    const reviewers = screen.getAllByTestId("reviewer");
    expect(reviewers.map((item) => item.getAttribute("data-decision"))).toEqual(["signed_off", "changes_requested"]);
    expect(text(reviewers[1]!)).toContain("Check the drum inertia.");
  });

  it("refuses a lead's approval of their own changes, naming the reason", () => {
    renderPanel(
      inReview({
        myId: LEAD,
        latest: { id: "r2", number: 2, contentHash: HASH, authorIds: [LEAD], authorNames: ["Ines Marlow"] },
        can: { requestReview: true, review: true, approve: true, unlock: false },
      }),
    );
    expect((screen.getByRole("button", { name: "Approve revision 2" }) as HTMLButtonElement).disabled).toBe(true);
    expect(text(screen.getByTestId("approve-blocker"))).toContain("You made changes in revision 2; a second person must approve them.");
  });

  it("refuses approval while the content differs from the latest revision", () => {
    renderPanel(inReview({ myId: LEAD, currentIsLatest: false, can: { requestReview: true, review: true, approve: true, unlock: false } }));
    expect((screen.getByRole("button", { name: "Approve revision 2" }) as HTMLButtonElement).disabled).toBe(true);
    expect(text(screen.getByTestId("approve-blocker"))).toContain("changed after revision 2");
  });

  it("approves exactly the latest revision after confirmation, and shows a refusal from the server", async () => {
    renderPanel(inReview({ myId: LEAD, can: { requestReview: true, review: true, approve: true, unlock: false } }));
    fireEvent.click(screen.getByRole("button", { name: "Approve revision 2" }));
    const dialog = screen.getByRole("dialog", { name: "Approve and lock" });
    expect(text(dialog)).toContain(HASH.slice(0, 12));
    answer = (method, url) =>
      url.endsWith("/approve")
        ? {
            status: 409,
            body: { error: { code: "conflict:revision", message: "The derivation changed after revision 2. Review the current content before approving it." } },
          }
        : { status: 200, body: {} };
    fireEvent.click(within(dialog).getByRole("button", { name: "Approve and lock revision 2" }));
    expect(text(await within(dialog).findByRole("alert"))).toContain("changed after revision 2");
    expect(requests[0]).toEqual({ method: "POST", url: "/api/derivations/d1/approve", body: { revisionId: "r2" } });
    expect(router.refresh).not.toHaveBeenCalled();
  });

  it("points to the comparison when revisions were saved after the review request", () => {
    renderPanel(inReview({ latest: { id: "r3", number: 3, contentHash: HASH, authorIds: [ANALYST], authorNames: ["Tomas Reyes"] } }));
    const link = within(screen.getByTestId("review-moved-on")).getByRole("link", { name: "Compare them" });
    expect(link.getAttribute("href")).toBe("/derivations/d1/history/compare?from=2&to=3");
  });
});

describe("lock banner", () => {
  const lock = { revisionId: "r2", revisionNumber: 2, contentHash: HASH, approvedByName: "Ines Marlow", approvedAt: "2030-05-14T08:30:00.000Z" };

  it("names the locked revision, the approver and the date, and offers no unlock to an analyst", () => {
    renderPanel(data({ status: "approved", lock, can: { requestReview: false, review: false, approve: false, unlock: false } }));
    const banner = screen.getByTestId("lock-banner");
    expect(text(banner)).toContain("Approved and locked at revision 2 by Ines Marlow on 14 May 2030, 08:30 UTC.");
    expect(text(banner)).toContain(HASH.slice(0, 12));
    expect(within(banner).queryByRole("button", { name: "Unlock…" })).toBeNull();
    expect(screen.queryByRole("button", { name: "Request review…" })).toBeNull();
  });

  it("lets a lead unlock with a written reason", async () => {
    renderPanel(data({ status: "approved", lock, myId: LEAD, can: { requestReview: false, review: false, approve: false, unlock: true } }));
    fireEvent.click(screen.getByRole("button", { name: "Unlock…" }));
    const dialog = screen.getByRole("dialog", { name: "Unlock for changes" });
    fireEvent.change(within(dialog).getByLabelText("Reason for unlocking"), { target: { value: "short" } });
    fireEvent.click(within(dialog).getByRole("button", { name: "Unlock" }));
    expect(text(await within(dialog).findByRole("alert"))).toContain("at least 10 characters");
    fireEvent.change(within(dialog).getByLabelText("Reason for unlocking"), { target: { value: "Rope stiffness is needed for the dynamic load case." } });
    fireEvent.click(within(dialog).getByRole("button", { name: "Unlock" }));
    await waitFor(() => expect(router.refresh).toHaveBeenCalled());
    expect(requests[0]).toEqual({ method: "POST", url: "/api/derivations/d1/unlock", body: { reason: "Rope stiffness is needed for the dynamic load case." } });
  });
});
