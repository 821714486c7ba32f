// @vitest-environment jsdom
import { afterEach, beforeEach, describe, expect, it, vi } from "vitest";
import { QueryClient, QueryClientProvider } from "@tanstack/react-query";
import { cleanup, fireEvent, render, screen, waitFor } from "@testing-library/react";
import { MeasuredPanel } from "@/components/notebook/simulation/measured-panel";
import { modelToDocument } from "@/lib/notebook/document";
import { templateModel } from "@/lib/notebook/templates";
import { explainFit } from "@/lib/simulate";

const doc = modelToDocument(templateModel("cart-with-pendulum"));

function measuredFile(id: string, name: string, createdAt: string) {
  return {
    id,
    kind: "measured_csv" as const,
    originalName: name,
    sizeBytes: 1200,
    summary: { timeUnit: "s", columns: [{ coordinate: "x", unit: "m" }], rowCount: 40, timeSpan: { start: 0, end: 4 } },
    url: `/api/files/${id}`,
    createdAt,
  };
}
const image = {
  id: "img",
  kind: "image" as const,
  originalName: "rig.png",
  sizeBytes: 10,
  summary: null,
  url: "/api/files/img",
  createdAt: "2041-03-05T10:00:00Z",
};

let stored: ReturnType<typeof measuredFile>[];
let fitBody: unknown;
// The fit runs as a queued job: POST answers 202 with the job, GET …/jobs/j1 reports it.
let refuseUpload = false;
let jobPolls: { state: string; progress: number }[];
let cancelled: boolean;
const job = (state: string, progress: number, result: unknown = null) => ({
  id: "j1",
  derivationId: "d1",
  kind: "fit",
  state,
  progress,
  result,
  error: state === "cancelled" ? { code: "conflict:job", message: "The job was cancelled." } : null,
  createdAt: "2041-03-06T10:00:00Z",
  startedAt: null,
  finishedAt: null,
});
const json = (body: unknown, status = 200) => new Response(JSON.stringify(body), { status, headers: { "content-type": "application/json" } });

beforeEach(() => {
  refuseUpload = false;
  jobPolls = [{ state: "running", progress: 0.5 }];
  cancelled = false;
  stored = [measuredFile("old", "release-1.csv", "2041-03-01T10:00:00Z"), measuredFile("new", "release-2.csv", "2041-03-04T10:00:00Z")];
  vi.stubGlobal(
    "fetch",
    vi.fn(async (url: string, init?: RequestInit) => {
      if (url.endsWith("/files") && (init?.method ?? "GET") === "GET") return json({ files: [image, ...stored] });
      if (url.endsWith("/files") && init?.method === "POST" && refuseUpload)
        return json({ error: { code: "bad_request:measured_csv", message: "Line 3: the time does not increase." } }, 400);
      if (url.endsWith("/files") && init?.method === "POST") {
        const uploaded = measuredFile("fresh", "release-3.csv", "2041-03-06T10:00:00Z");
        stored = [uploaded, ...stored];
        return json({ file: uploaded }, 201);
      }
      if (url.endsWith("/fit")) {
        expect(new Headers(init?.headers).get("prefer")).toBe("respond-async");
        return json({ job: job("queued", 0) }, 202);
      }
      if (url.endsWith("/jobs/j1/cancel")) {
        cancelled = true;
        return json({ job: job("cancelled", 0.5) });
      }
      if (url.endsWith("/jobs/j1")) {
        if (cancelled) return json({ job: job("cancelled", 0.5) });
        const next = jobPolls.shift();
        return json({ job: next ? job(next.state, next.progress) : job("completed", 1, fitBody) });
      }
      return json({}, 404);
    }),
  );
});
afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

function renderPanel() {
  const client = new QueryClient({ defaultOptions: { queries: { retry: false }, mutations: { retry: false } } });
  return render(
    <QueryClientProvider client={client}>
      <MeasuredPanel derivationId="d1" document={doc} settings={null} onOverlay={() => {}} onOperation={() => {}} />
    </QueryClientProvider>,
  );
}

