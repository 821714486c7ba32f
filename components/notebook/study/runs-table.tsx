"use client";

/**
 * Every run of a study in one table: status and failure reason, the
 * parameter values, and the peak of each watched name. Any column sorts
 * (click its heading; again to reverse); the table scrolls sideways on a
 * narrow screen and shows the runs a page at a time.
 */
import clsx from "clsx";
import { Fragment, useMemo, useState, type ReactNode } from "react";
import { FAILURE_LABELS } from "../simulation/run-view";
import { formatStudyNumber } from "./format";
import type { StudyRun, StudyView } from "./types";

export type RunSortKey = { kind: "index" | "case" | "status" | "energyDrift" | "constraintResidual" } | { kind: "parameter" | "peak"; name: string };
export interface RunSort {
  key: RunSortKey;
  direction: "ascending" | "descending";
}

const PAGE = 200;
const STATUS_ORDER: Record<StudyRun["status"], number> = { failed: 0, done: 1, pending: 2 };

function sortValue(run: StudyRun, key: RunSortKey): number | string | null {
  switch (key.kind) {
    case "index":
      return run.index;
    case "case":
      return run.caseName;
    case "status":
      return STATUS_ORDER[run.status];
    case "energyDrift":
      return run.energyDrift;
    case "constraintResidual":
      return run.constraintResidual;
    case "parameter":
      return run.parameters[key.name] ?? null;
    case "peak":
      return run.peaks[key.name]?.peak ?? null;
  }
}

/** Runs in the chosen order; runs without a value (pending, failed before the peak) always come last. */
export function sortRuns(runs: readonly StudyRun[], sort: RunSort): StudyRun[] {
  const sign = sort.direction === "ascending" ? 1 : -1;
  return [...runs].sort((a, b) => {
    const x = sortValue(a, sort.key);
    const y = sortValue(b, sort.key);
    if (x === null || y === null) return x === y ? a.index - b.index : x === null ? 1 : -1;
    const order = typeof x === "string" || typeof y === "string" ? String(x).localeCompare(String(y)) : x - y;
    return order === 0 ? a.index - b.index : sign * order;
  });
}

function sameKey(a: RunSortKey, b: RunSortKey): boolean {
  return a.kind === b.kind && ("name" in a ? a.name : "") === ("name" in b ? b.name : "");
}

/** Reasons a study run may end with beyond the simulator's own. */
const STUDY_FAILURE_LABELS: Record<string, string> = {
  setup: "Refused at the start",
  memory: "Memory limit reached",
};

export function failureText(failure: StudyRun["failure"]): string {
  if (!failure) return "";
  const label = FAILURE_LABELS[failure.reason] ?? STUDY_FAILURE_LABELS[failure.reason] ?? failure.reason;
  return failure.message && failure.message !== label ? `${label}: ${failure.message}` : label;
}

