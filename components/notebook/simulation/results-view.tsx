"use client";

/**
 * Results of one simulation: failure (reason and time reached, partial
 * trajectory still plotted), energy drift check, small-amplitude check,
 * charts of coordinates, rates, phase portrait and energy, the mechanism
 * animation, and the trajectory as CSV. Loaded on first use, with uPlot.
 */
import { useMemo } from "react";
import { energyDrift, explainSmallOscillation, trajectoryCsv } from "@/lib/simulate";
import { Chart, type ChartSeries } from "./chart";
import { MechanismAnimation } from "./mechanism-animation";
import { FAILURE_LABELS, type RunDisplay } from "./run-view";
import { LoadsPanel } from "./loads-panel";

export interface MeasuredOverlay {
  times: ArrayLike<number>;
  series: { coordinate: string; unit?: string; measured: ArrayLike<number>; fitted?: ArrayLike<number> }[];
}

export interface ResultsViewProps {
  run: RunDisplay;
  measured?: MeasuredOverlay | null;
  /** Unit of each coordinate as written in the Coordinates cell; quantities of different units get their own charts. */
  units?: Readonly<Record<string, string>>;
}

function formatNumber(value: number, digits = 3): string {
  if (value === 0) return "0";
  const magnitude = Math.abs(value);
  return magnitude >= 1e-3 && magnitude < 1e5 ? String(Number(value.toPrecision(digits + 1))) : value.toExponential(digits - 1);
}

/** Measured values placed on the simulated time grid's union, so uPlot sees one x array. */
function mergeOnTime(times: ArrayLike<number>, simulated: ArrayLike<number>[], overlayTimes: ArrayLike<number>, overlay: ArrayLike<number>[]) {
  const x: number[] = [];
  const sim = simulated.map(() => [] as (number | null)[]);
  const meas = overlay.map(() => [] as (number | null)[]);
  let i = 0;
  let j = 0;
  while (i < times.length || j < overlayTimes.length) {
    const ti = i < times.length ? times[i]! : Infinity;
    const tj = j < overlayTimes.length ? overlayTimes[j]! : Infinity;
    const t = Math.min(ti, tj);
    x.push(t);
    simulated.forEach((s, k) => sim[k]!.push(ti === t ? s[i]! : null));
    overlay.forEach((s, k) => meas[k]!.push(tj === t ? s[j]! : null));
    if (ti === t) i++;
    if (tj === t) j++;
  }
  return { x, sim, meas };
}

/** The unit of a rate: the coordinate's unit per second. */
export function rateUnit(unit: string): string {
  if (unit === "") return "";
  return /^[A-Za-z]+$/.test(unit) || /^[A-Za-z]+\^\d+$/.test(unit) ? `${unit}/s` : `(${unit})/s`;
}

export interface UnitGroup {
  /** The unit as written ("" when the coordinate has none). */
  unit: string;
  /** Coordinate indices in the run, in order. */
  indices: number[];
}

/**
 * Coordinates grouped by unit, in order of first appearance: one chart per
 * group, so metres and radians never share an axis.
 */
export function groupByUnit(names: readonly string[], units: Readonly<Record<string, string>> = {}): UnitGroup[] {
  const groups: UnitGroup[] = [];
  names.forEach((name, index) => {
    const unit = (units[name] ?? "").trim();
    const group = groups.find((g) => g.unit === unit);
    if (group) group.indices.push(index);
    else groups.push({ unit, indices: [index] });
  });
  return groups;
}

function inUnit(label: string, unit: string): string {
  return unit ? `${label} (${unit})` : `${label} (no unit given)`;
}

