"use client";

import { useCallback, useEffect, useRef, useState } from "react";
import type { SimulationProgress, WorkerErrorPayload } from "@/lib/simulate";
import type { RunDisplay } from "./run-view";
import type { ModelSimulationJob, ModelSimulationRequest, SimulationWorkerResponse } from "./worker-messages";

export type WorkerRunState =
  { phase: "idle" } | { phase: "running"; id: string; progress: SimulationProgress | null } | { phase: "error"; error: WorkerErrorPayload };

let sequence = 0;

/**
 * Runs simulations in a dedicated Web Worker, created on the first run (so
 * neither the worker nor the engine it carries is part of the page's first
 * load) and ended when the cell unmounts.
 */
export function useSimulationWorker(onResult: (run: RunDisplay) => void) {
  const worker = useRef<Worker | null>(null);
  const [state, setState] = useState<WorkerRunState>({ phase: "idle" });
  const current = useRef<string | null>(null);
  /** Units of the running job's coordinates (from its model), for the CSV header. */
  const units = useRef<Record<string, string>>({});
  // The latest handler, for the worker's message callback (set after render: refs are not written while rendering).
  const resultHandler = useRef(onResult);
  useEffect(() => {
    resultHandler.current = onResult;
  }, [onResult]);

  useEffect(
    () => () => {
      worker.current?.terminate();
      worker.current = null;
    },
    [],
  );

  const start = useCallback((job: ModelSimulationJob) => {
    if (!worker.current) {
      const created = new Worker(new URL("./simulation.worker.ts", import.meta.url), { type: "module", name: "simulation" });
      created.onmessage = (event: MessageEvent<SimulationWorkerResponse>) => {
        const message = event.data;
        if (message.id !== current.current) return;
        if (message.type === "progress") {
          if ("fraction" in message.progress) setState({ phase: "running", id: message.id, progress: message.progress as SimulationProgress });
          return;
        }
        current.current = null;
        if (message.type === "error") {
          setState({ phase: "error", error: message.error });
          return;
        }
        if (message.outcome.kind !== "simulate") return;
        const { result, energyCheck } = message.outcome;
        setState({ phase: "idle" });
        resultHandler.current({
          label: `Run in this browser, ${new Date().toLocaleTimeString("en-GB")}`,
          source: "browser",
          status: result.status,
          failure: result.failure,
          timeReached: result.timeReached,
          coordinateNames: result.trajectory.coordinateNames,
          times: result.trajectory.times,
          coordinates: result.trajectory.coordinates,
          rates: result.trajectory.rates,
          energy: result.energy,
          coordinateUnits: units.current,
          energyCheck: energyCheck ? { relativeDrift: energyCheck.relativeDrift, threshold: energyCheck.threshold, warning: energyCheck.warning } : null,
          smallOscillation: "smallOscillation" in message ? message.smallOscillation : null,
          points: "points" in message ? message.points : [],
          pointsError: "pointsError" in message ? message.pointsError : null,
          parameterValues: result.parameterValues,
          constraints: result.constraints ?? null,
          outputs: result.outputs ?? [],
          columnUnits: "columnUnits" in message ? message.columnUnits : undefined,
          rhsEvaluations: result.stats.rhsEvaluations,
          wallTimeMs: result.stats.wallTimeMs,
        });
      };
      created.onerror = (event) => {
        current.current = null;
        setState({
          phase: "error",
          error: { name: "Error", code: "worker", field: null, message: event.message || "The simulation worker stopped unexpectedly." },
        });
        worker.current?.terminate();
        worker.current = null;
      };
      worker.current = created;
    }
    sequence += 1;
    const id = `run-${sequence}`;
    current.current = id;
    units.current = coordinateUnitsOf(job.model);
    setState({ phase: "running", id, progress: null });
    const request: ModelSimulationRequest = { type: "start", id, job };
    worker.current.postMessage(request);
  }, []);

  const cancel = useCallback(() => {
    const id = current.current;
    if (id && worker.current) worker.current.postMessage({ type: "cancel", id } satisfies ModelSimulationRequest);
  }, []);

  return { state, start, cancel };
}

/** Each coordinate's unit in a model file (the job's model is not validated yet; anything odd gives no unit). */
function coordinateUnitsOf(model: unknown): Record<string, string> {
  const coordinates = (model as { coordinates?: unknown } | null)?.coordinates;
  if (!Array.isArray(coordinates)) return {};
  return Object.fromEntries(
    coordinates.flatMap((c: { name?: unknown; unit?: unknown }) => (typeof c?.name === "string" && typeof c.unit === "string" ? [[c.name, c.unit]] : [])),
  );
}
