/**
 * A stored run's coordinates against time as SVG, one small chart per
 * coordinate (their units differ), so the printed report carries vector plots
 * that stay sharp on paper. Server-rendered; no script.
 */

const WIDTH = 640;
const HEIGHT = 150;
const MARGIN = { left: 58, right: 12, top: 10, bottom: 26 };

/** Round steps (1, 2 or 5 × 10^k) covering [min, max] with about `count` intervals. */
export function niceTicks(min: number, max: number, count = 4): number[] {
  if (!Number.isFinite(min) || !Number.isFinite(max)) return [];
  if (min === max) return [min];
  const raw = (max - min) / count;
  const power = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 5, 10].map((m) => m * power).find((candidate) => candidate >= raw) ?? 10 * power;
  const first = Math.ceil(min / step - 1e-9) * step;
  const ticks: number[] = [];
  for (let value = first; value <= max + step * 1e-9; value += step) ticks.push(Math.abs(value) < step * 1e-9 ? 0 : value);
  return ticks;
}

export function tickLabel(value: number): string {
  if (value === 0) return "0";
  const size = Math.abs(value);
  if (size >= 1e5 || size < 1e-3) return value.toExponential(1).replace("e+", "e");
  return String(Number(value.toPrecision(4)));
}

function extent(values: readonly number[]): [number, number] | null {
  let low = Infinity;
  let high = -Infinity;
  for (const value of values) {
    if (!Number.isFinite(value)) continue;
    if (value < low) low = value;
    if (value > high) high = value;
  }
  if (low === Infinity) return null;
  if (low === high) {
    const pad = Math.abs(low) > 0 ? Math.abs(low) * 0.1 : 1;
    return [low - pad, high + pad];
  }
  return [low, high];
}

export function SeriesChart({ times, values, label, unit }: { times: readonly number[]; values: readonly number[]; label: string; unit: string }) {
  const xRange = extent(times);
  const yRange = extent(values);
  if (!xRange || !yRange) return <p className="text-xs text-muted">No finite values of {label} to plot.</p>;
  const plotWidth = WIDTH - MARGIN.left - MARGIN.right;
  const plotHeight = HEIGHT - MARGIN.top - MARGIN.bottom;
  const x = (t: number) => MARGIN.left + ((t - xRange[0]) / (xRange[1] - xRange[0])) * plotWidth;
  const y = (v: number) => MARGIN.top + (1 - (v - yRange[0]) / (yRange[1] - yRange[0])) * plotHeight;
  let path = "";
  let pen = false;
  times.forEach((t, i) => {
    const v = values[i];
    if (v === undefined || !Number.isFinite(v) || !Number.isFinite(t)) {
      pen = false;
      return;
    }
    path += `${pen ? "L" : "M"}${x(t).toFixed(1)} ${y(v).toFixed(1)}`;
    pen = true;
  });
  const xTicks = niceTicks(xRange[0], xRange[1], 6);
  const yTicks = niceTicks(yRange[0], yRange[1], 3);
  return (
    <figure className="hn-report-chart">
      <svg
        viewBox={`0 0 ${WIDTH} ${HEIGHT}`}
        role="img"
        aria-label={`${label} in ${unit || "1"} against time in s`}
        className="h-auto w-full"
        data-testid="run-plot"
      >
        <g className="text-line" stroke="currentColor" strokeWidth="0.6">
          {yTicks.map((tick) => (
            <line key={`y${tick}`} x1={MARGIN.left} x2={WIDTH - MARGIN.right} y1={y(tick)} y2={y(tick)} />
          ))}
          {xTicks.map((tick) => (
            <line key={`x${tick}`} x1={x(tick)} x2={x(tick)} y1={MARGIN.top} y2={HEIGHT - MARGIN.bottom} />
          ))}
        </g>
        <rect x={MARGIN.left} y={MARGIN.top} width={plotWidth} height={plotHeight} fill="none" stroke="currentColor" strokeWidth="0.8" className="text-muted" />
        <g className="fill-muted" fontSize="10" fontFamily="var(--font-plex-mono), monospace">
          {yTicks.map((tick) => (
            <text key={`yl${tick}`} x={MARGIN.left - 5} y={y(tick) + 3} textAnchor="end">
              {tickLabel(tick)}
            </text>
          ))}
          {xTicks.map((tick) => (
            <text key={`xl${tick}`} x={x(tick)} y={HEIGHT - MARGIN.bottom + 13} textAnchor="middle">
              {tickLabel(tick)}
            </text>
          ))}
          <text x={WIDTH - MARGIN.right} y={HEIGHT - 2} textAnchor="end">
            t [s]
          </text>
        </g>
        <path d={path} fill="none" stroke="currentColor" strokeWidth="1.4" className="text-action" strokeLinejoin="round" />
      </svg>
      <figcaption className="text-xs text-muted">
        <span className="font-mono">{label}</span> [{unit || "1"}]
      </figcaption>
    </figure>
  );
}
