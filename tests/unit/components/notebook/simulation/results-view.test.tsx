// @vitest-environment jsdom
import { afterEach, beforeAll, describe, expect, it, vi } from "vitest";
import { cleanup, render, screen, within } from "@testing-library/react";
import type { RunDisplay } from "@/components/notebook/simulation/run-view";
import { checkSmallOscillation } from "@/lib/simulate";
import { pendulum } from "../../../simulate/systems";

// jsdom has no canvas: a stand-in records what each chart was given.
interface RecordedChart {
  yLabel: string;
  xLabel: string;
  seriesLabels: string[];
  strokes: string[];
  dashes: (number[] | undefined)[];
  mode?: number;
  width: number;
  testId: string | null;
}
const charts: RecordedChart[] = [];
vi.mock("uplot", () => {
  class FakePlot {
    width: number;
    static paths = { linear: () => undefined };
    constructor(
      opts: { series: { label?: string; stroke?: string; dash?: number[] }[]; axes: { label?: string }[]; mode?: number; width: number },
      _data: unknown,
      target: HTMLElement,
    ) {
      const shown = opts.series.slice(1);
      charts.push({
        xLabel: opts.axes[0]?.label ?? "",
        yLabel: opts.axes[1]?.label ?? "",
        seriesLabels: shown.map((s) => s.label ?? ""),
        strokes: shown.map((s) => s.stroke ?? ""),
        dashes: shown.map((s) => s.dash),
        mode: opts.mode,
        width: opts.width,
        testId: target.getAttribute("data-testid"),
      });
      this.width = opts.width;
      target.appendChild(document.createElement("canvas"));
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
  // The page's theme supplies the series palette (app/globals.css); a stand-in palette here.
  ["#101010", "#202020", "#303030", "#404040", "#505050", "#606060"].forEach((colour, i) =>
    document.documentElement.style.setProperty(`--series-${i + 1}`, colour),
  );
  window.matchMedia ??= (() => ({ matches: false, addEventListener() {}, removeEventListener() {} })) as unknown as typeof window.matchMedia;
});
afterEach(() => {
  cleanup();
  charts.length = 0;
});

const { default: ResultsView } = await import("@/components/notebook/simulation/results-view");

/** A synthetic swing x = cos t, with an energy function that drifts by `drift` relative. */
function syntheticRun(drift: number, failed = false): RunDisplay {
  const count = 101;
  const times = Float64Array.from({ length: count }, (_, k) => k * 0.1);
  return {
    label: "Synthetic run",
    source: "browser",
    status: failed ? "failed" : "completed",
    failure: failed ? { reason: "singular_mass_matrix", message: "the mass matrix is singular at t = 4.2", timeReached: 4.2 } : null,
    timeReached: failed ? 4.2 : 10,
    coordinateNames: ["x"],
    times,
    coordinates: [times.map(Math.cos)],
    rates: [times.map((t) => -Math.sin(t))],
    energy: times.map((_, k) => 0.5 * (1 + (drift * k) / (count - 1))),
    energyCheck: { relativeDrift: drift, threshold: 1e-5, warning: drift > 1e-5 },
    coordinateUnits: { x: "m" },
  };
}

describe("simulation results view", () => {
  it("renders the coordinate, rate, phase and energy charts", () => {
    render(<ResultsView run={syntheticRun(1e-10)} units={{ x: "m" }} />);
    for (const id of ["chart-coordinates", "chart-rates", "chart-phase", "chart-energy"]) expect(screen.getByTestId(id).querySelector("canvas")).not.toBeNull();
    expect(screen.getAllByRole("figure").map((f) => f.querySelector("figcaption")?.textContent)).toEqual([
      "Coordinates (m)",
      "Rates (m/s)",
      "Phase portrait",
      "Energy function, relative change",
    ]);
    expect(charts.find((c) => c.mode === 2)).toMatchObject({ seriesLabels: ["x' against x"], xLabel: "coordinate (m)", yLabel: "rate (m/s)" });
    expect(charts.find((c) => c.testId === "chart-rates")).toMatchObject({ seriesLabels: ["x'"], yLabel: "m/s" });
  });

  it("states a drift within the threshold without a warning", () => {
    render(<ResultsView run={syntheticRun(3e-10)} />);
    const drift = screen.getByTestId("energy-drift");
    expect(drift.getAttribute("role")).toBeNull();
    expect(within(drift).getByTestId("energy-drift-value").textContent).toBe("3.00e-10");
    expect(drift.textContent).toContain("Within the threshold");
  });

  it("warns when the drift of a conservative system is above the threshold", () => {
    render(<ResultsView run={syntheticRun(2e-3)} />);
    const warning = screen.getByRole("alert");
    expect(warning.textContent).toContain("2.00e-3");
    expect(warning.textContent).toContain("Above the threshold");
  });

  it("reports the drift of a non-conservative model without judging it", () => {
    render(<ResultsView run={{ ...syntheticRun(2e-3), energyCheck: null }} />);
    expect(screen.queryByRole("alert")).toBeNull();
    // The synthetic energy rises linearly by 2e-3 of its start value.
    expect(screen.getByTestId("energy-drift-value").textContent).toBe("2.00e-3");
    expect(screen.getByTestId("energy-drift").textContent).toContain("Not checked");
  });

  it("shows the failure reason and the time reached, and still plots the partial trajectory", () => {
    render(<ResultsView run={syntheticRun(1e-10, true)} />);
    const failure = screen.getByTestId("simulation-failure");
    expect(failure.textContent).toContain("Singular mass matrix");
    expect(screen.getByTestId("time-reached").textContent).toBe("4.2");
    expect(failure.textContent).toContain("the mass matrix is singular at t = 4.2");
    expect(screen.getByTestId("chart-coordinates").querySelector("canvas")).not.toBeNull();
  });

  it("overlays measured readings, and the fitted model, in the colour of their coordinate", () => {
    render(
      <ResultsView
        run={syntheticRun(1e-10)}
        measured={{ times: [0.05, 0.15], series: [{ coordinate: "x", measured: [0.99, 0.98], fitted: [0.991, 0.981] }] }}
      />,
    );
    const chart = charts.find((c) => c.testId === "chart-coordinates")!;
    expect(chart.seriesLabels).toEqual(["x", "x measured", "x fitted"]);
    expect(new Set(chart.strokes).size).toBe(1);
  });

  it("puts coordinates of different units on separate charts, each axis naming its unit", () => {
    // A trolley (metres) carrying a swinging load (radians): two quantities, two sets of axes.
    const base = syntheticRun(1e-10);
    const run: RunDisplay = {
      ...base,
      coordinateNames: ["x", "theta", "s"],
      coordinates: [base.coordinates[0]!, base.rates[0]!, base.coordinates[0]!],
      rates: [base.rates[0]!, base.coordinates[0]!, base.rates[0]!],
    };
    render(
      <ResultsView
        run={run}
        units={{ x: "m", theta: "rad", s: " m " }}
        measured={{ times: [0.05, 0.15], series: [{ coordinate: "theta", unit: "rad", measured: [0.1, 0.2] }] }}
      />,
    );
    const byId = (id: string) => charts.find((c) => c.testId === id)!;
    expect(byId("chart-coordinates-m")).toMatchObject({ yLabel: "m", seriesLabels: ["x", "s"] });
    expect(byId("chart-coordinates-rad")).toMatchObject({ yLabel: "rad", seriesLabels: ["theta", "theta measured"] });
    expect(byId("chart-rates-m")).toMatchObject({ yLabel: "m/s", seriesLabels: ["x'", "s'"] });
    expect(byId("chart-rates-rad")).toMatchObject({ yLabel: "rad/s", seriesLabels: ["theta'"] });
    expect(byId("chart-phase-m")).toMatchObject({ xLabel: "coordinate (m)", yLabel: "rate (m/s)", seriesLabels: ["x' against x", "s' against s"] });
    expect(byId("chart-phase-rad")).toMatchObject({ xLabel: "coordinate (rad)", yLabel: "rate (rad/s)" });
    // No chart mixes units: every series label belongs to its chart's group.
    expect(charts.filter((c) => c.yLabel === "m").flatMap((c) => c.seriesLabels)).not.toContain("theta");
    // Series sharing a chart are drawn in different colours.
    expect(new Set(byId("chart-coordinates-m").strokes).size).toBe(2);
    expect(screen.getByText("Coordinates (rad)")).toBeTruthy();
  });

  it("says so when a coordinate has no unit", () => {
    render(<ResultsView run={syntheticRun(1e-10)} units={{}} />);
    expect(screen.getByText("Coordinates (no unit given)")).toBeTruthy();
  });
});

describe("small-amplitude check in the results", () => {
  it("says what a small-amplitude difference means, and marks a disagreement", () => {
    const omega = Math.sqrt(9.81 / 0.8);
    // Landau & Lifshitz, Mechanics, §28 (from memory): at 0.05 rad the pendulum runs slow by A²/16 = 1.6e-4.
    const agree = checkSmallOscillation(pendulum({ l: 0.8 }), { expectedFrequency: omega, amplitude: 0.05 });
    const { rerender } = render(<ResultsView run={{ ...syntheticRun(0), smallOscillation: agree }} />);
    const paragraph = screen.getByTestId("small-oscillation");
    expect(paragraph.textContent).toContain("relative difference 1.6e-4, accepted up to");
    expect(paragraph.textContent).toContain("They agree");
    expect(paragraph.textContent).toContain("the shift grows with amplitude squared");
    expect(paragraph.classList.contains("text-danger")).toBe(false);

    const disagree = checkSmallOscillation(pendulum({ l: 0.8 }), { expectedFrequency: omega * (1 - 2.5e-4) });
    rerender(<ResultsView run={{ ...syntheticRun(0), smallOscillation: disagree }} />);
    expect(screen.getByTestId("small-oscillation").textContent).toContain("They disagree: of the relative difference 2.5e-4");
    expect(screen.getByTestId("small-oscillation").classList.contains("text-danger")).toBe(true);
  });
});
