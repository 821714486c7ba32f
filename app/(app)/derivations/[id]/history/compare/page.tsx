import "katex/dist/katex.min.css";
import type { Metadata } from "next";
import Link from "next/link";
import { CurrentTeam } from "@/components/current-team";
import { Suspense } from "react";
import { ParameterDiffTable } from "@/components/history/parameter-diff-table";
import { TermDiffView } from "@/components/history/term-diff-view";
import { TextDiffView } from "@/components/history/text-diff-view";
import { buttonClass } from "@/components/ui/button";
import { inputClass } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { loadDerivationFor, orNotFound } from "@/lib/auth/access";
import { requirePageUser } from "@/lib/auth/session";
import type { CellChange } from "@/lib/history/document-diff";
import { formatRecordTime, shortHash } from "@/lib/history/format";
import {
  compareRevisionDocuments,
  compareRevisionEquations,
  revisionKindLabels,
  revisionPair,
  type RevisionEvaluator,
  type RevisionView,
} from "@/lib/history/views";
import { evaluationForRequest } from "@/lib/jobs/service";
import type { DerivationDocument } from "@/lib/notebook/document";

export const metadata: Metadata = { title: "Compare revisions" };

type SearchParams = Record<string, string | string[] | undefined>;

function revisionNumber(value: string | string[] | undefined): number | undefined {
  const text = Array.isArray(value) ? value[0] : value;
  if (!text || !/^\d{1,9}$/.test(text)) return undefined;
  return Number(text);
}

function RevisionCard({ revision, side }: { revision: RevisionView; side: "From" | "To" }) {
  return (
    <div className="min-w-0 flex-1 basis-64 rounded border border-line bg-surface px-3 py-2 text-sm" data-testid={`compare-${side.toLowerCase()}`}>
      <p className="text-xs text-muted">{side}</p>
      <p className="font-semibold">
        Revision {revision.number}
        <span className="font-normal text-muted"> · {revision.name ?? revisionKindLabels[revision.kind]}</span>
      </p>
      <p className="text-xs text-muted">
        {formatRecordTime(revision.createdAt)}
        {revision.authorNames.length > 0 ? ` · changes by ${revision.authorNames.join(", ")}` : ""} ·{" "}
        <code className="font-mono" title={revision.contentHash}>
          {shortHash(revision.contentHash)}
        </code>
      </p>
    </div>
  );
}

const cellStatusText: Record<CellChange["status"], string> = { added: "added", removed: "removed", changed: "changed", unchanged: "unchanged" };

function CellDiff({ cell }: { cell: CellChange }) {
  return (
    <section
      className="overflow-hidden rounded border border-line bg-surface"
      aria-label={`${cell.label}, ${cellStatusText[cell.status]}`}
      data-testid="cell-change"
      data-kind={cell.kind}
      data-status={cell.status}
    >
      <h3 className="flex flex-wrap items-baseline gap-x-2 border-b border-line px-3 py-1.5 text-sm font-semibold">
        {cell.label}
        <span
          className={
            cell.status === "added"
              ? "text-xs font-normal text-action"
              : cell.status === "removed"
                ? "text-xs font-normal text-danger"
                : "text-xs font-normal text-muted"
          }
        >
          {cell.status === "changed" ? `${cell.added} added, ${cell.removed} removed` : `cell ${cellStatusText[cell.status]}`}
        </span>
      </h3>
      <TextDiffView lines={cell.lines} label={`Changes in ${cell.label}`} />
    </section>
  );
}

async function EquationsSection({
  before,
  after,
  numbers,
  evaluate,
}: {
  before: DerivationDocument;
  after: DerivationDocument;
  numbers: { from: number; to: number };
  evaluate: RevisionEvaluator;
}) {
  const result = await compareRevisionEquations(before, after, numbers, evaluate);
  if (!result.ok) return <Notice tone="error">{result.message} The text and parameter changes above are still complete.</Notice>;
  return <TermDiffView equations={result.equations} />;
}

