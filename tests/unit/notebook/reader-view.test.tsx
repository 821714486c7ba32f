// @vitest-environment jsdom
import { QueryClient, QueryClientProvider } from "@tanstack/react-query";
import { cleanup, configure, fireEvent, render, screen, waitFor, within } from "@testing-library/react";
import { afterEach, beforeEach, describe, expect, it, vi } from "vitest";
import { Notebook, type NotebookView } from "@/components/notebook/notebook";
import { NotebookPage, type NotebookPageProps } from "@/components/notebook/notebook-page";
import { NO_VIEW_RESULTS } from "@/components/notebook/use-view-results";
import { ShortcutsProvider } from "@/components/shortcuts";
import { DEFAULT_SIMULATION_SETTINGS, createCell, modelToDocument, type DerivationDocument } from "@/lib/notebook/document";
import type { NotebookResults } from "@/lib/notebook/results";
import { EMPTY_VIEW_PREFERENCES, type ViewPreferences } from "@/lib/notebook/view-preferences";
import { yDocToDocument } from "@/lib/notebook/document/shared-doc";
import { templateModel } from "@/lib/notebook/templates";
import { MemoryCollabServer } from "../components/collab/memory-server";

// A reader's view choices (equation form, equilibrium, code language, their own
// simulation settings) are theirs: they never become document operations, never
// autosave, never re-evaluate. These tests watch every request the page makes.

vi.mock("next/navigation", () => ({ useRouter: () => ({ push: vi.fn() }) }));
configure({ asyncUtilTimeout: 5000 });

const UPDATED = "2030-01-01T10:00:00.000Z";

function pendulumDocument({ simulation = false }: { simulation?: boolean } = {}): DerivationDocument {
  let n = 0;
  const doc = modelToDocument(templateModel("single-pendulum"), () => `c${(n += 1)}`);
  const cells = [...doc.cells, createCell("linearization", "lin"), { ...createCell("code-export", "code"), settings: { language: "python" as const } }];
  if (simulation)
    cells.push({ ...createCell("simulation", "sim"), settings: { ...DEFAULT_SIMULATION_SETTINGS, initialCoordinates: { theta: "0.1" }, endTime: "5" } });
  return { ...doc, cells };
}

const equationsId = (doc: DerivationDocument) => doc.cells.find((cell) => cell.kind === "equations")!.id;

// Results as the evaluate route gives them for the hook block (stand-in numbers: only where they show matters here).
const linearizationAbout = (index: number, stable: boolean) => ({
  equilibria: [
    { label: "theta = 0 (stable)", values: { theta: 0 } },
    { label: "theta = 3.14159 (unstable)", values: { theta: Math.PI } },
  ],
  // A = [[0, 1], [∓2.8, 0]]: eigenvalues ±i√2.8 about the stable point, ±√2.8 about the unstable one.
  selected: {
    index,
    stateNames: ["theta", "theta'"],
    inputNames: [],
    A: [
      [0, 1],
      [stable ? -2.8 : 2.8, 0],
    ],
    B: [[], []],
    modes: [
      stable
        ? { kind: "oscillating" as const, hertz: Math.sqrt(2.8) / (2 * Math.PI), growthRate: null, shape: [1], eigenvalue: { re: 0, im: Math.sqrt(2.8) } }
        : { kind: "divergent" as const, hertz: null, growthRate: Math.sqrt(2.8), shape: [1], eigenvalue: null },
    ],
    eigenvalues: stable
      ? [
          { re: 0, im: Math.sqrt(2.8) },
          { re: 0, im: -Math.sqrt(2.8) },
        ]
      : [
          { re: Math.sqrt(2.8), im: 0 },
          { re: -Math.sqrt(2.8), im: 0 },
        ],
    stability: stable ? ("stable" as const) : ("unstable" as const),
    stabilityReason: stable
      ? "every eigenvalue is simple and on the imaginary axis, with positive definite stiffness"
      : "an eigenvalue has a positive real part",
  },
});
const results: NotebookResults = {
  equations: [{ coordinate: "theta", residual: "m*l^2*theta'' + m*g*l*sin(theta)", latex: "m l^{2} \\ddot{\\theta} + m g l \\sin\\theta = 0" }],
  massMatrixLatex: "\\begin{bmatrix} m l^{2} \\end{bmatrix} \\ddot{\\theta} = -m g l \\sin\\theta",
  accelerations: [{ coordinate: "theta", latex: "\\ddot{\\theta} = -\\frac{g}{l}\\sin\\theta" }],
  linearization: linearizationAbout(0, true),
  code: [{ language: "python", filename: "hook_block.py", source: "# python source of the hook block" }],
};