describe("measured data panel", () => {
  it("preselects the newest measured file, and the one just uploaded", async () => {
    renderPanel();
    const select = await screen.findByTestId<HTMLSelectElement>("measured-file");
    await waitFor(() => expect(select.value).toBe("new"));

    const input = screen.getByLabelText<HTMLInputElement>("Upload measured CSV");
    fireEvent.change(input, { target: { files: [new File(["t [s], x [m]\n0, 0\n"], "release-3.csv", { type: "text/csv" })] } });
    await waitFor(() => expect(screen.getByTestId<HTMLSelectElement>("measured-file").value).toBe("fresh"));
    expect(screen.getByRole("option", { name: /release-3\.csv/ })).toBeTruthy();
  });

  it("shows the server's reason for a refused upload and keeps the files listed", async () => {
    refuseUpload = true;
    renderPanel();
    await waitFor(() => expect(screen.getByTestId<HTMLSelectElement>("measured-file").value).toBe("new"));
    const input = screen.getByLabelText<HTMLInputElement>("Upload measured CSV");
    fireEvent.change(input, { target: { files: [new File(["t [s], x [m]\n1, 0\n0, 0\n"], "bad.csv", { type: "text/csv" })] } });
    expect((await screen.findByTestId("upload-error")).textContent).toContain("Line 3: the time does not increase.");
    expect(screen.getByTestId<HTMLSelectElement>("measured-file").value).toBe("new");
    expect(screen.queryByRole("status")).toBeNull();
  });

  it("shows why a parameter is not identifiable, what data would identify it, and the residual with its unit", async () => {
    const result = {
      status: "unchanged" as const,
      iterations: 24,
      simulations: 30,
      residualRms: 0.0021,
      residualRmsByCoordinate: { x: 0.0021 },
      notIdentifiable: [{ kind: "no_effect" as const, parameters: ["l"], affectsUnmeasured: ["theta"] }],
      recordMoves: true,
    };
    fitBody = {
      fit: {
        ...result,
        parameters: [{ name: "l", initial: 6, value: 6, standardError: null, unit: "m" }],
        observations: 40,
        report: explainFit(result, { coordinateUnits: { x: "m" }, inputs: ["F"] }),
      },
      overlay: { fileId: "new", times: [0], series: [] },
    };
    renderPanel();
    await waitFor(() => expect(screen.getByTestId<HTMLSelectElement>("measured-file").value).toBe("new"));
    fireEvent.click(screen.getByLabelText("Fit l"));
    fireEvent.click(screen.getByRole("button", { name: "Fit" }));

    // The job's progress shows while the worker runs it.
    await waitFor(() => expect(screen.getByTestId("server-job-status").textContent).toMatch(/Fit (queued|running)/), { timeout: 5000 });
    const outcome = await screen.findByTestId("fit-outcome", {}, { timeout: 5000 });
    expect(outcome.textContent).toMatch(/^Nothing moved/);
    expect(outcome.textContent).not.toContain("onverged");
    const groups = screen.getByTestId("fit-not-identifiable");
    expect(groups.textContent).toContain("Not identifiable: l.");
    expect(groups.textContent).toContain("acts on theta, which is not in the file");
    expect(groups.textContent).toContain("Data that would identify it: Measure theta as well");
    expect(screen.getByTestId("fit-residual").textContent).toContain("x: 0.0021 m RMS");
    // Starting values are not a result: nothing to write back.
    expect(screen.queryByRole("button", { name: /Write fitted values/ })).toBeNull();
  });

  it("shows a queued fit's progress and cancels it on request", async () => {
    jobPolls = Array.from({ length: 50 }, () => ({ state: "running", progress: 0.4 }));
    renderPanel();
    await waitFor(() => expect(screen.getByTestId<HTMLSelectElement>("measured-file").value).toBe("new"));
    fireEvent.click(screen.getByLabelText("Fit l"));
    fireEvent.click(screen.getByRole("button", { name: "Fit" }));

    await waitFor(() => expect(screen.getByTestId("server-job-status").textContent).toContain("Fit running on the server… 40 %"), { timeout: 5000 });
    fireEvent.click(screen.getByRole("button", { name: "Cancel" }));
    expect((await screen.findByRole("alert", {}, { timeout: 5000 })).textContent).toContain("The job was cancelled.");
    expect(cancelled).toBe(true);
    expect(screen.queryByTestId("fit-outcome")).toBeNull();
  });
});
