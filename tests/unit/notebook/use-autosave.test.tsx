// @vitest-environment jsdom
import { act, cleanup, renderHook } from "@testing-library/react";
import { afterEach, beforeEach, describe, expect, it, vi } from "vitest";
import { draftKey, readDraft, useAutosave, type SaveFunction } from "@/components/notebook/use-autosave";
import { AppError } from "@/lib/errors";
import { DEFAULT_SIMULATION_SETTINGS, DOCUMENT_SCHEMA_VERSION, blankDocument, setTitle, type DerivationDocument } from "@/lib/notebook/document";

const ID = "derivation-1";
const T0 = "2030-01-01T10:00:00.000Z";

function ids() {
  let n = 0;
  return () => `id${++n}`;
}

function setup(save: SaveFunction, initial: DerivationDocument) {
  return renderHook(
    ({ document }: { document: DerivationDocument }) =>
      useAutosave({
        derivationId: ID,
        document,
        initialUpdatedAt: T0,
        enabled: true,
        save,
        debounceMs: 500,
        retryDelaysMs: [1_000, 3_000],
        storage: window.localStorage,
      }),
    { initialProps: { document: initial } },
  );
}

beforeEach(() => {
  vi.useFakeTimers();
  window.localStorage.clear();
});
afterEach(() => {
  cleanup();
  vi.useRealTimers();
});

