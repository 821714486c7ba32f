// @vitest-environment jsdom
import { cleanup, render } from "@testing-library/react";
import { afterEach, describe, expect, it, vi } from "vitest";
import { NOT_STORED_MESSAGE, ReviewSyncProvider, useReviewSync, type ReviewSync } from "@/components/review/review-sync";

afterEach(cleanup);

function mount(props: { canEdit: boolean; stored: boolean }) {
  const whenStored = vi.fn(async () => props.stored);
  let sync: ReviewSync | null = null;
  function Probe() {
    sync = useReviewSync();
    return null;
  }
  render(
    <ReviewSyncProvider canEdit={props.canEdit} whenStored={whenStored}>
      <Probe />
    </ReviewSyncProvider>,
  );
  return { whenStored, sync: () => sync! };
}

describe("review sync", () => {
  it("lets a step go once the edits are stored", async () => {
    const { whenStored, sync } = mount({ canEdit: true, stored: true });
    await expect(sync().prepare()).resolves.toEqual({ ok: true });
    expect(whenStored).toHaveBeenCalledTimes(1);
  });

  it("refuses a step while edits have not reached the server, saying why", async () => {
    const { sync } = mount({ canEdit: true, stored: false });
    await expect(sync().prepare()).resolves.toEqual({ ok: false, message: NOT_STORED_MESSAGE });
  });

  it("does not wait for a reader, who has no edits", async () => {
    const { whenStored, sync } = mount({ canEdit: false, stored: false });
    await expect(sync().prepare()).resolves.toEqual({ ok: true });
    expect(whenStored).not.toHaveBeenCalled();
  });
});
