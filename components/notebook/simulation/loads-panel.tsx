"use client";

/**
 * The loads of one run: the outputs and the constraints' multipliers with the
 * peak of each and when it occurs (what parts are sized from), their charts,
 * how well the run held the constraints, and what the projection of the
 * initial state changed.
 */
import { useMemo } from "react";
import { safetyNote } from "@/lib/domain";
import { peakOf, type Peak } from "@/lib/simulate";
import { Chart, type ChartSeries } from "./chart";
import type { RunDisplay } from "./run-view";

function formatValue(value: number, digits = 4): string {
  if (value === 0) return "0";
  const magnitude = Math.abs(value);
  return magnitude >= 1e-3 && magnitude < 1e6 ? String(Number(value.toPrecision(digits))) : value.toExponential(digits - 1);
}

export interface LoadRow {
  /** Output name, or the multiplier's symbol. */
  name: string;
  kind: "output" | "multiplier";
  unit: string;
  values: ArrayLike<number>;
  peak: Peak | null;
}

/** The rows of the peaks table: every output, then every multiplier, each with its peak. */
export function loadRows(run: Pick<RunDisplay, "times" | "outputs" | "constraints" | "columnUnits">): LoadRow[] {
  const outputs: LoadRow[] = (run.outputs ?? []).map((o) => ({ name: o.name, kind: "output", unit: o.unit ?? "", values: o.values, peak: o.peak }));
  const report = run.constraints;
  const multipliers: LoadRow[] = report
    ? report.multiplierNames.map((name, k) => ({
        name,
        kind: "multiplier",
        unit: run.columnUnits?.multipliers?.[name] ?? "",
        values: report.multipliers[k]!,
        peak: peakOf(run.times, report.multipliers[k]!),
      }))
    : [];
  return [...outputs, ...multipliers];
}

/** Rows grouped by unit, so newtons and metres never share an axis. */
function byUnit(rows: readonly LoadRow[]): { unit: string; rows: LoadRow[] }[] {
  const groups: { unit: string; rows: LoadRow[] }[] = [];
  for (const row of rows) {
    const group = groups.find((g) => g.unit === row.unit);
    if (group) group.rows.push(row);
    else groups.push({ unit: row.unit, rows: [row] });
  }
  return groups;
}

