"use client";

/**
 * The mechanism drawn from the definitions marked as points: a pivot at the
 * origin, links joining the points in the order given, play, pause and a
 * scrub slider over the output times.
 */
import { useEffect, useMemo, useRef, useState } from "react";
import { useThemeVersion } from "./chart";

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

  // Playback in simulated time (1 s per second), from the frame shown.
  useEffect(() => {
    if (!playing || count < 2) return;
    const startWall = performance.now();
    const startSim = times[frame]!;
    let handle = 0;
    const step = () => {
      const target = startSim + (performance.now() - startWall) / 1000;
      let k = frame;
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
    const action = style.getPropertyValue("--action").trim() || "#0f5f63";
    const line = style.getPropertyValue("--line").trim() || "#d8cfbd";
    context.clearRect(0, 0, width, HEIGHT);
    const margin = 20;
    const scale = Math.min(width - 2 * margin, HEIGHT - 2 * margin) / bounds.span;
    const cx = width / 2 - ((bounds.minX + bounds.maxX) / 2) * scale;
    const cy = HEIGHT / 2 + ((bounds.minY + bounds.maxY) / 2) * scale;
    const toCanvas = (x: number, y: number): [number, number] => [cx + x * scale, cy - y * scale];

    // Traces of each point so far.
    context.strokeStyle = line;
    context.lineWidth = 1;
    for (const p of points) {
      context.beginPath();
      for (let k = 0; k <= frame && k < p.x.length; k++) {
        const [u, v] = toCanvas(p.x[k]!, p.y[k]!);
        if (k === 0) context.moveTo(u, v);
        else context.lineTo(u, v);
      }
      context.stroke();
    }
    // Links from the origin through the points in order.
    context.strokeStyle = ink;
    context.lineWidth = 2;
    context.beginPath();
    const [ox, oy] = toCanvas(0, 0);
    context.moveTo(ox, oy);
    for (const p of points) {
      const [u, v] = toCanvas(p.x[frame] ?? 0, p.y[frame] ?? 0);
      context.lineTo(u, v);
    }
    context.stroke();
    context.fillStyle = ink;
    context.fillRect(ox - 3, oy - 3, 6, 6);
    context.fillStyle = action;
    for (const p of points) {
      const [u, v] = toCanvas(p.x[frame] ?? 0, p.y[frame] ?? 0);
      context.beginPath();
      context.arc(u, v, 6, 0, 2 * Math.PI);
      context.fill();
    }
  }, [frame, points, bounds, theme]);

  const time = count > 0 ? times[Math.min(frame, count - 1)]! : 0;
  return (
    <div className="min-w-0" data-testid="mechanism-animation">
      <canvas ref={canvas} className="block w-full max-w-full rounded border border-line bg-surface" style={{ height: HEIGHT }} aria-label="Mechanism animation" role="img" />
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