const requests: { method: string; url: string; body: unknown }[] = [];

function stubServer() {
  vi.stubGlobal(
    "fetch",
    vi.fn(async (url: string, init?: RequestInit) => {
      const method = init?.method ?? "GET";
      const body = init?.body ? (JSON.parse(String(init.body)) as Record<string, unknown>) : undefined;
      requests.push({ method, url, body });
      let answer: unknown = {};
      if (url.endsWith("/evaluate")) answer = { cached: true, modelHash: "h", result: results, timings: {}, requestMs: 3, evaluatedAt: UPDATED };
      else if (url.endsWith("/linearize"))
        answer = { cached: false, linearization: linearizationAbout(Number(body?.equilibriumIndex), Number(body?.equilibriumIndex) === 0), equilibria: [] };
      else if (url.endsWith("/code")) answer = { language: body?.language, filename: "hook_block.c", source: "/* C source of the hook block */" };
      else if (url.endsWith("/view-preferences")) answer = { preferences: body?.preferences, updatedAt: UPDATED };
      else if (url.endsWith("/runs") && method === "GET") answer = { runs: [] };
      // A server run is a queued job: 202 with the job, then the job (here at once completed) and the stored run.
      else if (url.endsWith("/runs")) answer = { job: { id: "j1", kind: "simulation", state: "queued", progress: 0, result: null, error: null } };
      else if (url.endsWith("/jobs/j1"))
        answer = { job: { id: "j1", kind: "simulation", state: "completed", progress: 1, result: { runId: "r1" }, error: null } };
      else if (url.endsWith("/runs/r1"))
        answer = {
          run: {
            id: "r1",
            settings: body,
            status: "completed",
            createdAt: UPDATED,
            createdBy: { id: "u", name: "Priya" },
            pointCount: 2,
            timeReached: 5,
            energyDrift: null,
          },
        };
      else if (url.endsWith("/files")) answer = { files: [] };
      else if (url.endsWith("/collab-token")) answer = collabServer?.ticket({ id: "u1", name: "Ana Analyst" });
      if (url.endsWith("/collab-token") && !collabServer)
        answer = { error: { code: "not_found:derivation", message: "No collaboration server in this test." } };
      return new Response(JSON.stringify(answer), {
        status: method === "POST" && url.endsWith("/runs") ? 202 : url.endsWith("/collab-token") && !collabServer ? 404 : 200,
        headers: { "content-type": "application/json" },
      });
    }),
  );
}

function props(overrides: Partial<NotebookPageProps> = {}): NotebookPageProps {
  const document = overrides.initialDocument ?? pendulumDocument();
  return {
    derivationId: "d1",
    teamId: "t1",
    teamName: "Kestrel Lift & Motion",
    status: "in_review",
    ownerName: "Tomas Reyes",
    roleLabel: "Reviewer",
    canEdit: false,
    canRename: false,
    canSimulate: true,
    initialDocument: document,
    initialUpdatedAt: UPDATED,
    rowTitle: document.title,
    ...overrides,
  };
}

function renderPage(p: NotebookPageProps) {
  const client = new QueryClient({ defaultOptions: { queries: { retry: false } } });
  return render(
    <QueryClientProvider client={client}>
      <ShortcutsProvider>
        <NotebookPage {...p} />
      </ShortcutsProvider>
    </QueryClientProvider>,
  );
}

/** The collaboration server of an editor's test (readers' tests get no ticket and stay read-only). */
let collabServer: MemoryCollabServer | null = null;

/** Requests that would change the derivation's record (the document itself changes through the shared document). */
function documentWrites() {
  return requests.filter((r) => r.method === "PATCH" && r.url.endsWith("/d1"));
}
const evaluations = () => requests.filter((r) => r.url.endsWith("/evaluate"));
const lastStoredView = () =>
  requests.filter((r) => r.method === "PUT" && r.url.endsWith("/view-preferences")).at(-1)?.body as { preferences: ViewPreferences } | undefined;

