"use client";

/**
 * The mechanism drawn from the points marked in the simulation cell, in the
 * order given: a point that moves along a straight line (a trolley on its
 * girder, a seat on its guide) is drawn as a carriage on its track; points
 * that keep their distance are joined by a rigid link, others by a thin
 * dashed line; the origin is drawn as a fixed pivot only when the first
 * point keeps its distance from it. Play, pause and a scrub slider run over
 * the output times.
 */
import { useEffect, useLayoutEffect, useMemo, useRef, useState } from "react";
import { useThemeVersion } from "./chart";

export type PointMotion = "fixed" | "horizontal" | "vertical" | "free";

export interface MechanismLayout {
  /** How each point moves over the run. */
  motions: PointMotion[];
  /** For each point after the first: joined to the previous one by a rigid link (constant distance). */
  rigidToPrevious: boolean[];
  /** The first point hangs from the origin by a rigid link. */
  pivotAtOrigin: boolean;
}

function range(values: ArrayLike<number>): { min: number; max: number } {
  let min = Infinity;
  let max = -Infinity;
  for (let k = 0; k < values.length; k++) {
    const v = values[k]!;
    if (!Number.isFinite(v)) continue;
    min = Math.min(min, v);
    max = Math.max(max, v);
  }
  return { min, max };
}

function distanceIsConstant(
  ax: ArrayLike<number>,
  ay: ArrayLike<number>,
  bx: ArrayLike<number> | null,
  by: ArrayLike<number> | null,
  tolerance: number,
): { constant: boolean; mean: number } {
  let min = Infinity;
  let max = -Infinity;
  for (let k = 0; k < ax.length; k++) {
    const d = Math.hypot(ax[k]! - (bx ? bx[k]! : 0), ay[k]! - (by ? by[k]! : 0));
    if (!Number.isFinite(d)) continue;
    min = Math.min(min, d);
    max = Math.max(max, d);
  }
  return { constant: max - min <= tolerance, mean: (min + max) / 2 };
}

/**
 * Reads the mechanism's structure off the point tracks: which points run on
 * a straight track, which pairs keep their distance, whether the first
 * point swings about the origin.
 */
export function layoutOf(points: MechanismAnimationProps["points"], span: number): MechanismLayout {
  const tolerance = 1e-6 * Math.max(span, 1e-9);
  const motions = points.map((p): PointMotion => {
    const x = range(p.x);
    const y = range(p.y);
    const movesX = x.max - x.min > tolerance;
    const movesY = y.max - y.min > tolerance;
    if (!movesX && !movesY) return "fixed";
    if (movesX && !movesY) return "horizontal";
    if (movesY && !movesX) return "vertical";
    return "free";
  });
  const rigidToPrevious = points.map((p, i) => (i === 0 ? false : distanceIsConstant(p.x, p.y, points[i - 1]!.x, points[i - 1]!.y, tolerance).constant));
  const first = points[0];
  const fromOrigin = first ? distanceIsConstant(first.x, first.y, null, null, tolerance) : { constant: false, mean: 0 };
  return {
    motions,
    rigidToPrevious,
    pivotAtOrigin: Boolean(first) && motions[0] !== "horizontal" && motions[0] !== "vertical" && fromOrigin.constant && fromOrigin.mean > tolerance,
  };
}

export interface MechanismAnimationProps {
  times: ArrayLike<number>;
  points: { xName: string; yName: string; x: ArrayLike<number>; y: ArrayLike<number> }[];
}

const HEIGHT = 260;

