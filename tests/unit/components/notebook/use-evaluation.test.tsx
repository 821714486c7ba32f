// @vitest-environment jsdom
import { QueryClient, QueryClientProvider } from "@tanstack/react-query";
import { act, cleanup, renderHook, waitFor } from "@testing-library/react";
import type { ReactNode } from "react";
import { afterEach, beforeEach, describe, expect, it, vi } from "vitest";
import { useEvaluation } from "@/components/notebook/use-evaluation";
import type { JobJson } from "@/lib/jobs/views";
import { modelToDocument } from "@/lib/notebook/document";

// The hoist test stand's load on its rope.
const document = modelToDocument({
  title: "Hoist stand load",
  coordinates: [{ name: "theta", unit: "rad" }],
  parameters: [
    { name: "m", unit: "kg", value: 120 },
    { name: "l", unit: "m", value: 3 },
    { name: "g", unit: "m/s^2", value: 9.81 },
  ],
  kinetic: "1/2*m*l^2*theta'^2",
  potential: "-m*g*l*cos(theta)",
});

const evaluation = {
  cached: true,
  modelHash: "ab".repeat(32),
  engineVersion: "test",
  result: { coordinates: ["theta"], equations: [], massMatrix: [], forcing: [], timingMs: 1 },
  timings: {},
  requestMs: 1,
  evaluatedAt: "2026-12-02T12:00:00.000Z",
};

function job(state: JobJson["state"], progress: number): JobJson {
  return {
    id: "job-1",
    derivationId: "d1",
    kind: "evaluation",
    state,
    progress,
    result: null,
    error: null,
    createdAt: "2026-12-02T12:00:00.000Z",
    startedAt: null,
    finishedAt: null,
  };
}

type Answer = { status: number; body: unknown };
let requests: { url: string; method: string; prefer: string | null }[];
let answers: Answer[];

beforeEach(() => {
  requests = [];
  answers = [];
  vi.stubGlobal(
    "fetch",
    vi.fn(async (url: string, init: RequestInit) => {
      const headers = new Headers(init.headers);
      requests.push({ url, method: init.method ?? "GET", prefer: headers.get("prefer") });
      const next = answers.shift();
      if (!next) throw new Error(`no answer left for ${init.method} ${url}`);
      return new Response(JSON.stringify(next.body), { status: next.status });
    }),
  );
});

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

function wrapper({ children }: { children: ReactNode }) {
  const client = new QueryClient({ defaultOptions: { queries: { retry: false } } });
  return <QueryClientProvider client={client}>{children}</QueryClientProvider>;
}

describe("useEvaluation", () => {
  it("shows a small model's evaluation as the server answers it, asking for the async answer", async () => {
    answers.push({ status: 200, body: evaluation });
    const { result } = renderHook(() => useEvaluation({ derivationId: "d1", document }), { wrapper });
    await waitFor(() => expect(result.current.results).not.toBeNull());
    expect(result.current.job).toBeNull();
    expect(requests).toEqual([{ url: "/api/derivations/d1/evaluate", method: "POST", prefer: "respond-async" }]);
  });

  it("follows a queued evaluation's progress and reads the answer from the cache once it completed", async () => {
    answers.push(
      { status: 202, body: { job: job("queued", 0) } },
      { status: 200, body: { job: job("running", 0.6) } },
      { status: 200, body: { job: job("completed", 1) } },
      { status: 200, body: evaluation },
    );
    const { result } = renderHook(() => useEvaluation({ derivationId: "d1", document }), { wrapper });
    await waitFor(() => expect(result.current.job?.state).toBe("running"));
    expect(result.current.job?.progress).toBe(0.6);
    expect(result.current.results).toBeNull();
    await waitFor(() => expect(result.current.results).not.toBeNull(), { timeout: 5_000 });
    expect(result.current.job).toBeNull();
    expect(result.current.error).toBeNull();
    expect(requests.map((r) => `${r.method} ${r.url}`)).toEqual([
      "POST /api/derivations/d1/evaluate",
      "GET /api/derivations/d1/jobs/job-1",
      "GET /api/derivations/d1/jobs/job-1",
      "POST /api/derivations/d1/evaluate",
    ]);
  });

  it("cancels a queued evaluation and says so, leaving no results", async () => {
    answers.push({ status: 202, body: { job: job("queued", 0) } }, { status: 200, body: { job: job("running", 0.2) } });
    const { result } = renderHook(() => useEvaluation({ derivationId: "d1", document }), { wrapper });
    await waitFor(() => expect(result.current.job?.state).toBe("running"));
    answers.push({ status: 200, body: { job: job("cancelled", 0.2) } });
    await act(() => result.current.cancel());
    expect(requests.at(-1)).toMatchObject({ url: "/api/derivations/d1/jobs/job-1/cancel", method: "POST" });
    // The next poll reads the cancelled job and the evaluation ends with its error.
    answers.push({ status: 200, body: { job: job("cancelled", 0.2) } });
    await waitFor(() => expect(result.current.error?.code).toBe("conflict:job"), { timeout: 5_000 });
    expect(result.current.job).toBeNull();
    expect(result.current.results).toBeNull();
  });
});
