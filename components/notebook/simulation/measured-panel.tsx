"use client";

/**
 * Measured data for the simulation cell: upload a CSV or a sketch image
 * through the files API (the server's line-numbered errors shown as given),
 * overlay a measured file on the charts, fit chosen parameters on the server
 * and write the fitted values back to the Parameters cell.
 */
import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { useMemo, useState } from "react";
import { apiFetch } from "@/lib/api/fetcher";
import type { FitRequestBody } from "@/app/api/derivations/[id]/fit/schema";
import { AppError } from "@/lib/errors";
import { documentSymbols, parseParameterValue, type DerivationDocument, type DocumentOperation } from "@/lib/notebook/document";
import { FileInput } from "@/components/ui/file-input";
import type { FileJson } from "@/lib/files/views";
import type { FitJson } from "@/lib/runs/views";
import { useUploadLimits } from "../upload-limits";
import type { MeasuredOverlay } from "./results-view";
import type { RunRequest } from "./settings";
import { ServerJobStatus, useServerJob } from "./use-server-job";

interface FitRow {
  chosen: boolean;
  initial: string;
  min: string;
  max: string;
}

export interface MeasuredPanelProps {
  derivationId: string;
  document: DerivationDocument;
  readOnly?: boolean;
  /** The cell's valid settings, used for inputs and tolerances of the fit (null while invalid). */
  settings: RunRequest | null;
  onOverlay: (overlay: MeasuredOverlay | null) => void;
  onOperation: (op: DocumentOperation) => void;
}

/** Uploads one file; errors come back as the server's AppError (message names the line). */
async function uploadFile(derivationId: string, file: File, kind: "measured_csv" | "image"): Promise<FileJson> {
  const form = new FormData();
  form.set("file", file);
  form.set("kind", kind);
  const { file: stored } = await apiFetch<{ file: FileJson }>(`/api/derivations/${derivationId}/files`, { method: "POST", body: form });
  return stored;
}

const noFiles: FileJson[] = [];

/** The most recently uploaded measured-data file. */
function newestMeasured(list: readonly FileJson[]): FileJson | undefined {
  return list.filter((f) => f.kind === "measured_csv").reduce<FileJson | undefined>((best, f) => (!best || f.createdAt > best.createdAt ? f : best), undefined);
}

function messageOf(error: unknown): string {
  if (error instanceof AppError) {
    const fieldMessages = Object.values(error.fieldErrors ?? {}).flat();
    return fieldMessages.length > 0 && !fieldMessages.includes(error.message) ? `${error.message} ${fieldMessages.join(" ")}` : error.message;
  }
  return error instanceof Error ? error.message : String(error);
}

/** The files attached to a derivation: the upload mutation refreshes this query. */
const derivationFilesKey = (derivationId: string) => ["derivations", derivationId, "files"] as const;