describe("useAutosave", () => {
  it("goes saved → unsaved → saving → retrying → saving → saved, keeping the draft until the server confirms", async () => {
    const initial = blankDocument("Hoist", ids());
    const edited = setTitle(initial, "Hoist with brake");
    const calls: { title: string; base: string | null }[] = [];
    let failNext = true;
    const save = vi.fn<SaveFunction>(async (document, base) => {
      calls.push({ title: document.title, base });
      if (failNext) {
        failNext = false;
        throw new AppError("unavailable:database", "The database is unavailable.");
      }
      return { updatedAt: "2030-01-01T10:05:00.000Z" };
    });
    const { result, rerender } = setup(save, initial);
    expect(result.current.status.state).toBe("saved");

    rerender({ document: edited });
    expect(result.current.status.state).toBe("unsaved");
    // The draft is written at once, before any request.
    expect(readDraft(window.localStorage, ID)?.document.title).toBe("Hoist with brake");
    expect(save).not.toHaveBeenCalled();

    // After the pause the save runs and fails with a transient error: retry is scheduled.
    await act(async () => {
      await vi.advanceTimersByTimeAsync(500);
    });
    expect(calls).toEqual([{ title: "Hoist with brake", base: T0 }]);
    expect(result.current.status).toMatchObject({ state: "retrying", attempt: 1, message: "The database is unavailable." });
    expect(window.localStorage.getItem(draftKey(ID))).not.toBeNull();

    // Not before the first retry delay…
    await act(async () => {
      await vi.advanceTimersByTimeAsync(900);
    });
    expect(calls).toHaveLength(1);
    // …then it retries and succeeds; the draft goes away.
    await act(async () => {
      await vi.advanceTimersByTimeAsync(100);
    });
    expect(calls).toHaveLength(2);
    expect(result.current.status).toEqual({ state: "saved", savedAt: "2030-01-01T10:05:00.000Z" });
    expect(window.localStorage.getItem(draftKey(ID))).toBeNull();
  });

  it("sends the next save with the version the last one returned, and saves text typed during a request", async () => {
    const initial = blankDocument("Gimbal", ids());
    let resolveFirst: (value: { updatedAt: string }) => void = () => undefined;
    const bases: (string | null)[] = [];
    const titles: string[] = [];
    const save = vi.fn<SaveFunction>((document, base) => {
      bases.push(base);
      titles.push(document.title);
      if (bases.length === 1) return new Promise((resolve) => (resolveFirst = resolve));
      return Promise.resolve({ updatedAt: "2030-01-01T10:02:00.000Z" });
    });
    const { result, rerender } = setup(save, initial);
    rerender({ document: setTitle(initial, "Gimbal A") });
    await act(async () => {
      await vi.advanceTimersByTimeAsync(500);
    });
    expect(result.current.status.state).toBe("saving");
    // Typing on while the first request is in flight.
    rerender({ document: setTitle(initial, "Gimbal AB") });
    expect(result.current.status.state).toBe("saving");
    await act(async () => {
      resolveFirst({ updatedAt: "2030-01-01T10:01:00.000Z" });
      await vi.advanceTimersByTimeAsync(0);
    });
    expect(result.current.status.state).toBe("unsaved");
    expect(readDraft(window.localStorage, ID)?.document.title).toBe("Gimbal AB");
    await act(async () => {
      await vi.advanceTimersByTimeAsync(500);
    });
    expect(titles).toEqual(["Gimbal A", "Gimbal AB"]);
    expect(bases).toEqual([T0, "2030-01-01T10:01:00.000Z"]);
    expect(result.current.status).toEqual({ state: "saved", savedAt: "2030-01-01T10:02:00.000Z" });
  });

  it("stops on a conflict, keeps the draft, and saves over the newer version only when asked", async () => {
    const initial = blankDocument("Seat rig", ids());
    const save: SaveFunction = vi
      .fn<SaveFunction>()
      .mockRejectedValueOnce(new AppError("conflict:derivation", "Someone else saved this derivation since your copy was loaded."))
      .mockResolvedValue({ updatedAt: "2030-01-01T11:00:00.000Z" });
    const { result, rerender } = setup(save, initial);
    rerender({ document: setTitle(initial, "Seat rig, stiffer spring") });
    await act(async () => {
      await vi.advanceTimersByTimeAsync(500);
    });
    expect(result.current.status.state).toBe("conflict");
    // No automatic retry of a conflict.
    await act(async () => {
      await vi.advanceTimersByTimeAsync(10_000);
    });
    expect(save).toHaveBeenCalledTimes(1);
    expect(readDraft(window.localStorage, ID)?.document.title).toBe("Seat rig, stiffer spring");

    await act(async () => {
      await result.current.overwrite("2030-01-01T10:30:00.000Z");
    });
    expect(save).toHaveBeenLastCalledWith(expect.objectContaining({ title: "Seat rig, stiffer spring" }), "2030-01-01T10:30:00.000Z");
    expect(result.current.status.state).toBe("saved");
    expect(readDraft(window.localStorage, ID)).toBeNull();
  });

  it("waits for the user after a refusal (403) and saves on Retry", async () => {
    const initial = blankDocument("Trolley", ids());
    const save: SaveFunction = vi
      .fn<SaveFunction>()
      .mockRejectedValueOnce(new AppError("forbidden:derivation", "You cannot edit this derivation."))
      .mockResolvedValue({ updatedAt: "2030-01-01T12:00:00.000Z" });
    const { result, rerender } = setup(save, initial);
    rerender({ document: setTitle(initial, "Trolley 2") });
    await act(async () => {
      await vi.advanceTimersByTimeAsync(500);
    });
    expect(result.current.status).toEqual({ state: "refused", message: "You cannot edit this derivation." });
    await act(async () => {
      await vi.advanceTimersByTimeAsync(60_000);
    });
    expect(save).toHaveBeenCalledTimes(1);
    expect(readDraft(window.localStorage, ID)?.document.title).toBe("Trolley 2");
    let saved = false;
    await act(async () => {
      saved = await result.current.saveNow();
    });
    expect(saved).toBe(true);
    expect(result.current.status.state).toBe("saved");
  });

  it("saves nothing and keeps no draft for a reader", async () => {
    const initial = blankDocument("Read only", ids());
    const save = vi.fn<SaveFunction>();
    const { result, rerender } = renderHook(
      ({ document }: { document: DerivationDocument }) =>
        useAutosave({ derivationId: ID, document, initialUpdatedAt: T0, enabled: false, save, debounceMs: 100, storage: window.localStorage }),
      { initialProps: { document: initial } },
    );
    rerender({ document: setTitle(initial, "Changed") });
    await act(async () => {
      await vi.advanceTimersByTimeAsync(1_000);
    });
    expect(save).not.toHaveBeenCalled();
    expect(window.localStorage.getItem(draftKey(ID))).toBeNull();
    expect(await result.current.saveNow()).toBe(false);
  });

  it("reads a draft an earlier version of the page kept as the migrated document, and ignores one it cannot read", () => {
    const olderDraft = { schemaVersion: 1, title: "Hoist", cells: [{ id: "s", collapsed: false, kind: "simulation", settings: { endTime: "3" } }] };
    window.localStorage.setItem(draftKey(ID), JSON.stringify({ document: olderDraft, baseUpdatedAt: T0, writtenAt: T0 }));
    expect(readDraft(window.localStorage, ID)).toEqual({
      document: {
        schemaVersion: DOCUMENT_SCHEMA_VERSION,
        title: "Hoist",
        cells: [{ id: "s", collapsed: false, kind: "simulation", settings: { ...DEFAULT_SIMULATION_SETTINGS, endTime: "3" } }],
      },
      baseUpdatedAt: T0,
      writtenAt: T0,
    });
    window.localStorage.setItem(draftKey(ID), JSON.stringify({ document: { cells: "lost" }, baseUpdatedAt: T0, writtenAt: T0 }));
    expect(readDraft(window.localStorage, ID)).toBeNull();
  });
});