beforeEach(() => {
  requests.length = 0;
  // jsdom lays nothing out; the page scrolls the reader's own simulation into view.
  Element.prototype.scrollIntoView = vi.fn();
  window.localStorage.clear();
  stubServer();
});
afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

async function evaluated() {
  await waitFor(() => expect(screen.getByTestId("evaluation-status").dataset.state).toBe("current"));
}

describe("a reviewer's view choices", () => {
  it("switch form, equilibrium and language without a document write or a new evaluation, and are stored for the reviewer", async () => {
    const doc = pendulumDocument();
    renderPage(props({ initialDocument: doc }));
    await evaluated();

    const form = screen.getByRole("combobox", { name: "Form" }) as HTMLSelectElement;
    expect(form.disabled).toBe(false);
    fireEvent.change(form, { target: { value: "mass-matrix" } });
    expect(form.value).toBe("mass-matrix");
    expect(screen.getAllByTestId("view-choice-note")[0]!.textContent).toContain("the document's is residual form");

    const equilibrium = screen.getByRole("combobox", { name: "Equilibrium" }) as HTMLSelectElement;
    expect(equilibrium.disabled).toBe(false);
    fireEvent.change(equilibrium, { target: { value: "1" } });
    await screen.findByText("Unstable equilibrium.");
    const linearize = requests.find((r) => r.url.endsWith("/linearize"))!;
    expect(linearize.body).toMatchObject({ equilibriumIndex: 1, inputValues: {}, document: { title: doc.title } });

    fireEvent.change(screen.getByRole("combobox", { name: "Language" }), { target: { value: "c" } });
    await screen.findByText("/* C source of the hook block */");
    expect(requests.find((r) => r.url.endsWith("/code"))!.body).toMatchObject({ language: "c" });

    await waitFor(() =>
      expect(lastStoredView()?.preferences).toEqual({
        schemaVersion: 1,
        cells: { [equationsId(doc)]: { form: "mass-matrix" }, lin: { equilibriumIndex: 1 }, code: { language: "c" } },
      }),
    );
    expect(documentWrites()).toEqual([]);
    expect(evaluations()).toHaveLength(1);
    // A reader has no way to make a choice the document's.
    expect(screen.queryByRole("button", { name: "Make yours the document's" })).toBeNull();
  });

  it("opens with the reviewer's stored choices and goes back to the document's on request", async () => {
    const doc = pendulumDocument();
    renderPage(props({ initialDocument: doc, initialViewPreferences: { schemaVersion: 1, cells: { [equationsId(doc)]: { form: "accelerations" } } } }));
    await evaluated();
    const form = screen.getByRole("combobox", { name: "Form" }) as HTMLSelectElement;
    expect(form.value).toBe("accelerations");
    fireEvent.click(screen.getByRole("button", { name: "Show the document's" }));
    expect(form.value).toBe("residual");
    await waitFor(() => expect(lastStoredView()?.preferences).toEqual({ schemaVersion: 1, cells: {} }));
    expect(documentWrites()).toEqual([]);
  });
});

describe("an editor's view choices", () => {
  it("leave the shared document alone; making one the document's changes it", async () => {
    const doc = pendulumDocument();
    collabServer = new MemoryCollabServer(doc);
    renderPage({ ...props({ initialDocument: doc, canEdit: true, canRename: true, roleLabel: "Analyst" }), collabProvider: collabServer.provider });
    await evaluated();
    await waitFor(() => expect(screen.getByTestId("connection-status").dataset.state).toBe("saved"));
    fireEvent.change(screen.getByRole("combobox", { name: "Form" }), { target: { value: "mass-matrix" } });
    await waitFor(() => expect(lastStoredView()).toBeDefined());
    await new Promise((resolve) => setTimeout(resolve, 300));
    expect(documentWrites()).toEqual([]);
    expect(yDocToDocument(collabServer.doc)).toEqual(doc);

    fireEvent.click(screen.getByRole("button", { name: "Make yours the document's" }));
    await waitFor(() =>
      expect(yDocToDocument(collabServer!.doc).cells.find((cell) => cell.kind === "equations")).toMatchObject({ settings: { form: "mass-matrix" } }),
    );
    await waitFor(() => expect(screen.getByTestId("connection-status").dataset.state).toBe("saved"));
    await waitFor(() => expect(lastStoredView()?.preferences.cells).toEqual({}));
    collabServer = null;
  }, 15_000);
});