export function MeasuredPanel({ derivationId, document: doc, readOnly, settings, onOverlay, onOperation }: MeasuredPanelProps) {
  const queryClient = useQueryClient();
  const filesQuery = useQuery({
    queryKey: derivationFilesKey(derivationId),
    queryFn: ({ signal }) => apiFetch<{ files: FileJson[] }>(`/api/derivations/${derivationId}/files`, { signal }),
  });
  const files = filesQuery.data?.files ?? noFiles;
  const [uploadError, setUploadError] = useState<string | null>(null);
  // The measured file chosen: null until the reader chooses (the newest is preselected), "" for none. A choice
  // holds while its file exists.
  const [chosen, setChosen] = useState<string | null>(null);
  const newest = newestMeasured(files)?.id ?? "";
  const selected = chosen === "" || files.some((f) => f.id === chosen && f.kind === "measured_csv") ? (chosen ?? newest) : newest;
  const setSelected = setChosen;
  const [rows, setRows] = useState<Record<string, FitRow>>({});
  const [fit, setFit] = useState<FitJson | null>(null);
  const [fitError, setFitError] = useState<string | null>(null);
  const [applied, setApplied] = useState(false);
  const fitJob = useServerJob(derivationId);
  const parameters = useMemo(() => {
    const list: { name: string; value: string; cellId: string; rowId: string }[] = [];
    for (const cell of doc.cells)
      if (cell.kind === "parameters")
        for (const row of cell.rows) if (row.name.trim()) list.push({ name: row.name.trim(), value: row.value, cellId: cell.id, rowId: row.id });
    return list;
  }, [doc]);
  const symbols = useMemo(() => documentSymbols(doc), [doc]);
  const uploadLimits = useUploadLimits();

  const measuredFiles = files.filter((f) => f.kind === "measured_csv");
  const images = files.filter((f) => f.kind === "image");

  const uploading = useMutation({
    mutationFn: ({ file, kind }: { file: File; kind: "measured_csv" | "image" }) => uploadFile(derivationId, file, kind),
    onMutate: () => setUploadError(null),
    onSuccess: async (stored) => {
      if (stored.kind === "measured_csv") setSelected(stored.id);
      await queryClient.invalidateQueries({ queryKey: derivationFilesKey(derivationId) });
    },
    onError: (error) => setUploadError(messageOf(error)),
  });
  const upload = (file: File | undefined, kind: "measured_csv" | "image") => {
    if (file) uploading.mutate({ file, kind });
  };

  async function showOnCharts(fileId: string) {
    setUploadError(null);
    try {
      const response = await fetch(`/api/files/${fileId}`, { credentials: "same-origin" });
      if (!response.ok) throw new Error("The file could not be read.");
      const text = await response.text();
      // The parser (with unit conversion) loads only when asked for.
      const { parseMeasuredCsv } = await import("@/lib/simulate");
      const coordinates = doc.cells.flatMap((c) =>
        c.kind === "coordinates" ? c.rows.filter((r) => r.name.trim()).map((r) => ({ name: r.name.trim(), unit: r.unit.trim() })) : [],
      );
      const data = parseMeasuredCsv(text, { coordinates });
      onOverlay({ times: data.times, series: data.series.map((s) => ({ coordinate: s.coordinate, unit: s.targetUnit, measured: s.values })) });
    } catch (error) {
      setUploadError(messageOf(error));
    }
  }

  const fitting = useMutation({
    // A queue worker runs the fit; the page follows its progress and may cancel it.
    mutationFn: async (body: FitRequestBody) => (await fitJob.run(`/api/derivations/${derivationId}/fit`, body)).result as unknown as FitJson,
    onSuccess: (response) => {
      setFit(response);
      onOverlay(response.overlay);
    },
    onError: (error) => setFitError(messageOf(error)),
  });
  const busy = uploading.isPending
    ? uploading.variables.kind === "image"
      ? "Uploading image…"
      : "Uploading measured data…"
    : fitting.isPending
      ? "Fitting on the server…"
      : null;

  function runFit() {
    setFitError(null);
    setFit(null);
    setApplied(false);
    const chosen = Object.entries(rows).filter(([name, row]) => row.chosen && parameters.some((p) => p.name === name));
    if (!selected) return setFitError("Choose a measured file.");
    if (chosen.length === 0) return setFitError("Choose at least one parameter to fit.");
    const request = [];
    for (const [name, row] of chosen) {
      const initial = parseParameterValue(row.initial);
      const min = parseParameterValue(row.min);
      const max = parseParameterValue(row.max);
      if (initial === null || min === null || max === null) return setFitError(`The bounds of ${name} must be numbers.`);
      if (min !== undefined && max !== undefined && !(min < max)) return setFitError(`The minimum of ${name} must be below its maximum.`);
      request.push({ name, ...(initial !== undefined ? { initial } : {}), ...(min !== undefined ? { min } : {}), ...(max !== undefined ? { max } : {}) });
    }
    fitting.mutate({
      fileId: selected,
      parameters: request,
      ...(settings
        ? {
            settings: {
              relativeTolerance: settings.relativeTolerance,
              absoluteTolerance: settings.absoluteTolerance,
              inputs: settings.inputs,
              parameters: settings.parameters,
            },
          }
        : {}),
    });
  }

  function applyFit() {
    if (!fit) return;
    for (const fitted of fit.fit.parameters) {
      const row = parameters.find((p) => p.name === fitted.name);
      if (row) onOperation({ type: "updateRow", cellId: row.cellId, rowId: row.rowId, patch: { value: String(Number(fitted.value.toPrecision(8))) } });
    }
    setApplied(true);
  }

  return (
    <details className="min-w-0 rounded border border-line px-3 py-2" data-testid="measured-panel">
      <summary className="cursor-pointer text-sm font-medium">Measured data and fitting</summary>
      <div className="mt-2 flex min-w-0 flex-col gap-3 text-sm">
        {!readOnly && (
          <div className="flex flex-wrap gap-3">
            <FileInput
              inline
              label="Upload measured CSV"
              accept=".csv,text/csv"
              maxBytes={uploadLimits.csvBytes}
              hint="CSV"
              onFile={(file) => void upload(file ?? undefined, "measured_csv")}
              onRefused={setUploadError}
            />
            <FileInput
              inline
              label="Attach sketch image"
              accept="image/png,image/jpeg,image/webp"
              maxBytes={uploadLimits.imageBytes}
              hint="PNG, JPEG or WebP"
              onFile={(file) => void upload(file ?? undefined, "image")}
              onRefused={setUploadError}
            />
          </div>
        )}
        <p className="text-xs text-muted">
          CSV: a header row naming the time column and coordinates with units, e.g.{" "}
          <code className="font-mono">
            t [s], {symbols.coordinates[0] ?? "q"} [{"rad"}]
          </code>
          ; time strictly increasing.
        </p>
        {fitJob.job ? (
          <ServerJobStatus job={fitJob.job} what="Fit" onCancel={() => void fitJob.cancel().catch(() => undefined)} />
        ) : (
          busy && <p role="status">{busy}</p>
        )}
        {uploadError && (
          <p className="rounded border border-danger/60 bg-danger-soft px-3 py-1.5 text-danger" role="alert" data-testid="upload-error">
            {uploadError}
          </p>
        )}
        {images.length > 0 && (
          <div>
            <p className="text-xs uppercase tracking-wide text-muted">Images (paste the Markdown into a Note cell)</p>
            <ul className="flex flex-col gap-1">
              {images.map((image) => (
                <li key={image.id} className="flex min-w-0 flex-wrap items-center gap-2">
                  <span className="truncate">{image.originalName}</span>
                  <code className="select-all break-all font-mono text-xs">{`![${image.originalName.replace(/[[\]]/g, "")}](${image.url})`}</code>
                </li>
              ))}
            </ul>
          </div>
        )}
        {measuredFiles.length > 0 && (
          <div className="flex flex-col gap-2">
            <label className="flex flex-wrap items-center gap-2">
              <span>Measured file</span>
              <select
                className="max-w-full rounded border border-line bg-paper px-1 py-0.5"
                value={selected}
                aria-label="Measured file"
                data-testid="measured-file"
                onChange={(event) => setSelected(event.target.value)}
              >
                <option value="">—</option>
                {measuredFiles.map((f) => (
                  <option key={f.id} value={f.id}>
                    {f.originalName} ({f.summary ? `${f.summary.rowCount} rows, ${f.summary.columns.map((c) => c.coordinate).join(", ")}` : "measured"})
                  </option>
                ))}
              </select>
              <button
                type="button"
                className="text-action hover:underline disabled:opacity-40"
                disabled={!selected}
                onClick={() => void showOnCharts(selected)}
              >
                Show on charts
              </button>
              <button type="button" className="text-muted hover:underline" onClick={() => onOverlay(null)}>
                Hide
              </button>
            </label>
            <fieldset className="min-w-0">
              <legend className="text-xs uppercase tracking-wide text-muted">Fit parameters (least squares on the server)</legend>
              <div className="overflow-x-auto">
                <table className="text-[13px]">
                  <thead>
                    <tr className="text-left text-muted">
                      <th className="pr-2 font-normal">Fit</th>
                      <th className="pr-2 font-normal">Parameter</th>
                      <th className="pr-2 font-normal">Initial</th>
                      <th className="pr-2 font-normal">Min</th>
                      <th className="pr-2 font-normal">Max</th>
                    </tr>
                  </thead>
                  <tbody>
                    {parameters.map((p) => {
                      const row = rows[p.name] ?? { chosen: false, initial: "", min: "", max: "" };
                      const set = (patch: Partial<FitRow>) => setRows((all) => ({ ...all, [p.name]: { ...row, ...patch } }));
                      return (
                        <tr key={p.name}>
                          <td className="pr-2">
                            <input
                              type="checkbox"
                              checked={row.chosen}
                              aria-label={`Fit ${p.name}`}
                              onChange={(event) => set({ chosen: event.target.checked })}
                            />
                          </td>
                          <td className="pr-2 font-mono">{p.name}</td>
                          {(["initial", "min", "max"] as const).map((key) => (
                            <td key={key} className="pr-2">
                              <input
                                className="w-24 rounded border border-line bg-paper px-1 font-mono"
                                value={row[key]}
                                placeholder={key === "initial" ? p.value || "—" : ""}
                                aria-label={`${p.name} ${key}`}
                                onChange={(event) => set({ [key]: event.target.value })}
                              />
                            </td>
                          ))}
                        </tr>
                      );
                    })}
                  </tbody>
                </table>
              </div>
              <button
                type="button"
                className="mt-2 rounded border border-action px-3 py-1 text-action hover:bg-action-soft disabled:opacity-50"
                disabled={busy !== null}
                onClick={runFit}
              >
                Fit
              </button>
            </fieldset>
          </div>
        )}
        {fitError && (
          <p className="text-danger" role="alert">
            {fitError}
          </p>
        )}
        {fit && (
          <div className="flex min-w-0 flex-col gap-2" data-testid="fit-result">
            <p className={fit.fit.report.trustworthy ? "" : "rounded border border-seal/60 bg-seal-soft px-3 py-1.5"} data-testid="fit-outcome">
              {fit.fit.report.outcome}
            </p>
            <div className="overflow-x-auto">
              <table className="text-[13px]">
                <thead>
                  <tr className="text-left text-muted">
                    <th className="pr-3 font-normal">Parameter</th>
                    <th className="pr-3 font-normal">Fitted value</th>
                    <th className="pr-3 font-normal">Standard error</th>
                    <th className="pr-3 font-normal">Unit</th>
                  </tr>
                </thead>
                <tbody>
                  {fit.fit.parameters.map((p) => {
                    const undetermined = fit.fit.report.notIdentifiable.some((group) => group.parameters.includes(p.name));
                    return (
                      <tr key={p.name}>
                        <td className="pr-3 font-mono">{p.name}</td>
                        <td className="pr-3 font-mono">{Number(p.value.toPrecision(6))}</td>
                        <td className={undetermined ? "pr-3 text-danger" : "pr-3 font-mono"}>
                          {undetermined ? "not identifiable" : p.standardError === null ? "—" : `± ${Number(p.standardError.toPrecision(2))}`}
                        </td>
                        <td className="pr-3">{p.unit ?? ""}</td>
                      </tr>
                    );
                  })}
                </tbody>
              </table>
            </div>
            {fit.fit.report.notIdentifiable.length > 0 && (
              <ul className="flex flex-col gap-1.5" data-testid="fit-not-identifiable">
                {fit.fit.report.notIdentifiable.map((group) => (
                  <li key={group.parameters.join(",")} className="rounded border border-danger/40 px-3 py-1.5">
                    <p>
                      <span className="font-medium">Not identifiable: </span>
                      <span className="font-mono">{group.parameters.join(", ")}</span>. {group.why}
                    </p>
                    <p className="text-muted">
                      <span className="font-medium text-ink">Data that would identify {group.parameters.length > 1 ? "them" : "it"}: </span>
                      {group.remedy}
                    </p>
                  </li>
                ))}
              </ul>
            )}
            <p data-testid="fit-residual">
              Residual RMS (fitted − measured) over {fit.fit.observations.toLocaleString("en-GB")} readings:{" "}
              {fit.fit.report.residuals.map((r) => r.text).join("; ")}. <span className="text-muted">{fit.fit.report.standardErrorNote}</span>
            </p>
            {!readOnly && fit.fit.status !== "unchanged" && (
              <button
                type="button"
                className="self-start rounded bg-action px-3 py-1 text-action-ink hover:bg-action-strong"
                onClick={applyFit}
                disabled={applied}
              >
                {applied ? "Written to the Parameters cell" : "Write fitted values to the Parameters cell"}
              </button>
            )}
          </div>
        )}
      </div>
    </details>
  );
}