/** Two revisions side by side: cells as text diffs, parameters as a table, equations term by term. */
export default async function CompareRevisionsPage({ params, searchParams }: { params: Promise<{ id: string }>; searchParams: Promise<SearchParams> }) {
  const { id } = await params;
  const query = await searchParams;
  const user = await requirePageUser(`/derivations/${id}/history`);
  const { derivation } = await orNotFound(() => loadDerivationFor(user, id, "derivation:read"));
  const pair = await revisionPair(derivation, { from: revisionNumber(query.from), to: revisionNumber(query.to) });
  const historyHref = `/derivations/${derivation.id}/history`;

  if (!pair) {
    return (
      <div className="space-y-4">
        <Link href={historyHref} className="text-sm text-action hover:underline">
          ← History
        </Link>
        <h1 className="text-2xl font-semibold">Compare revisions</h1>
        <Notice tone="info">There is nothing to compare: choose two revisions that exist. A derivation needs at least two revisions.</Notice>
      </div>
    );
  }
  const { from, to, fromView, toView } = pair;
  const documents = compareRevisionDocuments(from, to);
  const loaded = documents.ok ? documents : null;
  const comparison = loaded?.comparison ?? null;
  const changedCells = comparison?.cells.filter((cell) => cell.status !== "unchanged" && cell.kind !== "parameters") ?? [];
  const unchangedCells = comparison?.cells.filter((cell) => cell.status === "unchanged" && cell.kind !== "parameters") ?? [];
  const parameterCounts = (["added", "removed", "changed"] as const)
    .map((status) => [status, comparison?.parameters.filter((change) => change.status === status).length ?? 0] as const)
    .filter(([, count]) => count > 0);
  const parameterSummary = parameterCounts.length > 0 ? `parameters: ${parameterCounts.map(([status, count]) => `${count} ${status}`).join(", ")}` : "";

  return (
    <div className="space-y-6" data-testid="compare-page">
      <CurrentTeam teamId={derivation.teamId} />
      <div className="space-y-1">
        <Link href={historyHref} className="text-sm text-action hover:underline">
          ← History
        </Link>
        <h1 className="text-2xl font-semibold">
          Revision {from.number} → revision {to.number}
        </h1>
        <p className="text-sm text-muted">{derivation.title}</p>
      </div>

      <div className="flex flex-wrap items-stretch gap-3">
        <RevisionCard revision={fromView} side="From" />
        <RevisionCard revision={toView} side="To" />
      </div>

      <form method="get" className="flex flex-wrap items-end gap-3 text-sm" aria-label="Compare other revisions">
        <label className="space-y-1">
          <span className="block font-medium">From</span>
          <select name="from" defaultValue={from.number} className={inputClass}>
            {pair.revisions.map((revision) => (
              <option key={revision.id} value={revision.number}>
                Revision {revision.number}
              </option>
            ))}
          </select>
        </label>
        <label className="space-y-1">
          <span className="block font-medium">To</span>
          <select name="to" defaultValue={to.number} className={inputClass}>
            {pair.revisions.map((revision) => (
              <option key={revision.id} value={revision.number}>
                Revision {revision.number}
              </option>
            ))}
          </select>
        </label>
        <button type="submit" className={buttonClass("secondary")}>
          Compare
        </button>
        <Link href={`?from=${to.number}&to=${from.number}`} className={buttonClass("ghost")}>
          Swap
        </Link>
      </form>

      {!documents.ok ? <Notice tone="error">{documents.message}</Notice> : null}

      {loaded && comparison ? (
        <>
          <p className="text-sm" data-testid="compare-summary">
            {comparison.sameText
              ? from.contentHash === to.contentHash
                ? "The two revisions hold the same content."
                : "The text is the same; only the layout differs (cells collapsed or moved)."
              : [
                  comparison.title.changed ? "title changed" : "",
                  changedCells.length ? `${changedCells.length} cell${changedCells.length === 1 ? "" : "s"} changed` : "",
                  parameterSummary,
                  comparison.moved ? "cells reordered" : "",
                ]
                  .filter(Boolean)
                  .join(" · ")
                  .replace(/^./, (letter) => letter.toUpperCase()) + "."}
          </p>

          <section className="space-y-3" aria-labelledby="cells-heading">
            <h2 id="cells-heading" className="text-lg font-semibold">
              Cells
            </h2>
            {comparison.title.changed ? (
              <div className="overflow-hidden rounded border border-line bg-surface" data-testid="title-change">
                <h3 className="border-b border-line px-3 py-1.5 text-sm font-semibold">Title</h3>
                <TextDiffView
                  lines={[
                    { kind: "removed", text: comparison.title.before },
                    { kind: "added", text: comparison.title.after },
                  ]}
                  label="Title change"
                />
              </div>
            ) : null}
            {changedCells.length === 0 ? <p className="text-sm text-muted">No cell changed apart from the parameters.</p> : null}
            {changedCells.map((cell) => (
              <CellDiff key={cell.id} cell={cell} />
            ))}
            {unchangedCells.length > 0 ? <p className="text-xs text-muted">Unchanged: {unchangedCells.map((cell) => cell.label).join(", ")}.</p> : null}
          </section>

          <section className="space-y-3" aria-labelledby="parameters-heading">
            <h2 id="parameters-heading" className="text-lg font-semibold">
              Parameters
            </h2>
            <ParameterDiffTable changes={comparison.parameters} />
          </section>

          <section className="space-y-3" aria-labelledby="equations-heading">
            <h2 id="equations-heading" className="text-lg font-semibold">
              Equations of motion, term by term
            </h2>
            <p className="text-xs text-muted">
              Terms are the engine&apos;s canonical terms of each residual. Terms multiplying the same coordinates, rates, accelerations and inputs count as one
              changed term when their coefficient or sign changed.
            </p>
            <Suspense
              fallback={
                <p className="text-sm text-muted" role="status">
                  Deriving both revisions…
                </p>
              }
            >
              <EquationsSection
                before={loaded.before}
                after={loaded.after}
                numbers={{ from: from.number, to: to.number }}
                // A large model is queued, not derived on the request; the section says so until it is done.
                evaluate={(document) => evaluationForRequest({ derivation, userId: user.id, document, wait: false })}
              />
            </Suspense>
          </section>
        </>
      ) : null}
    </div>
  );
}
