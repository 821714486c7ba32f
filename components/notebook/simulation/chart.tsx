"use client";

/**
 * A uPlot chart in the house look: our heading above it (not uPlot's title),
 * IBM Plex for labels and numbers, graphite ink, hairline grid, and the
 * series palette from the page's theme (--series-1 … --series-6 in
 * globals.css, chosen to stay apart under colour-vision deficiencies). It
 * fills its container's width (never wider) and redraws when the theme
 * changes.
 */
import "uplot/dist/uPlot.min.css";
import { useEffect, useRef, useState } from "react";
import uPlot from "uplot";

export interface ChartSeries {
  label: string;
  values: ArrayLike<number | null>;
  /** Draw points only (measured data). */
  points?: boolean;
  dash?: boolean;
  /** Palette slot; default the series' position. Series about one quantity (simulated, measured, fitted) share it. */
  colorIndex?: number;
  /** Line width in CSS pixels (default 1.75); 0 draws no line (a band's edge). */
  width?: number;
}

/** A filled band between two series (indices into `series`), in the upper series' colour. */
export interface ChartBand {
  upper: number;
  lower: number;
  /** Opacity of the fill, 0 … 1. */
  opacity: number;
}

export interface ChartProps {
  title: string;
  xLabel: string;
  yLabel: string;
  x: ArrayLike<number>;
  series: ChartSeries[];
  /** Phase portrait: each series is plotted against its own x values (uPlot mode 2). */
  xy?: { x: ArrayLike<number>; y: ArrayLike<number>; label: string }[];
  height?: number;
  testId?: string;
  /** A logarithmic x axis (frequency plots); x values must be positive. */
  xLog?: boolean;
  /** Filled bands between pairs of series (envelopes of a study). */
  bands?: ChartBand[];
}

/** Number of colours in the series palette; further series repeat them with a dash pattern. */
export const SERIES_COLOURS = 6;
const DASHES: (number[] | undefined)[] = [undefined, [7, 4], [2, 3]];

function cssVar(name: string, fallback: string): string {
  if (typeof window === "undefined") return fallback;
  const value = getComputedStyle(document.documentElement).getPropertyValue(name).trim();
  return value || fallback;
}

/** Changes whenever the page's theme does (data-theme on <html>, or the system preference). */
export function useThemeVersion(): number {
  const [version, setVersion] = useState(0);
  useEffect(() => {
    const bump = () => setVersion((v) => v + 1);
    const observer = new MutationObserver(bump);
    observer.observe(document.documentElement, { attributes: true, attributeFilter: ["data-theme", "class"] });
    const media = window.matchMedia?.("(prefers-color-scheme: dark)");
    media?.addEventListener?.("change", bump);
    return () => {
      observer.disconnect();
      media?.removeEventListener?.("change", bump);
    };
  }, []);
  return version;
}

function toArray(values: ArrayLike<number | null>): (number | null)[] {
  return Array.from(values, (v) => (v === null || Number.isFinite(v) ? v : null));
}

/**
 * Tick labels that stay readable at any scale: plain decimals with as many
 * places as the tick spacing needs, exponent form for very small or large
 * values (an energy drift of 1e-10 would otherwise print as rows of "0").
 */
export function formatTicks(splits: readonly number[]): string[] {
  const finite = splits.filter((v) => Number.isFinite(v));
  if (finite.length === 0) return splits.map(String);
  const step = finite.length > 1 ? Math.abs(finite[1]! - finite[0]!) : Math.abs(finite[0]!) || 1;
  const largest = Math.max(...finite.map(Math.abs));
  const exact = (format: (v: number) => string) => finite.every((v) => Math.abs(Number(format(v)) - v) <= 1e-6 * (step || largest || 1));
  const exponent = largest >= 1e5 || (step > 0 && step < 1e-3);
  let digits = 0;
  const format = (v: number) => (exponent ? v.toExponential(digits) : v.toFixed(digits));
  while (digits < 8 && !exact(format)) digits++;
  return splits.map((v) => (v === 0 || Math.abs(v) < 1e-9 * step ? "0" : format(v).replace("e+", "e")));
}

/** A decade as a short label: plain for 0.001 … 10000, exponent form beyond. */
function decadeLabel(power: number): string {
  return power >= -3 && power <= 4 ? String(Number((10 ** power).toPrecision(1))) : `1e${power}`;
}

/** Pixels one tick label of `length` characters needs in the 11 px mono tick font, with a gap. */
const labelWidth = (length: number) => length * 7 + 10;

/**
 * Labels of a logarithmic axis. uPlot splits a log axis at every 1 … 9 × 10^k
 * (the grid lines); labelling them all piles the labels on each other, so only
 * decades are labelled, and every second (third, …) decade when `widthPx`, the
 * plot's width in CSS pixels, has no room for all of them.
 *
 * @example formatLogTicks([0.1, 0.2, 0.5, 1, 2, 5, 10], 400) // ["0.1", "", "", "1", "", "", "10"]
 */
export function formatLogTicks(splits: readonly number[], widthPx: number): string[] {
  const powers = splits.map((value) => {
    if (!(value > 0) || !Number.isFinite(value)) return null;
    const power = Math.log10(value);
    const whole = Math.round(power);
    return Math.abs(power - whole) < 1e-6 ? whole : null;
  });
  const decades = powers.filter((p): p is number => p !== null);
  if (decades.length === 0) return splits.map(() => "");
  const widest = Math.max(...decades.map((p) => labelWidth(decadeLabel(p).length)));
  const stride = Math.max(1, Math.ceil((widest * decades.length) / Math.max(1, widthPx)));
  return powers.map((p) => (p !== null && p % stride === 0 ? decadeLabel(p) : ""));
}