export function LoadsPanel({ run }: { run: RunDisplay }) {
  const rows = useMemo(() => loadRows(run), [run]);
  const report = run.constraints ?? null;
  const chartGroups = useMemo(
    () =>
      byUnit(rows).map((group) => ({
        unit: group.unit,
        series: group.rows.map<ChartSeries>((row, i) => ({ label: row.name, values: row.values, colorIndex: i })),
      })),
    [rows],
  );
  const residualSeries = useMemo<ChartSeries[]>(
    () => (report ? report.names.map((name, k) => ({ label: name, values: report.residuals[k]!, colorIndex: k })) : []),
    [report],
  );
  if (rows.length === 0 && !report) return null;
  const projection = report?.initialProjection ?? null;
  const residualUnit = (name: string) => run.columnUnits?.residuals?.[name] ?? "";

  return (
    <section className="flex min-w-0 flex-col gap-3" aria-label="Loads and constraints" data-testid="loads-panel">
      {projection && (
        <div className="rounded border border-line bg-surface px-3 py-2 text-sm" role="status" data-testid="initial-projection">
          <p className="font-medium">The initial state did not meet the constraints; it was projected onto them before the run.</p>
          <p className="text-muted">
            Residuals as given:{" "}
            {projection.residuals.map((r, i) => (
              <span key={r.name}>
                {i > 0 && ", "}
                <span className="font-mono">{r.name}</span> {formatValue(r.given)}
                {residualUnit(r.name) && ` ${residualUnit(r.name)}`}
              </span>
            ))}
            .
          </p>
          {projection.coordinates.length + projection.rates.length > 0 && (
            <div className="overflow-x-auto">
              <table className="mt-1 text-sm tabular-nums">
                <thead>
                  <tr className="text-left text-muted">
                    <th className="pr-4 font-normal">Changed</th>
                    <th className="pr-4 font-normal">Given</th>
                    <th className="font-normal">Used</th>
                  </tr>
                </thead>
                <tbody>
                  {[...projection.coordinates, ...projection.rates.map((r) => ({ ...r, name: `${r.name}'` }))].map((entry) => (
                    <tr key={entry.name}>
                      <td className="pr-4 font-mono">{entry.name}</td>
                      <td className="pr-4 font-mono">{formatValue(entry.given, 6)}</td>
                      <td className="font-mono">{formatValue(entry.projected, 6)}</td>
                    </tr>
                  ))}
                </tbody>
              </table>
            </div>
          )}
        </div>
      )}

      {report && (
        <p className="text-sm" data-testid="constraint-residual">
          Constraints held by {report.method}. Largest residual over the run:{" "}
          {report.names.map((name, k) => (
            <span key={name}>
              {k > 0 && ", "}
              <span className="font-mono">{name}</span> <strong className="font-mono">{formatValue(report.maxResidual[k]!, 2)}</strong>
              {residualUnit(name) && ` ${residualUnit(name)}`}
            </span>
          ))}
          .{" "}
          <span className="text-muted">Largest correction at one output time: {formatValue(report.largestCorrection.coordinates, 2)} in the coordinates.</span>
        </p>
      )}

      {rows.length > 0 && (
        <div className="flex min-w-0 flex-col gap-1">
          <h4 className="text-[13px] font-medium">Peaks</h4>
          <div className="overflow-x-auto">
            <table className="w-full min-w-[18rem] text-sm tabular-nums" data-testid="peaks-table">
              <thead>
                <tr className="border-b border-line text-left text-muted">
                  <th className="py-1 pr-3 font-normal">Quantity</th>
                  <th className="py-1 pr-3 text-right font-normal">Peak</th>
                  <th className="py-1 pr-3 font-normal">Unit</th>
                  <th className="py-1 text-right font-normal">At t (s)</th>
                </tr>
              </thead>
              <tbody>
                {rows.map((row) => (
                  <tr key={`${row.kind}-${row.name}`} className="border-b border-line/60" data-testid="peak-row">
                    <td className="py-1 pr-3">
                      <span className="font-mono">{row.name}</span>
                      {row.kind === "multiplier" && <span className="text-muted"> multiplier</span>}
                    </td>
                    <td className="py-1 pr-3 text-right font-mono">{row.peak ? formatValue(row.peak.value) : "—"}</td>
                    <td className="py-1 pr-3">{row.unit || "—"}</td>
                    <td className="py-1 text-right font-mono">{row.peak ? formatValue(row.peak.time, 4) : "—"}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
          <p className="text-xs text-muted" data-testid="load-caution">
            Peaks are read at the output points of this run: a finer output step can find a higher one. They are loads of the model as written, without dynamic,
            fatigue or safety factors. {safetyNote}
          </p>
        </div>
      )}

      <div className="grid min-w-0 gap-x-4 gap-y-5 lg:grid-cols-2">
        {chartGroups.map((group) => (
          <Chart
            key={group.unit || "none"}
            title={group.unit ? `Outputs and multipliers (${group.unit})` : "Outputs and multipliers (no unit given)"}
            xLabel="t (s)"
            yLabel={group.unit || "no unit"}
            x={run.times}
            series={group.series}
            testId={`chart-loads-${group.unit ? group.unit.replace(/[^A-Za-z0-9]+/g, "_") : "none"}`}
          />
        ))}
        {report && residualSeries.length > 0 && (
          <Chart title="Constraint residuals" xLabel="t (s)" yLabel="residual" x={run.times} series={residualSeries} testId="chart-constraint-residuals" />
        )}
      </div>
    </section>
  );
}