export default function ResultsView({ run, measured, units }: ResultsViewProps) {
  const names = run.coordinateNames;
  const groups = useMemo(() => groupByUnit(names, units), [names, units]);

  /** Per unit: coordinates with measured and fitted overlays, rates, and the phase portrait. */
  const panels = useMemo(
    () =>
      groups.map(({ unit, indices }) => {
        const overlay = measured?.series.filter((s) => indices.some((i) => names[i] === s.coordinate)) ?? [];
        let coordinates: { x: ArrayLike<number>; series: ChartSeries[] };
        if (!measured || overlay.length === 0) {
          coordinates = { x: run.times, series: indices.map((i, k) => ({ label: names[i]!, values: run.coordinates[i]!, colorIndex: k })) };
        } else {
          const fitted = overlay.filter((s) => s.fitted && s.fitted.length === measured.times.length);
          const merged = mergeOnTime(
            run.times,
            indices.map((i) => run.coordinates[i]!),
            measured.times,
            [...overlay.map((s) => s.measured), ...fitted.map((s) => s.fitted!)],
          );
          const colourOf = (coordinate: string) => indices.findIndex((i) => names[i] === coordinate);
          coordinates = {
            x: merged.x,
            series: [
              ...indices.map((i, k) => ({ label: names[i]!, values: merged.sim[k]!, colorIndex: k })),
              ...overlay.map((s, k) => ({ label: `${s.coordinate} measured`, values: merged.meas[k]!, points: true, colorIndex: colourOf(s.coordinate) })),
              ...fitted.map((s, k) => ({
                label: `${s.coordinate} fitted`,
                values: merged.meas[overlay.length + k]!,
                dash: true,
                colorIndex: colourOf(s.coordinate),
              })),
            ],
          };
        }
        const rates: ChartSeries[] = indices.map((i, k) => ({ label: `${names[i]}'`, values: run.rates[i]!, colorIndex: k }));
        const phase = indices.map((i) => ({ label: `${names[i]}' against ${names[i]}`, x: run.coordinates[i]!, y: run.rates[i]! }));
        return { unit, key: unit ? unit.replace(/[^A-Za-z0-9]+/g, "_") : "none", coordinates, rates, phase };
      }),
    [groups, run, measured, names],
  );
  const energySeries = useMemo<ChartSeries[] | null>(() => {
    if (!run.energy || run.energy.length === 0) return null;
    return [{ label: "(h − h₀)/|h₀|", values: energyDrift(run.energy).series }];
  }, [run]);

  const failure = run.failure;
  const drift = run.energyCheck;
  const oscillation = run.smallOscillation;
  const uncheckedDrift = useMemo(() => (!drift && run.energy && run.energy.length > 0 ? energyDrift(run.energy).relativeDrift : null), [drift, run]);

  function downloadCsv() {
    const csv = trajectoryCsv({ ...run, outputs: run.outputs, constraints: run.constraints }, run.coordinateUnits, run.columnUnits);
    const blob = new Blob([csv], { type: "text/csv" });
    const url = URL.createObjectURL(blob);
    const link = document.createElement("a");
    link.href = url;
    link.download = "trajectory.csv";
    link.click();
    setTimeout(() => URL.revokeObjectURL(url), 1000);
  }

  return (
    <div className="flex min-w-0 flex-col gap-3" data-testid="simulation-results">
      <div className="flex flex-wrap items-baseline gap-x-4 gap-y-1 text-sm">
        <span className="font-medium">{run.label}</span>
        <span className="text-muted">
          {run.times.length.toLocaleString("en-GB")} points to t = {formatNumber(run.timeReached, 4)} s
          {run.rhsEvaluations !== undefined && ` · ${run.rhsEvaluations.toLocaleString("en-GB")} right-hand-side evaluations`}
          {run.wallTimeMs !== undefined && ` in ${formatNumber(run.wallTimeMs, 3)} ms`}
        </span>
        <button type="button" className="ml-auto rounded border border-line px-2 py-0.5 text-action hover:border-action" onClick={downloadCsv}>
          Download CSV
        </button>
      </div>

      {failure && (
        <div className="rounded border border-danger/60 bg-danger-soft px-3 py-2 text-sm text-danger" role="alert" data-testid="simulation-failure">
          <p className="font-medium">
            Integration stopped: {FAILURE_LABELS[failure.reason] ?? failure.reason} at t ={" "}
            <span data-testid="time-reached">{formatNumber(failure.timeReached, 6)}</span> s.
          </p>
          <p>{failure.message}</p>
          <p className="text-ink">The trajectory up to that time is plotted below.</p>
        </div>
      )}

      {drift ? (
        <p
          className={drift.warning ? "rounded border border-danger/60 bg-danger-soft px-3 py-2 text-sm text-danger" : "text-sm"}
          role={drift.warning ? "alert" : undefined}
          data-testid="energy-drift"
        >
          Energy drift (largest relative change of the energy function):{" "}
          <strong className="font-mono" data-testid="energy-drift-value">
            {drift.relativeDrift.toExponential(2)}
          </strong>{" "}
          — threshold {drift.threshold.toExponential(0)}.{" "}
          {drift.warning
            ? "Above the threshold for a conservative system: the model may not be conservative as written, or the tolerance is too loose."
            : "Within the threshold."}
        </p>
      ) : (
        uncheckedDrift !== null && (
          <p className="text-sm" data-testid="energy-drift">
            Energy drift (largest relative change of the energy function):{" "}
            <strong className="font-mono" data-testid="energy-drift-value">
              {uncheckedDrift.toExponential(2)}
            </strong>
            .{" "}
            <span className="text-muted">
              Not checked against a threshold: the model has dissipation, applied forces or explicit time, so the energy function need not be conserved.
            </span>
          </p>
        )
      )}

      {oscillation && (
        <div className={oscillation.passed ? "text-sm" : "text-sm text-danger"} data-testid="small-oscillation">
          <p>
            Small-amplitude check ({oscillation.coordinate}, amplitude {formatNumber(oscillation.amplitude)}): linearization{" "}
            {formatNumber(oscillation.comparedFrequency, 5)} rad/s
            {oscillation.measuredFrequency !== null ? `, simulation ${formatNumber(oscillation.measuredFrequency, 5)} rad/s` : ""}
            {oscillation.relativeError !== null ? ` (relative difference ${oscillation.relativeError.toExponential(1)}` : ""}
            {oscillation.relativeError !== null && oscillation.threshold !== null
              ? `, accepted up to ${oscillation.threshold.toExponential(1)})`
              : oscillation.relativeError !== null
                ? ")"
                : ""}
            .
          </p>
          <p className={oscillation.passed ? "text-muted" : undefined}>{explainSmallOscillation(oscillation)}</p>
        </div>
      )}

      <div className="grid min-w-0 gap-x-4 gap-y-5 lg:grid-cols-2">
        {panels.map((panel) => {
          const suffix = panels.length > 1 ? `-${panel.key}` : "";
          return (
            <div key={panel.key} className="contents">
              <Chart
                title={inUnit("Coordinates", panel.unit)}
                xLabel="t (s)"
                yLabel={panel.unit || "no unit"}
                x={panel.coordinates.x}
                series={panel.coordinates.series}
                testId={`chart-coordinates${suffix}`}
              />
              <Chart
                title={inUnit("Rates", rateUnit(panel.unit))}
                xLabel="t (s)"
                yLabel={rateUnit(panel.unit) || "no unit"}
                x={run.times}
                series={panel.rates}
                testId={`chart-rates${suffix}`}
              />
            </div>
          );
        })}
        {panels.map((panel) => (
          <Chart
            key={panel.key}
            title={panels.length > 1 ? `Phase portrait, ${panel.unit || "no unit given"}` : "Phase portrait"}
            xLabel={panel.unit ? `coordinate (${panel.unit})` : "coordinate"}
            yLabel={rateUnit(panel.unit) ? `rate (${rateUnit(panel.unit)})` : "rate"}
            x={run.times}
            series={[]}
            xy={panel.phase}
            testId={`chart-phase${panels.length > 1 ? `-${panel.key}` : ""}`}
          />
        ))}
        {energySeries && (
          <Chart title="Energy function, relative change" xLabel="t (s)" yLabel="(h − h₀)/|h₀|" x={run.times} series={energySeries} testId="chart-energy" />
        )}
      </div>

      <LoadsPanel run={run} />

      {run.pointsError && <p className="text-sm text-danger">The mechanism could not be drawn: {run.pointsError}</p>}
      {run.points && run.points.length > 0 && <MechanismAnimation times={run.times} points={run.points} />}
    </div>
  );
}
