"use client";

/**
 * The simulation cell: settings stored in the cell (text as typed), a run in
 * this browser's Web Worker with progress and Cancel, a run on the server that
 * is stored for the team, the stored runs, results (loaded on first use with
 * uPlot), and measured data with parameter fitting.
 */
import clsx from "clsx";
import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { lazy, Suspense, useMemo, useState, type ReactNode } from "react";
import { apiFetch } from "@/lib/api/fetcher";
import { AppError } from "@/lib/errors";
import {
  DocumentError,
  documentSymbols,
  documentToModel,
  type DerivationDocument,
  type DocumentOperation,
  type SimulationCell,
  type SimulationSettings,
} from "@/lib/notebook/document";
import type { NotebookResults } from "@/lib/notebook/results";
import { ExpressionEditor } from "../editor/expression-editor";
import { MeasuredPanel } from "./measured-panel";
import type { RunJson } from "@/lib/runs/views";
import type { JobJson } from "@/lib/jobs/views";
import { FIXED_ZERO, isLengthUnit, nextPoint, pointSourcesOf } from "./mechanism-points";
import { displayOfStoredRun, type RunDisplay } from "./run-view";
import { validateSettings, type RunRequest } from "./settings";
import { smallOscillationOf } from "./small-oscillation";
import type { MeasuredOverlay } from "./results-view";
import { useSimulationWorker } from "./use-simulation-worker";
import { ServerJobStatus, useServerJob } from "./use-server-job";

const ResultsView = lazy(() => import("./results-view"));

export interface SimulationCellProps {
  cell: SimulationCell;
  results: NotebookResults | null;
  evaluating?: boolean;
  readOnly?: boolean;
  onOperation: (op: DocumentOperation) => void;
  /** The whole document: its model is what the simulation integrates. */
  document?: DerivationDocument;
  /** Present when the derivation is stored: enables server runs, stored runs and measured data. */
  derivationId?: string;
  /**
   * The settings are this person's own (they may not edit the document): edits
   * go here instead of the document, and the form stays editable when `readOnly`.
   */
  onSettingsChange?: (patch: Partial<SimulationSettings>) => void;
  /** Goes back to the document's settings; offered while the person's own differ. */
  onResetSettings?: () => void;
  /** May store runs on the server (defaults to being able to edit). */
  canStoreRuns?: boolean;
}

const inputClass = "w-full min-w-0 rounded border border-line bg-paper px-1.5 py-0.5 font-mono text-[13px] text-ink aria-[invalid=true]:border-danger";

function FieldError({ message, id }: { message?: string; id: string }) {
  if (!message) return null;
  return (
    <span id={id} className="text-xs text-danger">
      {message}
    </span>
  );
}

function NumberField({
  label,
  name,
  value,
  error,
  placeholder,
  readOnly,
  onChange,
  cellId,
}: {
  label: ReactNode;
  name: string;
  value: string;
  error?: string;
  placeholder?: string;
  readOnly?: boolean;
  onChange: (value: string) => void;
  cellId: string;
}) {
  const id = `${cellId}-${name}`;
  return (
    <div className="flex min-w-0 flex-col gap-0.5 text-[13px] text-muted">
      <label htmlFor={id}>{label}</label>
      <input
        id={id}
        className={inputClass}
        value={value}
        placeholder={placeholder}
        readOnly={readOnly}
        inputMode="decimal"
        aria-invalid={error ? true : undefined}
        aria-describedby={error ? `${id}-error` : undefined}
        onChange={(event) => onChange(event.target.value)}
      />
      <FieldError id={`${id}-error`} message={error} />
    </div>
  );
}

