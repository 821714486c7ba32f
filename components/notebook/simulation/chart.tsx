"use client";

/**
 * A uPlot chart that fills its container's width (never wider), takes its
 * colours from the page's theme and redraws when the theme changes.
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
}

const PALETTE_VARS = ["--action", "--seal", "--review", "--danger", "--muted"];

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

export function Chart({ title, xLabel, yLabel, x, series, xy, height = 220, testId }: ChartProps) {
  const holder = useRef<HTMLDivElement>(null);
  const theme = useThemeVersion();

  useEffect(() => {
    const element = holder.current;
    if (!element) return;
    const ink = cssVar("--ink", "#24272c");
    const grid = cssVar("--line", "#d8cfbd");
    const palette = PALETTE_VARS.map((name, i) => cssVar(name, ["#0f5f63", "#8c6a17", "#4d5a7a", "#b3261e", "#5c6169"][i]!));
    const axis = { stroke: ink, grid: { stroke: grid, width: 1 }, ticks: { stroke: grid, width: 1 } };
    const width = Math.max(200, Math.floor(element.clientWidth || 600));
    let plot: uPlot;
    if (xy) {
      const opts: uPlot.Options = {
        title,
        width,
        height,
        mode: 2,
        scales: { x: { time: false }, y: {} },
        axes: [{ ...axis, label: xLabel }, { ...axis, label: yLabel }],
        legend: { show: true },
        series: [{}, ...xy.map((s, i) => ({ label: s.label, stroke: palette[i % palette.length], paths: uPlot.paths.linear?.(), points: { show: false } }))],
      };
      const data = [null, ...xy.map((s) => [Array.from(s.x), Array.from(s.y)])] as unknown as uPlot.AlignedData;
      plot = new uPlot(opts, data, element);
    } else {
      const opts: uPlot.Options = {
        title,
        width,
        height,
        scales: { x: { time: false } },
        axes: [{ ...axis, label: xLabel }, { ...axis, label: yLabel }],
        series: [
          { label: xLabel },
          ...series.map((s, i) => ({
            label: s.label,
            stroke: palette[i % palette.length],
            width: s.points ? 0 : 1.5,
            dash: s.dash ? [6, 4] : undefined,
            spanGaps: !s.points,
            points: s.points ? { show: true, size: 4, fill: palette[i % palette.length] } : { show: false },
          })),
        ],
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
  }, [title, xLabel, yLabel, x, series, xy, height, theme]);

  return <div ref={holder} className="hn-chart min-w-0 max-w-full overflow-hidden" data-testid={testId} role="img" aria-label={title} />;
}
