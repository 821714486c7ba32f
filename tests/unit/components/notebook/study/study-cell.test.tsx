// @vitest-environment jsdom
import { afterEach, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";
import { QueryClient, QueryClientProvider } from "@tanstack/react-query";
import { cleanup, fireEvent, render, screen, waitFor, within } from "@testing-library/react";
import type { StudyView } from "@/components/notebook/study/types";
import { safetyNote } from "@/lib/domain";
import type { StudyCell } from "@/lib/notebook/document";
import { run, studyDocument, studyView } from "./fixtures";

// jsdom has no canvas: a stand-in records each chart's series and bands.
const charts: { testId: string | null; labels: string[]; bands: unknown }[] = [];
vi.mock("uplot", () => {
  class FakePlot {
    width: number;
    static paths = { linear: () => undefined };
    constructor(opts: { series: { label?: string }[]; width: number; bands?: unknown }, _data: unknown, target: HTMLElement) {
      charts.push({ testId: target.getAttribute("data-testid"), labels: opts.series.slice(1).map((s) => s.label ?? ""), bands: opts.bands });
      this.width = opts.width;
    }
    setSize() {}
    destroy() {}
  }
  return { default: FakePlot };
});
vi.mock("uplot/dist/uPlot.min.css", () => ({}));
// The opened run is shown by the simulation cell's results view, tested on its own; here it names the run it got.
vi.mock("@/components/notebook/simulation/results-view", () => ({
  default: ({ run: shown }: { run: { label: string; times: ArrayLike<number> } }) => (
    <p data-testid="opened-run-view">
      {shown.label}: {shown.times.length} points
    </p>
  ),
}));

beforeAll(() => {
  globalThis.ResizeObserver ??= class {
    observe() {}
    disconnect() {}
    unobserve() {}
  } as unknown as typeof ResizeObserver;
  window.matchMedia ??= (() => ({ matches: false, addEventListener() {}, removeEventListener() {} })) as unknown as typeof window.matchMedia;
});

const { StudyCellView } = await import("@/components/notebook/study/study-cell");

const json = (body: unknown, status = 200) => new Response(JSON.stringify(body), { status, headers: { "content-type": "application/json" } });
const listItem = (study: StudyView) => {
  const { runs: _runs, envelope: _envelope, worst: _worst, sensitivity: _sensitivity, ...item } = study;
  return item;
};

/** The study routes of the contract, answering from `server`; every request is recorded. */
let server: {
  studies: StudyView[];
  polls: StudyView[];
  refuse: Record<string, string[]> | null;
  missing: boolean;
  cancelled: boolean;
  jobPolls: number;
};
let requests: { method: string; url: string; body: unknown }[];

beforeEach(() => {
  server = { studies: [], polls: [], refuse: null, missing: false, cancelled: false, jobPolls: 0 };
  requests = [];
  vi.stubGlobal(
    "fetch",
    vi.fn(async (url: string, init?: RequestInit) => {
      const method = init?.method ?? "GET";
      requests.push({ method, url, body: init?.body ? JSON.parse(String(init.body)) : undefined });
      const path = url.split("?")[0]!;
      if (method === "POST" && path === "/api/derivations/d1/studies") {
        if (server.missing)
          return json(
            { error: { code: "not_found:study", message: "No study cell with this id in the derivation.", fieldErrors: { cellId: ["No such study cell."] } } },
            404,
          );
        if (server.refuse)
          return json({ error: { code: "bad_request:study", message: "The study's settings are not valid.", fieldErrors: server.refuse } }, 400);
        const queued = studyView({ state: "queued", progress: { total: 4, done: 0, failed: 0, etaSeconds: null } });
        server.studies = [queued, ...server.studies];
        return json({ study: queued }, 202);
      }
      if (method === "GET" && path === "/api/derivations/d1/studies") {
        expect(new URL(url, "http://x").searchParams.get("cellId")).toBe("study-1");
        return json({ studies: server.studies.map(listItem) });
      }
      if (method === "POST" && path === "/api/derivations/d1/studies/s1/cancel") {
        server.cancelled = true;
        const latest = server.polls[0] ?? server.studies[0]!;
        return json({ study: { ...latest, state: "cancelled", progress: { ...latest.progress, etaSeconds: null } } });
      }
      if (method === "GET" && path.startsWith("/api/derivations/d1/studies/")) {
        const id = path.split("/").pop()!;
        const stored = server.studies.find((s) => s.id === id)!;
        if (server.cancelled) return json({ study: { ...stored, state: "cancelled" } });
        const next = server.polls.length > 1 ? server.polls.shift()! : (server.polls[0] ?? stored);
        return json({ study: next });
      }
      if (method === "POST" && path === "/api/derivations/d1/studies/s1/runs/2/open") {
        expect(new Headers(init?.headers).get("prefer")).toBe("respond-async");
        return json({ job: job("queued", 0) }, 202);
      }
      if (method === "GET" && path === "/api/derivations/d1/jobs/j1") {
        server.jobPolls++;
        return json({ job: server.jobPolls < 2 ? job("running", 0.5) : job("completed", 1, { runId: "r9" }) });
      }
      if (method === "GET" && path === "/api/derivations/d1/runs/r9") return json({ run: storedRun });
      if (method === "GET" && path === "/api/derivations/d1/runs") return json({ runs: [] });
      throw new Error(`unexpected ${method} ${url}`);
    }),
  );
});
afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
  charts.length = 0;
});