export function MechanismAnimation({ times, points }: MechanismAnimationProps) {
  const canvas = useRef<HTMLCanvasElement>(null);
  const [frame, setFrame] = useState(0);
  const [playing, setPlaying] = useState(false);
  const theme = useThemeVersion();
  const count = times.length;

  // One fixed view for the whole run, so the mechanism does not jump around.
  const bounds = useMemo(() => {
    let minX = 0,
      maxX = 0,
      minY = 0,
      maxY = 0;
    for (const p of points) {
      for (let k = 0; k < p.x.length; k++) {
        const x = p.x[k]!,
          y = p.y[k]!;
        if (!Number.isFinite(x) || !Number.isFinite(y)) continue;
        minX = Math.min(minX, x);
        maxX = Math.max(maxX, x);
        minY = Math.min(minY, y);
        maxY = Math.max(maxY, y);
      }
    }
    const span = Math.max(maxX - minX, maxY - minY, 1e-9);
    return { minX, maxX, minY, maxY, span };
  }, [points]);
  const layout = useMemo(() => layoutOf(points, bounds.span), [points, bounds.span]);

  // The frame shown, for the playback loop to start from (written after render, never during it).
  const shownFrame = useRef(frame);
  useLayoutEffect(() => {
    shownFrame.current = frame;
  });

  // Playback in simulated time (1 s per second), from the frame shown.
  useEffect(() => {
    if (!playing || count < 2) return;
    const first = shownFrame.current;
    const startWall = performance.now();
    const startSim = times[first]!;
    let handle = 0;
    const step = () => {
      const target = startSim + (performance.now() - startWall) / 1000;
      let k = first;
      while (k < count - 1 && times[k + 1]! <= target) k++;
      setFrame(k);
      if (k >= count - 1) {
        setPlaying(false);
        return;
      }
      handle = requestAnimationFrame(step);
    };
    handle = requestAnimationFrame(step);
    return () => cancelAnimationFrame(handle);
    // The frame is read once when play starts; the loop then owns it.
  }, [playing, count, times]);

  useEffect(() => {
    const element = canvas.current;
    const context = element?.getContext("2d");
    if (!element || !context) return;
    const width = element.clientWidth || 400;
    const ratio = window.devicePixelRatio || 1;
    element.width = Math.floor(width * ratio);
    element.height = Math.floor(HEIGHT * ratio);
    context.setTransform(ratio, 0, 0, ratio, 0, 0);
    const style = getComputedStyle(document.documentElement);
    const ink = style.getPropertyValue("--ink").trim() || "#24272c";
    const muted = style.getPropertyValue("--muted").trim() || "#5c6169";
    const action = style.getPropertyValue("--action").trim() || "#0f5f63";
    const line = style.getPropertyValue("--line").trim() || "#d8cfbd";
    const surface = style.getPropertyValue("--surface").trim() || "#fbf8f2";
    context.clearRect(0, 0, width, HEIGHT);
    const margin = 28;
    const scale = Math.min(width - 2 * margin, HEIGHT - 2 * margin) / bounds.span;
    const cx = width / 2 - ((bounds.minX + bounds.maxX) / 2) * scale;
    const cy = HEIGHT / 2 + ((bounds.minY + bounds.maxY) / 2) * scale;
    const toCanvas = (x: number, y: number): [number, number] => [cx + x * scale, cy - y * scale];
    const at = (p: (typeof points)[number]) => toCanvas(p.x[frame] ?? 0, p.y[frame] ?? 0);

    // Tracks of the supports: a rail with hatching on the far side.
    context.lineWidth = 1;
    points.forEach((p, i) => {
      const motion = layout.motions[i];
      if (motion !== "horizontal" && motion !== "vertical") return;
      const [u, v] = at(p);
      context.strokeStyle = muted;
      context.beginPath();
      if (motion === "horizontal") {
        context.moveTo(4, v + 9);
        context.lineTo(width - 4, v + 9);
        for (let h = 8; h < width - 4; h += 10) {
          context.moveTo(h, v + 9);
          context.lineTo(h - 5, v + 14);
        }
      } else {
        context.moveTo(u - 10, 4);
        context.lineTo(u - 10, HEIGHT - 4);
        for (let h = 8; h < HEIGHT - 4; h += 10) {
          context.moveTo(u - 10, h);
          context.lineTo(u - 15, h + 5);
        }
      }
      context.stroke();
    });

    // Traces of the points that swing, so far.
    context.strokeStyle = line;
    points.forEach((p, i) => {
      if (layout.motions[i] !== "free") return;
      context.beginPath();
      for (let k = 0; k <= frame && k < p.x.length; k++) {
        const [u, v] = toCanvas(p.x[k]!, p.y[k]!);
        if (k === 0) context.moveTo(u, v);
        else context.lineTo(u, v);
      }
      context.stroke();
    });

    // The fixed pivot, when the first point swings about the origin.
    const [ox, oy] = toCanvas(0, 0);
    if (layout.pivotAtOrigin) {
      context.fillStyle = muted;
      context.beginPath();
      context.moveTo(ox, oy);
      context.lineTo(ox - 9, oy - 12);
      context.lineTo(ox + 9, oy - 12);
      context.closePath();
      context.fill();
      context.strokeStyle = ink;
      context.lineWidth = 2.5;
      context.beginPath();
      context.moveTo(ox, oy);
      context.lineTo(...at(points[0]!));
      context.stroke();
    }

    // Links between consecutive points: rigid bars, or a dashed line where the distance changes.
    for (let i = 1; i < points.length; i++) {
      const rigid = layout.rigidToPrevious[i];
      context.strokeStyle = rigid ? ink : muted;
      context.lineWidth = rigid ? 2.5 : 1;
      context.setLineDash(rigid ? [] : [5, 4]);
      context.beginPath();
      context.moveTo(...at(points[i - 1]!));
      context.lineTo(...at(points[i]!));
      context.stroke();
    }
    context.setLineDash([]);

    // Supports as carriages, other points as masses.
    points.forEach((p, i) => {
      const [u, v] = at(p);
      const motion = layout.motions[i];
      if (motion === "horizontal" || motion === "vertical") {
        const [w, h] = motion === "horizontal" ? [34, 18] : [18, 34];
        context.fillStyle = surface;
        context.strokeStyle = ink;
        context.lineWidth = 2;
        context.beginPath();
        context.roundRect?.(u - w / 2, v - h / 2, w, h, 3);
        if (!context.roundRect) context.rect(u - w / 2, v - h / 2, w, h);
        context.fill();
        context.stroke();
        context.fillStyle = ink;
        context.beginPath();
        context.arc(u, v, 2.5, 0, 2 * Math.PI);
        context.fill();
        return;
      }
      context.fillStyle = motion === "fixed" ? muted : action;
      context.beginPath();
      context.arc(u, v, 7, 0, 2 * Math.PI);
      context.fill();
    });
  }, [frame, points, bounds, layout, theme]);

  const time = count > 0 ? times[Math.min(frame, count - 1)]! : 0;
  return (
    <div className="min-w-0" data-testid="mechanism-animation">
      <canvas
        ref={canvas}
        className="block w-full max-w-full rounded border border-line bg-surface"
        style={{ height: HEIGHT }}
        aria-label="Mechanism animation"
        role="img"
      />
      <div className="mt-2 flex flex-wrap items-center gap-3 text-sm">
        <button
          type="button"
          className="rounded border border-line px-2 py-0.5 hover:border-action"
          onClick={() => {
            if (!playing && frame >= count - 1) setFrame(0);
            setPlaying((p) => !p);
          }}
        >
          {playing ? "Pause" : "Play"}
        </button>
        <label className="flex min-w-0 flex-1 items-center gap-2">
          <span className="sr-only">Time</span>
          <input
            type="range"
            className="min-w-0 flex-1"
            min={0}
            max={Math.max(0, count - 1)}
            value={frame}
            aria-label="Animation time"
            onChange={(event) => {
              setPlaying(false);
              setFrame(Number(event.target.value));
            }}
          />
        </label>
        <span className="font-mono text-xs text-muted tabular-nums">t = {time.toFixed(3)} s</span>
      </div>
    </div>
  );
}