/** The settings form alone (also used by tests): every change is one `updateSettings` operation. */
export function SimulationSettingsForm({
  cell,
  document: doc,
  readOnly,
  errors,
  onOperation,
  onSettingsChange,
}: {
  cell: SimulationCell;
  document: DerivationDocument;
  readOnly?: boolean;
  errors: Record<string, string>;
  onOperation: (op: DocumentOperation) => void;
  /** Edits go here instead of the document (a person's own settings). */
  onSettingsChange?: (patch: Partial<SimulationSettings>) => void;
}) {
  const settings = cell.settings;
  const symbols = useMemo(() => documentSymbols(doc), [doc]);
  const pointSources = useMemo(() => pointSourcesOf(doc), [doc]);
  const parameterValues = useMemo(() => {
    const values = new Map<string, string>();
    for (const c of doc.cells) if (c.kind === "parameters") for (const row of c.rows) values.set(row.name.trim(), row.value);
    return values;
  }, [doc]);
  const update = (patch: Partial<SimulationSettings>) =>
    onSettingsChange ? onSettingsChange(patch) : onOperation({ type: "updateSettings", cellId: cell.id, patch });
  const common = { readOnly, cellId: cell.id };

  return (
    <div className="flex min-w-0 flex-col gap-3" data-testid="simulation-settings">
      {errors._ && <p className="text-sm text-danger">{errors._}</p>}
      {symbols.coordinates.length > 0 && (
        <fieldset className="min-w-0">
          <legend className="mb-1 text-xs uppercase tracking-wide text-muted">Initial state</legend>
          <div className="grid min-w-0 grid-cols-[repeat(auto-fill,minmax(9rem,1fr))] gap-2">
            {symbols.coordinates.map((q) => (
              <div key={q} className="contents">
                <NumberField
                  label={<span className="font-mono">{q}(t₀)</span>}
                  name={`initialCoordinates.${q}`}
                  value={settings.initialCoordinates[q] ?? ""}
                  placeholder="0"
                  error={errors[`initialCoordinates.${q}`]}
                  onChange={(value) => update({ initialCoordinates: { ...settings.initialCoordinates, [q]: value } })}
                  {...common}
                />
                <NumberField
                  label={<span className="font-mono">{q}&apos;(t₀)</span>}
                  name={`initialRates.${q}`}
                  value={settings.initialRates[q] ?? ""}
                  placeholder="0"
                  error={errors[`initialRates.${q}`]}
                  onChange={(value) => update({ initialRates: { ...settings.initialRates, [q]: value } })}
                  {...common}
                />
              </div>
            ))}
          </div>
        </fieldset>
      )}
      <fieldset className="min-w-0">
        <legend className="mb-1 text-xs uppercase tracking-wide text-muted">Time and accuracy</legend>
        <div className="grid min-w-0 grid-cols-[repeat(auto-fill,minmax(9rem,1fr))] gap-2">
          <NumberField
            label="Start time (s)"
            name="startTime"
            value={settings.startTime}
            error={errors.startTime}
            onChange={(startTime) => update({ startTime })}
            {...common}
          />
          <NumberField
            label="End time (s)"
            name="endTime"
            value={settings.endTime}
            error={errors.endTime}
            onChange={(endTime) => update({ endTime })}
            {...common}
          />
          <NumberField
            label="Output step (s)"
            name="outputStep"
            value={settings.outputStep}
            error={errors.outputStep}
            onChange={(outputStep) => update({ outputStep })}
            {...common}
          />
          <NumberField
            label="Relative tolerance"
            name="tolerance"
            value={settings.tolerance}
            error={errors.tolerance}
            onChange={(tolerance) => update({ tolerance })}
            {...common}
          />
        </div>
      </fieldset>
      {symbols.inputs.length > 0 && (
        <fieldset className="min-w-0">
          <legend className="mb-1 text-xs uppercase tracking-wide text-muted">Inputs as functions of t (blank is 0)</legend>
          <div className="flex min-w-0 flex-col gap-2">
            {symbols.inputs.map((u) => (
              <div key={u} className="grid min-w-0 grid-cols-[4rem_1fr] items-center gap-2">
                <span className="font-mono text-sm">{u}(t) =</span>
                <ExpressionEditor
                  value={settings.inputs[u] ?? ""}
                  onChange={(value) => update({ inputs: { ...settings.inputs, [u]: value } })}
                  label={`Input ${u} as a function of t`}
                  symbols={{ coordinates: [], parameters: symbols.parameters, inputs: [], definitions: [] }}
                  allowEmpty
                  readOnly={readOnly}
                  placeholder="e.g. 0.5*sin(2*t)"
                  data-testid={`simulation-input-${u}`}
                />
              </div>
            ))}
          </div>
        </fieldset>
      )}
      {symbols.parameters.length > 0 && (
        <fieldset className="min-w-0">
          <legend className="mb-1 text-xs uppercase tracking-wide text-muted">Parameter overrides for this simulation (blank keeps the Parameters cell)</legend>
          <div className="grid min-w-0 grid-cols-[repeat(auto-fill,minmax(9rem,1fr))] gap-2">
            {symbols.parameters.map((p) => (
              <NumberField
                key={p}
                label={<span className="font-mono">{p}</span>}
                name={`parameterOverrides.${p}`}
                value={settings.parameterOverrides[p] ?? ""}
                placeholder={parameterValues.get(p) || "symbolic"}
                error={errors[`parameterOverrides.${p}`]}
                onChange={(value) => update({ parameterOverrides: { ...settings.parameterOverrides, [p]: value } })}
                {...common}
              />
            ))}
          </div>
        </fieldset>
      )}
      <fieldset className="min-w-0">
        <legend className="mb-1 text-xs uppercase tracking-wide text-muted">Mechanism points (positions drawn as x, y)</legend>
        {symbols.definitions.length === 0 && !pointSources.coordinates.some((c) => isLengthUnit(c.unit)) ? (
          <p className="text-sm text-muted">Add definitions of positions (or a coordinate in metres) to draw the mechanism.</p>
        ) : (
          <div className="flex flex-col gap-1.5">
            {settings.points.map((point, i) => (
              <div key={i} className="flex flex-wrap items-center gap-2 text-sm">
                <span className="text-muted">Point {i + 1}</span>
                {(["x", "y"] as const).map((axis) => (
                  <label key={axis} className="flex items-center gap-1">
                    <span className="font-mono">{axis}</span>
                    <select
                      className="rounded border border-line bg-paper px-1 py-0.5 font-mono text-[13px] text-ink"
                      value={point[axis]}
                      disabled={readOnly}
                      aria-label={`Point ${i + 1} ${axis}`}
                      aria-invalid={errors[`points.${i}.${axis}`] ? true : undefined}
                      onChange={(event) => update({ points: settings.points.map((p, j) => (j === i ? { ...p, [axis]: event.target.value } : p)) })}
                    >
                      <option value="">—</option>
                      {symbols.definitions.length > 0 && (
                        <optgroup label="Definitions">
                          {symbols.definitions.map((d) => (
                            <option key={d} value={d}>
                              {d}
                            </option>
                          ))}
                        </optgroup>
                      )}
                      <optgroup label="Coordinates">
                        {symbols.coordinates.map((q) => (
                          <option key={q} value={q}>
                            {q}
                          </option>
                        ))}
                      </optgroup>
                      <option value={FIXED_ZERO}>0 (fixed)</option>
                    </select>
                  </label>
                ))}
                {!readOnly && (
                  <button
                    type="button"
                    className="text-muted hover:text-danger"
                    aria-label={`Remove point ${i + 1}`}
                    onClick={() => update({ points: settings.points.filter((_, j) => j !== i) })}
                  >
                    ×
                  </button>
                )}
                <FieldError id={`${cell.id}-point-${i}`} message={errors[`points.${i}.x`] ?? errors[`points.${i}.y`]} />
              </div>
            ))}
            {!readOnly && (
              <button
                type="button"
                className="self-start text-sm text-action hover:underline"
                onClick={() => update({ points: [...settings.points, nextPoint(pointSources, settings.points)] })}
              >
                + Add point
              </button>
            )}
          </div>
        )}
      </fieldset>
    </div>
  );
}