describe("a reader's own simulation", () => {
  it("edits the simulation cell's settings as their own and stores a run with them", async () => {
    const doc = pendulumDocument({ simulation: true });
    renderPage(props({ initialDocument: doc }));
    await evaluated();
    expect(screen.getByTestId("own-simulation-settings")).toBeTruthy();
    const start = screen.getByLabelText("theta(t₀)") as HTMLInputElement;
    expect(start.value).toBe("0.1");
    expect(start.readOnly).toBe(false);
    fireEvent.change(start, { target: { value: "0.4" } });
    fireEvent.change(screen.getByLabelText("l"), { target: { value: "5" } });
    expect(start.value).toBe("0.4");
    await waitFor(() =>
      expect(lastStoredView()?.preferences.cells.sim?.simulation).toEqual({ initialCoordinates: { theta: "0.4" }, parameterOverrides: { l: "5" } }),
    );

    fireEvent.click(screen.getByRole("button", { name: "Run on server and save" }));
    await waitFor(() => expect(requests.some((r) => r.method === "POST" && r.url.endsWith("/runs"))).toBe(true));
    expect(requests.find((r) => r.method === "POST" && r.url.endsWith("/runs"))!.body).toMatchObject({
      initialCoordinates: { theta: 0.4 },
      parameters: { l: 5 },
      endTime: 5,
    });
    // The page follows the queued job to its end and opens the run it stored.
    await waitFor(() => expect(requests.some((r) => r.url.endsWith("/runs/r1"))).toBe(true), { timeout: 5000 });
    expect(documentWrites()).toEqual([]);
    expect(evaluations()).toHaveLength(1);
  });

  it("offers a derivation without a simulation cell to simulate, and a viewer no server run", async () => {
    renderPage(props({ canSimulate: false, roleLabel: "Viewer" }));
    await evaluated();
    expect(screen.queryByTestId("own-simulation")).toBeNull();
    fireEvent.click(screen.getByRole("button", { name: "Simulate" }));
    const own = screen.getByTestId("own-simulation");
    fireEvent.change(within(own).getByLabelText("theta(t₀)"), { target: { value: "0.25" } });
    fireEvent.change(within(own).getByLabelText("End time (s)"), { target: { value: "3" } });
    expect(within(own).getByTestId("simulation-run")).toBeTruthy();
    expect(within(own).queryByRole("button", { name: "Run on server and save" })).toBeNull();
    await waitFor(() => expect(lastStoredView()?.preferences.ownSimulation).toEqual({ initialCoordinates: { theta: "0.25" }, endTime: "3" }));
    expect(documentWrites()).toEqual([]);
    expect(evaluations()).toHaveLength(1);
  });
});

describe("Notebook with a person's view", () => {
  it("turns form, equilibrium and language choices into view choices, never document operations", () => {
    const doc = pendulumDocument();
    const onChange = vi.fn();
    const choose = vi.fn();
    const view: NotebookView = { preferences: EMPTY_VIEW_PREFERENCES, results: NO_VIEW_RESULTS, choose, changeSimulation: vi.fn() };
    for (const readOnly of [true, false]) {
      choose.mockClear();
      render(<Notebook document={doc} onChange={onChange} results={results} view={view} readOnly={readOnly} derivationId="d1" />);
      fireEvent.change(screen.getByRole("combobox", { name: "Form" }), { target: { value: "accelerations" } });
      fireEvent.change(screen.getByRole("combobox", { name: "Equilibrium" }), { target: { value: "1" } });
      fireEvent.change(screen.getByRole("combobox", { name: "Language" }), { target: { value: "julia" } });
      expect(choose.mock.calls).toEqual([
        [equationsId(doc), { form: "accelerations" }],
        ["lin", { equilibriumIndex: 1 }],
        ["code", { language: "julia" }],
      ]);
      cleanup();
    }
    expect(onChange).not.toHaveBeenCalled();
  });
});
