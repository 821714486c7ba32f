// @vitest-environment jsdom
import { afterEach, beforeAll, describe, expect, it, vi } from "vitest";
import { cleanup, render, screen, within } from "@testing-library/react";
import type { RunDisplay } from "@/components/notebook/simulation/run-view";
import { trajectoryCsv } from "@/components/notebook/simulation/run-view";
import { checkSmallOscillation } from "@/lib/simulate/checks";
import { pendulum } from "../../simulate/systems";

// jsdom has no canvas: a stand-in records what each chart was given.
const charts: { title: string; seriesLabels: string[]; mode?: number; width: number }[] = [];
vi.mock("uplot", () => {
  class FakePlot {
    width: number;
    static paths = { linear: () => undefined };
    constructor(opts: { title: string; series: { label?: string }[]; mode?: number; width: number }, _data: unknown, target: HTMLElement) {
      charts.push({ title: opts.title, seriesLabels: opts.series.slice(1).map((s) => s.label ?? ""), mode: opts.mode, width: opts.width });
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
  };
}

describe("simulation results view", () => {
  it("renders the coordinate, rate, phase and energy charts", () => {
    render(<ResultsView run={syntheticRun(1e-10)} />);
    for (const id of ["chart-coordinates", "chart-rates", "chart-phase", "chart-energy"]) expect(screen.getByTestId(id).querySelector("canvas")).not.toBeNull();
    expect(charts.map((c) => c.title)).toEqual(["Coordinates", "Rates", "Phase portrait", "Energy function, relative change"]);
    expect(charts.find((c) => c.title === "Phase portrait")).toMatchObject({ mode: 2, seriesLabels: ["x' against x"] });
    expect(charts.find((c) => c.title === "Rates")?.seriesLabels).toEqual(["x'"]);
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

  it("overlays measured readings on the coordinate chart", () => {
    render(<ResultsView run={syntheticRun(1e-10)} measured={{ times: [0.05, 0.15], series: [{ coordinate: "x", measured: [0.99, 0.98] }] }} />);
    expect(charts.find((c) => c.title === "Coordinates")?.seriesLabels).toEqual(["x", "x measured"]);
  });
});

describe("trajectory CSV", () => {
  it("has one column per coordinate, rate and the energy", () => {
    const csv = trajectoryCsv(syntheticRun(0)).split("\n");
    expect(csv[0]).toBe("t,x,x',energy");
    expect(csv[1]).toBe("0,1,0,0.5");
    expect(csv).toHaveLength(101 + 2);
  });

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