/** Each coordinate's unit as written in the Coordinates cell. */
function coordinateUnitsOf(doc: DerivationDocument): Record<string, string> {
  const units: Record<string, string> = {};
  for (const c of doc.cells) if (c.kind === "coordinates") for (const row of c.rows) if (row.name.trim()) units[row.name.trim()] = row.unit.trim();
  return units;
}

export function SimulationCellView({
  cell,
  results,
  readOnly,
  onOperation,
  document: doc,
  derivationId,
  onSettingsChange,
  onResetSettings,
  canStoreRuns = !readOnly,
}: SimulationCellProps) {
  const [run, setRun] = useState<RunDisplay | null>(null);
  const [attempted, setAttempted] = useState(false);
  const [problem, setProblem] = useState<string | null>(null);
  const [overlay, setOverlay] = useState<MeasuredOverlay | null>(null);
  const { state, start, cancel } = useSimulationWorker(setRun);
  const serverJob = useServerJob(derivationId);

  const symbols = useMemo(() => (doc ? documentSymbols(doc) : null), [doc]);
  const coordinateUnits = useMemo(() => (doc ? coordinateUnitsOf(doc) : {}), [doc]);
  const settings = cell.settings;
  const validation = symbols ? validateSettings(settings, symbols) : null;
  const errors = attempted && validation && !validation.ok ? validation.errors : {};

  if (!doc || !symbols || !validation) {
    return <p className="text-sm text-muted">The simulation needs the derivation&apos;s document.</p>;
  }

  function prepare() {
    setAttempted(true);
    setProblem(null);
    if (!validation?.ok) return null;
    try {
      return { model: documentToModel(doc!), request: validation.request, points: validation.points };
    } catch (error) {
      if (error instanceof DocumentError) setProblem(`${error.field}: ${error.message}`);
      else throw error;
      return null;
    }
  }

  function runHere() {
    const prepared = prepare();
    if (!prepared) return;
    const overrides = Object.keys(prepared.request.parameters).length > 0;
    start({
      model: prepared.model,
      settings: { ...prepared.request, timeLimitMs: 60_000 },
      points: prepared.points,
      smallOscillation: overrides ? null : smallOscillationOf(results, symbols!.coordinates),
    });
  }

  async function openRun(runId: string) {
    setProblem(null);
    try {
      const { run: stored } = await apiFetch<{ run: RunJson }>(`/api/derivations/${derivationId}/runs/${runId}`);
      const display = displayOfStoredRun(stored);
      if (display) setRun(display);
      else setProblem("That run has no trajectory stored.");
    } catch (error) {
      setProblem(error instanceof AppError ? error.message : "The run could not be opened.");
    }
  }

  const running = state.phase === "running";
  const progress = state.phase === "running" ? (state.progress?.fraction ?? 0) : 0;

  return (
    <div className="flex min-w-0 flex-col gap-3">
      {onSettingsChange ? (
        <p className="flex flex-wrap items-center gap-x-2 text-xs text-muted" data-testid="own-simulation-settings">
          <span>These settings are yours: runs here use them, and the document is not changed.</span>
          {onResetSettings ? (
            <button type="button" className="text-action hover:underline" onClick={onResetSettings}>
              Reset my settings
            </button>
          ) : null}
        </p>
      ) : null}
      <SimulationSettingsForm
        cell={cell}
        document={doc}
        readOnly={readOnly && !onSettingsChange}
        errors={errors}
        onOperation={onOperation}
        onSettingsChange={onSettingsChange}
      />
      <div className="flex flex-wrap items-center gap-2">
        <button
          type="button"
          className="rounded bg-action px-3 py-1 text-sm text-action-ink hover:bg-action-strong disabled:opacity-50"
          disabled={running}
          onClick={runHere}
          data-testid="simulation-run"
        >
          Run simulation
        </button>
        {derivationId && canStoreRuns && (
          <ServerRunButton
            derivationId={derivationId}
            runJob={serverJob.run}
            disabled={running}
            prepare={() => prepare()?.request ?? null}
            onStored={(stored) => {
              const display = displayOfStoredRun(stored);
              if (display) setRun(display);
            }}
            onFailed={(error) => setProblem(error instanceof AppError ? error.message : "The server run failed.")}
          />
        )}
        {serverJob.job && <ServerJobStatus job={serverJob.job} what="Run" onCancel={() => void serverJob.cancel().catch(() => undefined)} />}
        {running && (
          <>
            <progress
              className="h-2 w-40 max-w-full accent-[var(--action)]"
              max={1}
              value={progress}
              aria-label="Simulation progress"
              data-testid="simulation-progress"
            />
            <span className="font-mono text-xs text-muted tabular-nums">{Math.round(progress * 100)} %</span>
            <button type="button" className="rounded border border-line px-2 py-0.5 text-sm hover:border-danger hover:text-danger" onClick={cancel}>
              Cancel
            </button>
          </>
        )}
      </div>
      {attempted && !validation.ok && (
        <p className="text-sm text-danger" role="alert">
          Correct the highlighted settings to run.
        </p>
      )}
      {problem && (
        <p className="text-sm text-danger" role="alert">
          {problem}
        </p>
      )}
      {state.phase === "error" && (
        <p className="rounded border border-danger/60 bg-danger-soft px-3 py-2 text-sm text-danger" role="alert" data-testid="simulation-error">
          The simulation could not start{state.error.field ? ` (${state.error.field})` : ""}: {state.error.message}
        </p>
      )}
      {derivationId && <StoredRuns derivationId={derivationId} onOpen={(runId) => void openRun(runId)} />}
      {run && (
        <Suspense fallback={<p className="text-sm text-muted">Loading charts…</p>}>
          <ResultsView run={run} measured={overlay} units={coordinateUnits} />
        </Suspense>
      )}
      {derivationId && (
        <MeasuredPanel
          derivationId={derivationId}
          document={doc}
          readOnly={readOnly}
          settings={validation.ok ? validation.request : null}
          onOverlay={setOverlay}
          onOperation={onOperation}
        />
      )}
    </div>
  );
}

