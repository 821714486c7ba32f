"use client";

/**
 * What a study found: the worst case of each watched name (one click from
 * opening that run), how much each parameter moves each peak, the envelope
 * plots, every run in a sortable table, and the CSV download.
 */
import { Fragment, lazy, Suspense } from "react";
import { safetyNote } from "@/lib/domain";
import { formatParameters, formatStudyNumber } from "./format";
import { RunsTable } from "./runs-table";
import type { StudyView } from "./types";
import { studyPath } from "./use-study";

const EnvelopeCharts = lazy(() => import("./envelope-charts"));

export interface StudyResultsProps {
  derivationId: string;
  study: StudyView;
  /** Opens one run as an ordinary server run; absent when this person may not run simulations. */
  onOpenRun?: (index: number) => void;
  /** The run being opened, while its job runs. */
  opening?: number | null;
}

export function StudyResults({ derivationId, study, onOpenRun, opening = null }: StudyResultsProps) {
  const finished = study.runs.some((run) => run.status !== "pending");
  return (
    <section className="flex min-w-0 flex-col gap-4" aria-label="Study results" data-testid="study-results">
      <WorstCases study={study} onOpenRun={onOpenRun} opening={opening} />
      <Sensitivity study={study} />
      {study.envelope && (
        <Suspense fallback={<p className="text-sm text-muted">Loading charts…</p>}>
          <EnvelopeCharts study={study} />
        </Suspense>
      )}
      {study.runs.length > 0 && (
        <div className="flex min-w-0 flex-col gap-1">
          <div className="flex flex-wrap items-baseline gap-x-3">
            <h4 className="text-[13px] font-medium">Runs</h4>
            {finished && (
              <a className="text-sm text-action hover:underline" href={`${studyPath(derivationId, study.id)}/csv`} download data-testid="study-csv">
                Download CSV
              </a>
            )}
          </div>
          <RunsTable study={study} onOpen={onOpenRun} canOpen={Boolean(onOpenRun)} opening={opening} />
        </div>
      )}
    </section>
  );
}

function WorstCases({ study, onOpenRun, opening }: { study: StudyView; onOpenRun?: (index: number) => void; opening: number | null }) {
  const rows = study.watch.filter((w) => study.worst[w.name]);
  if (rows.length === 0) return null;
  return (
    <div className="flex min-w-0 flex-col gap-1">
      <h4 className="text-[13px] font-medium">Worst case of each watched name</h4>
      <div className="relative overflow-x-auto" tabIndex={0} role="region" aria-label="Worst cases (scrolls sideways)">
        <table className="w-full min-w-[26rem] text-sm tabular-nums" data-testid="study-worst-table">
          <thead>
            <tr className="border-b border-line text-left text-muted">
              <th scope="col" className="py-1 pr-3 font-normal">
                Watched
              </th>
              <th scope="col" className="py-1 pr-3 text-right font-normal">
                Peak
              </th>
              <th scope="col" className="whitespace-nowrap py-1 pr-3 text-right font-normal">
                At t (s)
              </th>
              <th scope="col" className="py-1 pr-3 font-normal">
                Case and parameters
              </th>
              <th scope="col" className="py-1 font-normal">
                <span className="sr-only">Open</span>
              </th>
            </tr>
          </thead>
          <tbody>
            {rows.map((w) => {
              const worst = study.worst[w.name]!;
              return (
                <tr key={w.name} className="border-b border-line/60" data-testid="study-worst-row">
                  <td className="py-1 pr-3">
                    <span className="font-mono">{w.name}</span>
                    {w.kind !== "output" && <span className="text-muted"> {w.kind}</span>}
                  </td>
                  <td className="whitespace-nowrap py-1 pr-3 text-right font-mono">
                    {formatStudyNumber(worst.value)}
                    {w.unit ? <span className="font-sans text-muted"> {w.unit}</span> : null}
                  </td>
                  <td className="whitespace-nowrap py-1 pr-3 text-right font-mono">{formatStudyNumber(worst.time)}</td>
                  <td className="py-1 pr-3">
                    run {worst.runIndex}, {worst.caseName}
                    {Object.keys(worst.parameters).length > 0 && (
                      <span className="font-mono text-muted">
                        : {/* Each "name = value" stays on one line; the list wraps between them. */}
                        {formatParameters(worst.parameters, study.parameterNames)
                          .split(", ")
                          .map((part, i) => (
                            <Fragment key={part}>
                              {i > 0 && ", "}
                              <span className="whitespace-nowrap">{part}</span>
                            </Fragment>
                          ))}
                      </span>
                    )}
                  </td>
                  <td className="py-1">
                    {onOpenRun && (
                      <button
                        type="button"
                        className="whitespace-nowrap rounded border border-action px-2 py-0.5 text-action hover:bg-action-soft disabled:opacity-50"
                        disabled={opening !== null}
                        onClick={() => onOpenRun(worst.runIndex)}
                        aria-label={`Open the worst run of ${w.name} (run ${worst.runIndex})`}
                      >
                        {opening === worst.runIndex ? "Opening…" : "Open run"}
                      </button>
                    )}
                  </td>
                </tr>
              );
            })}
          </tbody>
        </table>
      </div>
      <p className="text-xs text-muted" data-testid="study-load-caution">
        Peaks are read at the output points of each run: a finer output step can find a higher one. They are loads of the model as written, across the cases and
        parameter values of this study only, without dynamic, fatigue or safety factors. {safetyNote}
      </p>
    </div>
  );
}