const job = (state: string, progress: number, result: unknown = null) => ({
  id: "j1",
  derivationId: "d1",
  kind: "simulation",
  state,
  progress,
  result,
  error: null,
  createdAt: "2041-03-06T10:00:00Z",
  startedAt: null,
  finishedAt: null,
});

const storedRun = {
  id: "r9",
  derivationId: "d1",
  status: "completed",
  failure: null,
  timeReached: 10,
  pointCount: 3,
  energyDrift: null,
  settings: {},
  summary: {},
  modelHash: "h",
  createdBy: { id: "u1", name: "Mara Quist" },
  createdAt: "2041-03-06T10:05:00Z",
  trajectory: { coordinateNames: ["x"], times: [0, 5, 10], coordinates: [[0, 1, 2]], rates: [[0, 0, 0]], energy: null },
};

function renderCell(options: { canRun?: boolean; readOnly?: boolean } = {}) {
  const { doc, cellId } = studyDocument();
  const cell = doc.cells.find((c) => c.id === cellId) as StudyCell;
  const client = new QueryClient({ defaultOptions: { queries: { retry: false }, mutations: { retry: false } } });
  return render(
    <QueryClientProvider client={client}>
      <StudyCellView cell={cell} document={doc} derivationId="d1" onOperation={() => undefined} pollMs={20} {...options} />
    </QueryClientProvider>,
  );
}

const finishedRuns = [
  run(0, "nominal", { m: 500, l: 4.75 }, 5200),
  run(1, "nominal", { m: 500, l: 5.25 }, 5100),
  run(2, "nominal", { m: 2000, l: 4.75 }, 21400),
  run(3, "nominal", { m: 2000, l: 5.25 }, null, true),
];