/** The runs stored on the server for this derivation (refreshed when a server run is stored). */
const storedRunsKey = (derivationId: string) => ["derivations", derivationId, "runs"] as const;

function StoredRuns({ derivationId, onOpen }: { derivationId: string; onOpen: (runId: string) => void }) {
  const { data } = useQuery({
    queryKey: storedRunsKey(derivationId),
    queryFn: ({ signal }) => apiFetch<{ runs: RunJson[] }>(`/api/derivations/${derivationId}/runs`, { signal }),
  });
  const storedRuns = data?.runs;
  if (!storedRuns || storedRuns.length === 0) return null;
  return (
    <details className="text-sm">
      <summary className="cursor-pointer text-muted">Stored runs ({storedRuns.length})</summary>
      <ul className="mt-1 flex flex-col gap-1">
        {storedRuns.map((stored) => (
          <li key={stored.id} className="flex flex-wrap items-center gap-2">
            <button type="button" className="text-action hover:underline" onClick={() => onOpen(stored.id)}>
              Open
            </button>
            <span className={clsx(stored.status === "failed" && "text-danger")}>
              {new Date(stored.createdAt).toLocaleString("en-GB", { dateStyle: "medium", timeStyle: "short" })} · {stored.createdBy?.name ?? "—"} ·{" "}
              {stored.pointCount} points · {stored.status === "failed" ? `failed at t = ${stored.timeReached}` : "completed"}
              {stored.energyDrift !== null && ` · drift ${stored.energyDrift.toExponential(1)}`}
            </span>
          </li>
        ))}
      </ul>
    </details>
  );
}