function Sensitivity({ study }: { study: StudyView }) {
  const rows = study.watch.filter((w) => study.sensitivity[w.name]);
  if (rows.length === 0 || study.parameterNames.length === 0) return null;
  const methods = new Set(rows.map((w) => study.sensitivity[w.name]!.method));
  return (
    <div className="flex min-w-0 flex-col gap-1">
      <h4 className="text-[13px] font-medium">Sensitivity of each peak</h4>
      <p className="text-xs text-muted">
        {methods.has("regression") ? "Linear regression over the sampled runs" : "Finite differences on the grid"}: normalized effect of each parameter on the
        peak&apos;s magnitude (slope × parameter spread ÷ peak spread; bars show its size, sign in the number). The slope is given beside it; a parameter
        without one (a single value, too few runs) shows a dash.
      </p>
      <div className="relative overflow-x-auto" tabIndex={0} role="region" aria-label="Sensitivity (scrolls sideways)">
        <table className="w-full min-w-[22rem] text-sm tabular-nums" data-testid="study-sensitivity-table">
          <thead>
            <tr className="border-b border-line text-left text-muted">
              <th scope="col" className="py-1 pr-3 font-normal">
                Peak of
              </th>
              {study.parameterNames.map((name) => (
                <th key={name} scope="col" className="py-1 pr-3 font-mono font-normal">
                  {name}
                </th>
              ))}
            </tr>
          </thead>
          <tbody>
            {rows.map((w) => {
              const entry = study.sensitivity[w.name]!;
              return (
                <tr key={w.name} className="border-b border-line/60" data-testid="study-sensitivity-row">
                  <th scope="row" className="py-1 pr-3 text-left font-mono font-normal">
                    {w.name}
                  </th>
                  {study.parameterNames.map((name) => {
                    const s = entry.byParameter[name];
                    if (!s)
                      return (
                        <td key={name} className="py-1 pr-3 text-muted">
                          —
                        </td>
                      );
                    const size = Math.min(1, Math.abs(s.normalized));
                    return (
                      <td key={name} className="py-1 pr-3 align-top">
                        <div className="flex min-w-[7rem] flex-col gap-0.5">
                          <span className="flex items-center gap-2">
                            <span className="font-mono">{formatStudyNumber(s.normalized, 2)}</span>
                            <span className="h-1.5 w-16 rounded-sm bg-sunken" aria-hidden="true">
                              <span
                                className={s.normalized < 0 ? "block h-full rounded-sm bg-[var(--series-2)]" : "block h-full rounded-sm bg-[var(--series-1)]"}
                                style={{ width: `${Math.round(size * 100)}%` }}
                              />
                            </span>
                          </span>
                          <span className="whitespace-nowrap text-xs text-muted">
                            slope {formatStudyNumber(s.slope, 3)}
                            {s.r2 !== null && `, r² ${formatStudyNumber(s.r2, 2)}`}
                          </span>
                        </div>
                      </td>
                    );
                  })}
                </tr>
              );
            })}
          </tbody>
        </table>
      </div>
    </div>
  );
}