/** Colour and dash of palette slot i: six colours, then the same six dashed, then dotted. */
export function seriesStyle(palette: readonly string[], index: number): { stroke: string; dash: number[] | undefined } {
  return { stroke: palette[index % palette.length]!, dash: DASHES[Math.floor(index / palette.length) % DASHES.length] };
}

/** A palette colour (#rrggbb) at the given opacity; other colour forms are returned as they are. */
export function withOpacity(colour: string, opacity: number): string {
  const hex = /^#([0-9a-f]{2})([0-9a-f]{2})([0-9a-f]{2})$/i.exec(colour.trim());
  if (!hex) return colour;
  const [r, g, b] = hex.slice(1).map((part) => parseInt(part, 16));
  return `rgba(${r}, ${g}, ${b}, ${opacity})`;
}

function themeOf() {
  const ink = cssVar("--ink", "#24272c");
  const sans = cssVar("--font-plex-sans", "system-ui") + ", system-ui, sans-serif";
  const mono = cssVar("--font-plex-mono", "ui-monospace") + ", ui-monospace, monospace";
  return {
    ink,
    muted: cssVar("--muted", "#5c6169"),
    grid: cssVar("--line", "#d8cfbd"),
    palette: Array.from({ length: SERIES_COLOURS }, (_, i) => cssVar(`--series-${i + 1}`, ink)),
    labelFont: `500 12px ${sans}`,
    tickFont: `11px ${mono}`,
  };
}

export function Chart({ title, xLabel, yLabel, x, series, xy, height = 220, testId, xLog = false, bands }: ChartProps) {
  const holder = useRef<HTMLDivElement>(null);
  const theme = useThemeVersion();

  useEffect(() => {
    const element = holder.current;
    if (!element) return;
    const look = themeOf();
    const axis: uPlot.Axis = {
      stroke: look.muted,
      font: look.tickFont,
      labelFont: look.labelFont,
      labelSize: 22,
      grid: { stroke: look.grid, width: 1 },
      ticks: { stroke: look.grid, width: 1, size: 4 },
      values: (_plot, splits) => formatTicks(splits),
    };
    const axes: uPlot.Axis[] = [
      {
        ...axis,
        label: xLabel,
        size: 28,
        labelSize: 16,
        labelGap: 2,
        ...(xLog ? { values: (plot: uPlot, splits: number[]) => formatLogTicks(splits, plot.bbox.width / (uPlot.pxRatio || 1)) } : {}),
      },
      { ...axis, label: yLabel, size: 56 },
    ];
    const width = Math.max(200, Math.floor(element.clientWidth || 600));
    let plot: uPlot;
    if (xy) {
      const opts: uPlot.Options = {
        width,
        height,
        mode: 2,
        scales: { x: { time: false }, y: {} },
        axes,
        legend: { show: true, live: false },
        series: [
          {},
          ...xy.map((s, i) => {
            const style = seriesStyle(look.palette, i);
            return { label: s.label, stroke: style.stroke, dash: style.dash, width: 1.75, paths: uPlot.paths.linear?.(), points: { show: false } };
          }),
        ],
      };
      const data = [null, ...xy.map((s) => [Array.from(s.x), Array.from(s.y)])] as unknown as uPlot.AlignedData;
      plot = new uPlot(opts, data, element);
    } else {
      const opts: uPlot.Options = {
        width,
        height,
        scales: { x: xLog ? { time: false, distr: 3 } : { time: false } },
        axes,
        // A quiet legend: names only, no "--" placeholders for values until the cursor moves.
        legend: { show: true, live: false },
        series: [
          { label: xLabel },
          ...series.map((s, i) => {
            const style = seriesStyle(look.palette, s.colorIndex ?? i);
            return {
              label: s.label,
              stroke: style.stroke,
              width: s.points ? 0 : (s.width ?? 1.75),
              dash: s.dash ? [6, 4] : style.dash,
              spanGaps: !s.points,
              points: s.points ? { show: true, size: 5, stroke: style.stroke, fill: style.stroke } : { show: false },
            };
          }),
        ],
        // Series indices in uPlot count the x values as 0.
        bands: bands?.map((band) => {
          const upper = series[band.upper];
          const colour = seriesStyle(look.palette, upper?.colorIndex ?? band.upper).stroke;
          return { series: [band.upper + 1, band.lower + 1] as [number, number], fill: withOpacity(colour, band.opacity) };
        }),
      };
      plot = new uPlot(opts, [Array.from(x), ...series.map((s) => toArray(s.values))] as uPlot.AlignedData, element);
    }
    // Follow the container's width so the chart never pushes the page sideways.
    const resize = new ResizeObserver(() => {
      const next = Math.max(200, Math.floor(element.clientWidth));
      if (next !== plot.width) plot.setSize({ width: next, height });
    });
    resize.observe(element);
    return () => {
      resize.disconnect();
      plot.destroy();
    };
  }, [title, xLabel, yLabel, x, series, xy, height, theme, xLog, bands]);

  return (
    <figure className="m-0 flex min-w-0 flex-col gap-1" data-testid={testId ? `${testId}-figure` : undefined}>
      <figcaption className="text-[13px] font-medium text-ink">{title}</figcaption>
      <div
        ref={holder}
        className="hn-chart min-w-0 max-w-full overflow-hidden"
        data-testid={testId}
        role="img"
        aria-label={`${title}: ${yLabel} against ${xLabel}`}
      />
    </figure>
  );
}