/** Runs the cell's settings on the server, which stores the run for the team. */
function ServerRunButton({
  derivationId,
  runJob,
  disabled,
  prepare,
  onStored,
  onFailed,
}: {
  derivationId: string;
  /** Queues the run and follows the job until it ends (useServerJob's `run`). */
  runJob: (path: string, body: unknown) => Promise<JobJson>;
  disabled: boolean;
  /** The request to send, or null when the settings are not valid (the cell says why). */
  prepare: () => RunRequest | null;
  onStored: (run: RunJson) => void;
  onFailed: (error: Error) => void;
}) {
  const queryClient = useQueryClient();
  const serverRun = useMutation({
    // A queue worker runs it; the page follows the job's progress and may cancel it.
    mutationFn: async (request: RunRequest) => {
      const job = await runJob(`/api/derivations/${derivationId}/runs`, request);
      return apiFetch<{ run: RunJson }>(`/api/derivations/${derivationId}/runs/${String(job.result?.runId)}`);
    },
    onSuccess: async ({ run }) => {
      onStored(run);
      await queryClient.invalidateQueries({ queryKey: storedRunsKey(derivationId) });
    },
    onError: onFailed,
  });
  return (
    <button
      type="button"
      className="rounded border border-action px-3 py-1 text-sm text-action hover:bg-action-soft disabled:opacity-50"
      disabled={serverRun.isPending || disabled}
      onClick={() => {
        const request = prepare();
        if (request) serverRun.mutate(request);
      }}
    >
      {serverRun.isPending ? "Running on server…" : "Run on server and save"}
    </button>
  );
}