export function RunsTable({
  study,
  onOpen,
  canOpen,
  opening = null,
}: {
  study: StudyView;
  onOpen?: (index: number) => void;
  canOpen: boolean;
  /** The run being opened; the others wait until it is shown. */
  opening?: number | null;
}) {
  const [sort, setSort] = useState<RunSort>({ key: { kind: "index" }, direction: "ascending" });
  const [shown, setShown] = useState(PAGE);
  const sorted = useMemo(() => sortRuns(study.runs, sort), [study.runs, sort]);
  const unitOf = (name: string) => study.watch.find((w) => w.name === name)?.unit ?? null;

  const heading = (key: RunSortKey, label: ReactNode, numeric = true) => {
    const active = sameKey(sort.key, key);
    return (
      <th scope="col" aria-sort={active ? sort.direction : "none"} className={clsx("whitespace-nowrap py-1 pr-3 font-normal", numeric && "text-right")}>
        <button
          type="button"
          className={clsx("inline-flex items-center gap-1 hover:text-action", active && "text-ink")}
          onClick={() => setSort(active ? { key, direction: sort.direction === "ascending" ? "descending" : "ascending" } : { key, direction: "ascending" })}
        >
          {label}
          <span aria-hidden="true" className="w-2">
            {active ? (sort.direction === "ascending" ? "▲" : "▼") : ""}
          </span>
        </button>
      </th>
    );
  };

  return (
    <div className="flex min-w-0 flex-col gap-1">
      <div className="relative overflow-x-auto" tabIndex={0} role="region" aria-label="Runs of the study (scrolls sideways)">
        <table className="w-full min-w-[28rem] text-sm tabular-nums" data-testid="study-runs-table">
          <caption className="sr-only">Runs of the study; column headings sort the table.</caption>
          <thead>
            <tr className="border-b border-line text-left text-muted">
              {heading({ kind: "index" }, "Run")}
              {heading({ kind: "case" }, "Case", false)}
              {heading({ kind: "status" }, "Status", false)}
              {study.parameterNames.map((name) => (
                <Fragment key={`p-${name}`}>{heading({ kind: "parameter", name }, <span className="font-mono">{name}</span>)}</Fragment>
              ))}
              {study.watch.map((w) => (
                <Fragment key={`w-${w.name}`}>
                  {heading(
                    { kind: "peak", name: w.name },
                    <>
                      peak <span className="font-mono">{w.name}</span>
                      {unitOf(w.name) ? ` (${unitOf(w.name)})` : ""}
                    </>,
                  )}
                </Fragment>
              ))}
              {heading({ kind: "energyDrift" }, "Energy drift")}
              {heading({ kind: "constraintResidual" }, "Residual")}
              {canOpen && onOpen ? (
                <th scope="col" className="py-1 font-normal">
                  <span className="sr-only">Open</span>
                </th>
              ) : null}
            </tr>
          </thead>
          <tbody>
            {sorted.slice(0, shown).map((run) => (
              <tr key={run.index} className={clsx("border-b border-line/60", run.status === "failed" && "bg-danger-soft/50")} data-testid="study-run-row">
                <td className="py-1 pr-3 text-right font-mono">{run.index}</td>
                <td className="whitespace-nowrap py-1 pr-3">{run.caseName}</td>
                <td className={clsx("py-1 pr-3", run.status === "failed" ? "text-danger" : run.status === "pending" && "text-muted")}>
                  {run.status === "failed" ? (
                    <span title={run.failure?.message}>Failed: {failureText(run.failure)}</span>
                  ) : run.status === "done" ? (
                    "Done"
                  ) : (
                    "Pending"
                  )}
                </td>
                {study.parameterNames.map((name) => (
                  <td key={name} className="whitespace-nowrap py-1 pr-3 text-right font-mono">
                    {formatStudyNumber(run.parameters[name])}
                  </td>
                ))}
                {study.watch.map((w) => {
                  const peak = run.peaks[w.name];
                  return (
                    <td
                      key={w.name}
                      className="whitespace-nowrap py-1 pr-3 text-right font-mono"
                      title={peak ? `at t = ${formatStudyNumber(peak.timeOfPeak)} s` : undefined}
                    >
                      {formatStudyNumber(peak?.peak)}
                    </td>
                  );
                })}
                <td className="whitespace-nowrap py-1 pr-3 text-right font-mono">{formatStudyNumber(run.energyDrift, 2)}</td>
                <td className="whitespace-nowrap py-1 pr-3 text-right font-mono">{formatStudyNumber(run.constraintResidual, 2)}</td>
                {canOpen && onOpen ? (
                  <td className="py-1">
                    {run.status !== "pending" && (
                      <button
                        type="button"
                        className="text-action hover:underline disabled:text-muted disabled:no-underline"
                        disabled={opening !== null}
                        onClick={() => onOpen(run.index)}
                        aria-label={`Open run ${run.index}`}
                      >
                        {opening === run.index ? "Opening…" : "Open"}
                      </button>
                    )}
                  </td>
                ) : null}
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      {sorted.length > shown && (
        <button type="button" className="self-start text-sm text-action hover:underline" onClick={() => setShown((n) => n + PAGE)}>
          Show {Math.min(PAGE, sorted.length - shown)} more of {sorted.length} runs
        </button>
      )}
    </div>
  );
}
