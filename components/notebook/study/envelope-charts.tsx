"use client";

/**
 * Envelope plots of a study, one per watched name: the band between the
 * smallest and largest value over the finished runs, the band between the
 * 5th and 95th percentiles, and the median, over time. Loaded on first use,
 * with uPlot, through the simulation panel's chart.
 */
import { useMemo } from "react";
import { Chart, type ChartBand, type ChartSeries } from "../simulation/chart";
import type { StudyView } from "./types";

const BANDS: ChartBand[] = [
  { upper: 0, lower: 1, opacity: 0.12 },
  { upper: 2, lower: 3, opacity: 0.3 },
];

export default function EnvelopeCharts({ study }: { study: StudyView }) {
  const envelope = study.envelope;
  const charts = useMemo(() => {
    if (!envelope) return [];
    return study.watch
      .filter((w) => envelope.series[w.name])
      .map((w, k) => {
        const band = envelope.series[w.name]!;
        const series: ChartSeries[] = [
          { label: "max", values: band.max, colorIndex: k, width: 0.75 },
          { label: "min", values: band.min, colorIndex: k, width: 0.75 },
          { label: "p95", values: band.p95, colorIndex: k, width: 0 },
          { label: "p5", values: band.p5, colorIndex: k, width: 0 },
          { label: "median", values: band.p50, colorIndex: k },
        ];
        return { name: w.name, unit: w.unit, series };
      });
  }, [envelope, study.watch]);
  if (!envelope || charts.length === 0) return null;
  return (
    <div className="grid min-w-0 gap-x-4 gap-y-5 lg:grid-cols-2" data-testid="study-envelopes">
      {charts.map((chart) => (
        <Chart
          key={chart.name}
          title={`Envelope of ${chart.name}${chart.unit ? ` (${chart.unit})` : ""}: min–max, 5–95 % and median`}
          xLabel="t (s)"
          yLabel={chart.unit || "no unit"}
          x={envelope.time}
          series={chart.series}
          bands={BANDS}
          testId={`study-envelope-${chart.name.replace(/[^A-Za-z0-9]+/g, "_")}`}
        />
      ))}
    </div>
  );
}