describe("study cell", () => {
  it("shows the server's field errors beside the fields when it refuses the study", async () => {
    server.refuse = { endTime: ["Must be after the start time."], "watch.0": ["Choose at least one name to watch."] };
    renderCell();
    fireEvent.click(screen.getByTestId("study-run"));
    expect((await screen.findByTestId("study-problem")).textContent).toBe("Correct the highlighted settings to run the study.");
    const endTime = screen.getByLabelText("End time (s)");
    expect(endTime.getAttribute("aria-invalid")).toBe("true");
    expect(document.getElementById(endTime.getAttribute("aria-describedby")!)!.textContent).toBe("Must be after the start time.");
    // The cell's id is all the route takes: the server reads the settings it holds.
    expect(requests.find((r) => r.method === "POST")!.body).toEqual({ cellId: "study-1" });
    // watch.0 names nothing ticked here, so it is listed above the form.
    expect(screen.getByTestId("study-unplaced-errors").textContent).toContain("Choose at least one name to watch.");
  });

  it("says so when the server has no such cell, without marking fields", async () => {
    server.missing = true;
    renderCell();
    fireEvent.click(screen.getByTestId("study-run"));
    expect((await screen.findByTestId("study-problem")).textContent).toBe("No study cell with this id in the derivation.");
    expect(screen.queryByTestId("study-unplaced-errors")).toBeNull();
  });

  it("follows a running study with progress and partial results, and cancels it", async () => {
    server.polls = [
      studyView({
        progress: { total: 4, done: 1, failed: 0, etaSeconds: 300 },
        runs: [run(0, "nominal", { m: 500, l: 4.75 }, 5200), run(1, "nominal", { m: 500, l: 5.25 }, null)],
      }),
      studyView({
        progress: { total: 4, done: 2, failed: 1, etaSeconds: 90 },
        runs: finishedRuns.map((r, i) => (i === 2 ? run(2, "nominal", r.parameters, null) : r)),
      }),
    ];
    renderCell();
    expect(screen.getByTestId("study-run").textContent).toBe("Run study (1 run)");
    fireEvent.click(screen.getByTestId("study-run"));
    await waitFor(() => expect(screen.getByTestId("study-progress").textContent).toContain("2 of 4 runs done, 1 failed · about 2 min left"));
    // Partial results: the finished runs are in the table, the failed one with its reason.
    const rows = screen.getAllByTestId("study-run-row");
    expect(rows).toHaveLength(4);
    expect(rows[3]!.textContent).toContain("Failed: Singular mass matrix: The mass matrix is singular at t = 0.2 s.");
    expect(screen.getByTestId("study-summary").textContent).toContain("Results so far");
    // One study runs at a time from this cell.
    expect((screen.getByTestId("study-run") as HTMLButtonElement).disabled).toBe(true);

    fireEvent.click(screen.getByRole("button", { name: "Cancel study" }));
    await waitFor(() => expect(screen.queryByTestId("study-progress")).toBeNull());
    expect(requests.some((r) => r.method === "POST" && r.url.endsWith("/studies/s1/cancel"))).toBe(true);
    expect(screen.getByTestId("study-summary").textContent).toContain("Cancelled");
    expect((screen.getByTestId("study-run") as HTMLButtonElement).disabled).toBe(false);
  });

  it("sorts the runs by any column, failed and pending runs last", async () => {
    server.studies = [studyView({ state: "completed", progress: { total: 4, done: 3, failed: 1, etaSeconds: null }, runs: finishedRuns })];
    renderCell();
    const table = await screen.findByTestId("study-runs-table");
    const order = () =>
      within(table)
        .getAllByTestId("study-run-row")
        .map((row) => row.querySelector("td")!.textContent);
    // Runs are numbered by their index, as the CSV and the opened run's label number them.
    expect(order()).toEqual(["0", "1", "2", "3"]);
    const peakHeading = within(table).getByRole("button", { name: /peak rope_tension/ });
    fireEvent.click(peakHeading);
    expect(order()).toEqual(["1", "0", "2", "3"]);
    expect(peakHeading.closest("th")!.getAttribute("aria-sort")).toBe("ascending");
    fireEvent.click(peakHeading);
    expect(order()).toEqual(["2", "0", "1", "3"]);
    expect(peakHeading.closest("th")!.getAttribute("aria-sort")).toBe("descending");
    fireEvent.click(within(table).getByRole("button", { name: /^l/ }));
    expect(order()).toEqual(["0", "2", "1", "3"]);
    fireEvent.click(within(table).getByRole("button", { name: /Status/ }));
    expect(order()[0]).toBe("3");
    expect(screen.getByTestId("study-csv").getAttribute("href")).toBe("/api/derivations/d1/studies/s1/csv");
  });

  it("shows envelopes, sensitivity and the worst case, and opens the worst run as a server run", async () => {
    server.studies = [
      studyView({
        state: "completed",
        progress: { total: 4, done: 3, failed: 1, etaSeconds: null },
        runs: finishedRuns,
        envelope: { time: [0, 5, 10], series: { rope_tension: { min: [1, 2, 3], max: [4, 5, 6], p5: [1, 2, 3], p50: [2, 3, 4], p95: [4, 5, 6] } } },
        worst: { rope_tension: { runIndex: 2, value: 21400, time: 2.5, caseName: "nominal", parameters: { m: 2000, l: 4.75 } } },
        sensitivity: {
          rope_tension: {
            method: "finite-difference",
            byParameter: { m: { slope: 10.8, normalized: 0.98, r2: null }, l: { slope: -200, normalized: -0.02, r2: null } },
          },
        },
      }),
    ];
    renderCell();
    const worst = await screen.findByTestId("study-worst-row");
    expect(worst.textContent).toContain("21400");
    expect(worst.textContent).toContain("run 2, nominal: m = 2000, l = 4.75");
    expect(screen.getByTestId("study-load-caution").textContent).toContain(safetyNote);
    const sensitivity = screen.getByTestId("study-sensitivity-row");
    expect(sensitivity.textContent).toContain("0.98");
    expect(sensitivity.textContent).toContain("slope -200");
    await waitFor(() => expect(charts.map((c) => c.testId)).toContain("study-envelope-rope_tension"));
    const envelope = charts.find((c) => c.testId === "study-envelope-rope_tension")!;
    expect(envelope.labels).toEqual(["max", "min", "p95", "p5", "median"]);
    // uPlot counts x as series 0: min–max is series 1–2, 5–95 % series 3–4.
    expect((envelope.bands as { series: number[] }[]).map((b) => b.series)).toEqual([
      [1, 2],
      [3, 4],
    ]);

    fireEvent.click(within(worst).getByRole("button", { name: /Open the worst run of rope_tension/ }));
    expect(await screen.findByTestId("server-job-status")).toBeTruthy();
    const opened = await screen.findByTestId("opened-run-view", {}, { timeout: 4000 });
    expect(opened.textContent).toContain("Server run by Mara Quist");
    expect(opened.textContent).toContain("3 points");
    expect(requests.filter((r) => r.url.endsWith("/runs/2/open"))).toHaveLength(1);
  });

  it("offers no Run, Cancel or Open to someone who may not run studies", async () => {
    server.studies = [
      studyView({
        runs: finishedRuns,
        progress: { total: 4, done: 3, failed: 0, etaSeconds: 20 },
        worst: { rope_tension: { runIndex: 2, value: 21400, time: 2.5, caseName: "nominal", parameters: { m: 2000, l: 4.75 } } },
      }),
    ];
    renderCell({ canRun: false, readOnly: true });
    expect(await screen.findByTestId("study-worst-row")).toBeTruthy();
    expect(screen.queryByTestId("study-run")).toBeNull();
    expect(screen.getByTestId("study-cannot-run")).toBeTruthy();
    expect(screen.getByTestId("study-progress").textContent).toContain("3 of 4 runs done");
    expect(screen.queryByRole("button", { name: /Cancel/ })).toBeNull();
    expect(screen.queryByRole("button", { name: /Open/ })).toBeNull();
    expect((screen.getByLabelText("End time (s)") as HTMLInputElement).readOnly).toBe(true);
  });
});
