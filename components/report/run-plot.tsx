/**
 * A stored run's coordinates against time as SVG, one small chart per
 * coordinate (their units differ), so the printed report carries vector plots
 * that stay sharp on paper. Server-rendered; no script. The geometry is
 * lib/reports/format.ts's, shared with the report file.
 */
import { CHART, seriesChartGeometry } from "@/lib/reports/format";

export { niceTicks, tickLabel } from "@/lib/reports/format";

export function SeriesChart({ times, values, label, unit }: { times: readonly number[]; values: readonly number[]; label: string; unit: string }) {
  const chart = seriesChartGeometry(times, values);
  if (!chart) return <p className="text-xs text-muted">No finite values of {label} to plot.</p>;
  const { width, height, margin } = CHART;
  return (
    <figure className="hn-report-chart">
      <svg
        viewBox={`0 0 ${width} ${height}`}
        role="img"
        aria-label={`${label} in ${unit || "1"} against time in s`}
        className="h-auto w-full"
        data-testid="run-plot"
      >
        <g className="text-line" stroke="currentColor" strokeWidth="0.6">
          {chart.yTicks.map((tick) => (
            <line key={`y${tick.value}`} x1={margin.left} x2={width - margin.right} y1={tick.at} y2={tick.at} />
          ))}
          {chart.xTicks.map((tick) => (
            <line key={`x${tick.value}`} x1={tick.at} x2={tick.at} y1={margin.top} y2={height - margin.bottom} />
          ))}
        </g>
        <rect
          x={chart.plot.x}
          y={chart.plot.y}
          width={chart.plot.width}
          height={chart.plot.height}
          fill="none"
          stroke="currentColor"
          strokeWidth="0.8"
          className="text-muted"
        />
        <g className="fill-muted" fontSize="10" fontFamily="var(--font-plex-mono), monospace">
          {chart.yTicks.map((tick) => (
            <text key={`yl${tick.value}`} x={margin.left - 5} y={tick.at + 3} textAnchor="end">
              {tick.label}
            </text>
          ))}
          {chart.xTicks.map((tick) => (
            <text key={`xl${tick.value}`} x={tick.at} y={height - margin.bottom + 13} textAnchor="middle">
              {tick.label}
            </text>
          ))}
          <text x={width - margin.right} y={height - 2} textAnchor="end">
            t [s]
          </text>
        </g>
        <path d={chart.path} fill="none" stroke="currentColor" strokeWidth="1.4" className="text-action" strokeLinejoin="round" />
      </svg>
      <figcaption className="text-xs text-muted">
        <span className="font-mono">{label}</span> [{unit || "1"}]
      </figcaption>
    </figure>
  );
}
