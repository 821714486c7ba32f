// @vitest-environment jsdom
import { afterEach, beforeAll, describe, expect, it, vi } from "vitest";
import { cleanup, render, screen, within } from "@testing-library/react";
import type { RunDisplay } from "@/components/notebook/simulation/run-view";
import { safetyNote } from "@/lib/domain";
import { integrate, systemFromMassMatrixForm } from "@/lib/simulate";

// jsdom has no canvas: a stand-in records each chart's series.
const charts: { testId: string | null; labels: string[] }[] = [];
vi.mock("uplot", () => {
  class FakePlot {
    width: number;
    static paths = { linear: () => undefined };
    constructor(opts: { series: { label?: string }[]; width: number }, _data: unknown, target: HTMLElement) {
      charts.push({ testId: target.getAttribute("data-testid"), labels: opts.series.slice(1).map((s) => s.label ?? "") });
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

const { LoadsPanel } = await import("@/components/notebook/simulation/loads-panel");

/** A point mass of 2 kg on a 1.5 m rod in Cartesian coordinates, M = m I, f = (0, −m g). */
function pendulumRun(start: { x: number; y: number }): RunDisplay {
  const system = systemFromMassMatrixForm({
    coordinates: ["x", "y"],
    parameters: [
      { name: "m", value: 2 },
      { name: "l", value: 1.5 },
      { name: "g", value: 9.81 },
    ],
    massMatrix: [
      ["m", "0"],
      ["0", "m"],
    ],
    forcing: ["0", "-m*g"],
    constraints: [{ name: "rod", kind: "position", expr: "x^2 + y^2 - l^2" }],
    outputs: [{ name: "tension", expr: "-2*l*lambda_rod", unit: "N" }],
  });
  const result = integrate(system, { initialCoordinates: start, endTime: 3, outputStep: 0.01 });
  return {
    label: "run",
    source: "browser",
    status: result.status,
    failure: result.failure,
    timeReached: result.timeReached,
    coordinateNames: result.trajectory.coordinateNames,
    times: result.trajectory.times,
    coordinates: result.trajectory.coordinates,
    rates: result.trajectory.rates,
    energy: result.energy,
    coordinateUnits: { x: "m", y: "m" },
    energyCheck: null,
    constraints: result.constraints,
    outputs: result.outputs,
    columnUnits: { multipliers: { lambda_rod: "kg/s^2" }, residuals: { rod: "m^2" } },
  };
}

describe("loads panel", () => {
  it("lists each output's and multiplier's peak with its time, and the caution for load figures", () => {
    const run = pendulumRun({ x: 1.5 * Math.sin(0.9), y: -1.5 * Math.cos(0.9) });
    render(<LoadsPanel run={run} />);
    const rows = within(screen.getByTestId("peaks-table")).getAllByTestId("peak-row");
    expect(rows.map((row) => row.querySelector("td")?.textContent)).toEqual(["tension", "lambda_rod multiplier"]);
    const [peak, unit, time] = Array.from(rows[0]!.querySelectorAll("td"))
      .slice(1)
      .map((cell) => cell.textContent);
    const value = run.outputs![0]!.peak!;
    expect(Number(peak)).toBeCloseTo(value.value, -1);
    // Released from rest at 0.9 rad, the rod pulls hardest at the bottom: m g (3 − 2 cos θ0) (from memory, any dynamics text).
    expect(Number(peak)).toBeCloseTo(2 * 9.81 * (3 - 2 * Math.cos(0.9)), 0);
    expect(unit).toBe("N");
    expect(Number(time)).toBeCloseTo(value.time, 3);
    expect(screen.getByTestId("load-caution").textContent).toContain(safetyNote);
    expect(screen.queryByTestId("initial-projection")).toBeNull();
    expect(charts.find((c) => c.testId === "chart-loads-N")?.labels).toEqual(["tension"]);
    expect(charts.find((c) => c.testId === "chart-constraint-residuals")?.labels).toEqual(["rod"]);
    expect(screen.getByTestId("constraint-residual").textContent).toContain("rod");
  });

  it("says the initial state was projected, with each value as given and as used", () => {
    render(<LoadsPanel run={pendulumRun({ x: 0.3, y: -0.5 })} />);
    const notice = screen.getByTestId("initial-projection");
    expect(notice.getAttribute("role")).toBe("status");
    expect(notice.textContent).toContain("did not meet the constraints");
    expect(notice.textContent).toContain("rod");
    const changed = within(notice).getAllByRole("row").slice(1);
    expect(changed.map((row) => row.querySelector("td")?.textContent)).toEqual(["x", "y"]);
    expect(changed[0]!.querySelectorAll("td")[1]!.textContent).toBe("0.3");
  });
});
