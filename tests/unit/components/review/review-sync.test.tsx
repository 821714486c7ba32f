// @vitest-environment jsdom
import { act, cleanup, render } from "@testing-library/react";
import { afterEach, describe, expect, it, vi } from "vitest";
import { ReviewSyncProvider, useReviewSync, type ReviewSync } from "@/components/review/review-sync";
import { blankDocument, type DerivationDocument } from "@/lib/notebook/document";

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

function serverAnswers(document: unknown, updatedAt: string) {
  vi.stubGlobal(
    "fetch",
    vi.fn(
      async () =>
        new Response(JSON.stringify({ derivation: { title: "Hoist", content: document, updatedAt } }), {
          status: 200,
          headers: { "content-type": "application/json" },
        }),
    ),
  );
}

function mount(props: { canEdit: boolean; document: DerivationDocument; saved: boolean }) {
  const autosave = { saveNow: vi.fn(async () => props.saved), reset: vi.fn() };
  let sync: ReviewSync | null = null;
  function Probe() {
    sync = useReviewSync();
    return null;
  }
  render(
    <ReviewSyncProvider derivationId="d1" canEdit={props.canEdit} autosave={autosave} document={props.document}>
      <Probe />
    </ReviewSyncProvider>,
  );
  return { autosave, sync: () => sync! };
}

describe("review sync", () => {
  it("saves pending edits before a step and refuses the step when they cannot be saved", async () => {
    const document = blankDocument("Hoist");
    const saved = mount({ canEdit: true, document, saved: true });
    await expect(saved.sync().prepare()).resolves.toEqual({ ok: true });
    expect(saved.autosave.saveNow).toHaveBeenCalledTimes(1);
    cleanup();
    const unsaved = mount({ canEdit: true, document, saved: false });
    const result = await unsaved.sync().prepare();
    expect(result.ok).toBe(false);
  });

  it("does not save for a reader", async () => {
    const { autosave, sync } = mount({ canEdit: false, document: blankDocument("Hoist"), saved: false });
    await expect(sync().prepare()).resolves.toEqual({ ok: true });
    expect(autosave.saveNow).not.toHaveBeenCalled();
  });

  it("continues autosave from the server's new version when it holds the same content (keys in any order)", async () => {
    const document = blankDocument("Hoist");
    const { autosave, sync } = mount({ canEdit: true, document, saved: true });
    // PostgreSQL's jsonb hands keys back in its own order.
    const reordered = JSON.parse(JSON.stringify({ cells: document.cells, title: document.title, schemaVersion: document.schemaVersion }));
    serverAnswers(reordered, "2030-05-12T14:02:00.123Z");
    await act(() => sync().settle());
    expect(autosave.reset).toHaveBeenCalledWith(expect.objectContaining({ title: "Hoist" }), "2030-05-12T14:02:00.123Z");
  });

  it("leaves a real conflict alone: someone else's content is not taken as ours", async () => {
    const document = blankDocument("Hoist");
    const { autosave, sync } = mount({ canEdit: true, document, saved: true });
    serverAnswers({ ...document, title: "Hoist, edited elsewhere" }, "2030-05-12T14:02:00.123Z");
    await act(() => sync().settle());
    expect(autosave.reset).not.toHaveBeenCalled();
  });
});
