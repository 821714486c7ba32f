// @vitest-environment jsdom
import { afterEach, beforeAll, describe, expect, it, vi } from "vitest";
import { cleanup, fireEvent, render, screen, within } from "@testing-library/react";
import type { NotebookResults } from "@/lib/notebook/results";

const charts: { testId: string | null; labels: string[]; xDistr: number | undefined }[] = [];
vi.mock("uplot", () => {
  class FakePlot {
    width: number;
    static paths = { linear: () => undefined };
    constructor(opts: { series: { label?: string }[]; width: number; scales: { x: { distr?: number } } }, _data: unknown, target: HTMLElement) {
      charts.push({ testId: target.getAttribute("data-testid"), labels: opts.series.slice(1).map((s) => s.label ?? ""), xDistr: opts.scales.x.distr });
      this.width = opts.width;
    }
    setSize() {}
    destroy() {}
  }
  return { default: FakePlot };
});
vi.mock("uplot/dist/uPlot.min.css", () => ({}));

beforeAll(() => {
  globalThis.ResizeObserver ??= class {
    observe() {}
    disconnect() {}
    unobserve() {}
  } as unknown as typeof ResizeObserver;
  window.matchMedia ??= (() => ({ matches: false, addEventListener() {}, removeEventListener() {} })) as unknown as typeof window.matchMedia;
});
afterEach(() => {
  cleanup();
  charts.length = 0;
});

const { default: FrequencyResponsePanel } = await import("@/components/notebook/frequency-response-panel");

// Mass–spring–damper m z'' + c z' + k z = F with m = 2, c = 0.8, k = 8: ωn = √(k/m) = 2 rad/s, ζ = c / (2√(k m)) = 0.1.
const [m, c, k] = [2, 0.8, 8];
type Selected = NonNullable<NonNullable<NotebookResults["linearization"]>["selected"]>;
const selected: Selected = {
  index: 0,
  stateNames: ["z", "z'"],
  inputNames: ["F"],
  A: [
    [0, 1],
    [-k / m, -c / m],
  ],
  B: [[0], [1 / m]],
  modes: [],
  eigenvalues: [],
  stability: "stable",
  stabilityReason: "",
  outputs: {
    names: ["z", "z'", "spring_force"],
    units: ["m", "m/s", "N"],
    C: [
      [1, 0],
      [0, 1],
      [k, 0],
    ],
    D: [[0], [0], [0]],
    notes: ["rope_tension: uses a multiplier"],
  },
};

describe("frequency response panel", () => {
  it("plots magnitude and phase on log frequency axes for the chosen output", () => {
    render(<FrequencyResponsePanel selected={selected} title="Seat rig" />);
    const magnitude = charts.find((chart) => chart.testId === "bode-magnitude")!;
    const phase = charts.find((chart) => chart.testId === "bode-phase")!;
    expect(magnitude).toMatchObject({ labels: ["z"], xDistr: 3 });
    expect(phase).toMatchObject({ labels: ["z"], xDistr: 3 });
    expect(screen.getByTestId("frequency-notes").textContent).toContain("rope_tension");
  });

  it("lists the poles with natural frequency 2 rad/s and damping ratio 0.1", () => {
    render(<FrequencyResponsePanel selected={selected} title="Seat rig" />);
    const rows = within(screen.getByTestId("poles-table")).getAllByTestId("pole-row");
    expect(rows).toHaveLength(2);
    for (const row of rows) {
      const cells = Array.from(row.querySelectorAll("td")).map((cell) => cell.textContent);
      // Poles of m s² + c s + k: −ζωn ± iωn√(1 − ζ²) (any vibration text, e.g. Rao, Mechanical Vibrations, free damped vibration).
      expect(Number(cells[1])).toBeCloseTo(2, 6);
      expect(Number(cells[3])).toBeCloseTo(0.1, 6);
    }
    expect(screen.getByTestId("zeros").textContent).toContain("none");
  });

  it("adds an output when it is ticked and reports the choice", () => {
    const onChoose = vi.fn();
    render(<FrequencyResponsePanel selected={selected} title="Seat rig" onChoose={onChoose} />);
    fireEvent.click(screen.getByRole("checkbox", { name: /spring_force/ }));
    expect(onChoose).toHaveBeenLastCalledWith({ outputs: ["z", "spring_force"] });
    expect(charts.filter((chart) => chart.testId === "bode-magnitude").at(-1)?.labels).toEqual(["z", "spring_force"]);
  });

  it("downloads A, B, C, D as JSON holding the chosen outputs' rows", async () => {
    let saved: Blob | null = null;
    URL.createObjectURL = vi.fn((blob: Blob) => {
      saved = blob;
      return "blob:state-space";
    });
    URL.revokeObjectURL = vi.fn();
    const click = vi.spyOn(HTMLAnchorElement.prototype, "click").mockImplementation(() => {});
    render(<FrequencyResponsePanel selected={selected} outputs={["spring_force"]} title="Seat rig" />);
    fireEvent.click(screen.getByRole("button", { name: "JSON" }));
    expect(click).toHaveBeenCalled();
    const json = JSON.parse(await saved!.text());
    expect(json).toMatchObject({ outputs: ["spring_force"], C: [[8, 0]], D: [[0]], A: selected.A, B: selected.B });
  });
});
