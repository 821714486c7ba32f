/**
 * The printable derivation report of one revision (server-rendered). Sections
 * follow the analyst's work: the model, the equations, what is conserved, the
 * linearization, the checks and stored runs, review and approval, the comment
 * threads (open and resolved, with their anchors), and the safety note.
 */
import type { ReactNode } from "react";
import { renderLatex } from "@/components/notebook/katex-render";
import { safetyNote } from "@/lib/domain";
import { formatRecordTime } from "@/lib/history/format";
import { revisionKindLabels, type ReportRun, type RevisionReport } from "@/lib/history/views";
import { symbolLatex, toLatex } from "@/lib/mechanics/browser";
import type { DerivationDocument, RowOf, TableCell, TableKind } from "@/lib/notebook/document";
import {
  checkLines,
  matrixLatex,
  modeCells,
  modeTableHead,
  otherRunsText,
  runOutcomeText,
  runSettingsText,
  stateLatex,
  studyFailedRunsNote,
  studyFailedRunsTable,
  studyNoteText,
  studyParameterTable,
  studySensitivityTable,
  studySummaryText,
  studyWorstTable,
} from "@/lib/reports/format";
import type { ReportThread } from "@/lib/reports/threads";
import { ReportNote } from "./report-client";
import { SeriesChart } from "./run-plot";

function Tex({ latex, display = false }: { latex: string; display?: boolean }) {
  const html = renderLatex(latex, display);
  return display ? <div className="hn-math-display" dangerouslySetInnerHTML={{ __html: html }} /> : <span dangerouslySetInnerHTML={{ __html: html }} />;
}

/** An expression the analyst typed, typeset; as text when it does not parse. */
function Expression({ text, display = false }: { text: string; display?: boolean }) {
  let latex: string | null;
  try {
    latex = toLatex(text);
  } catch {
    latex = null;
  }
  return latex === null ? <code className="font-mono text-sm">{text}</code> : <Tex latex={latex} display={display} />;
}

function Section({ number, title, children, id }: { number: number; title: string; children: ReactNode; id: string }) {
  return (
    <section className="hn-report-section space-y-3" aria-labelledby={id} data-testid={id}>
      <h2 id={id} className="border-b border-line pb-1 text-lg font-semibold">
        <span className="mr-2 font-mono text-muted">{number}</span> {title}
      </h2>
      {children}
    </section>
  );
}

function Table({ head, rows, label }: { head: string[]; rows: ReactNode[][]; label: string }) {
  return (
    <div className="hn-report-table overflow-x-auto">
      <table className="w-full border-collapse text-sm" aria-label={label}>
        <thead>
          <tr className="border-b border-line text-left text-xs text-muted">
            {head.map((cell) => (
              <th key={cell} scope="col" className="py-1 pr-3 font-medium">
                {cell}
              </th>
            ))}
          </tr>
        </thead>
        <tbody>
          {rows.map((row, index) => (
            <tr key={index} className="border-b border-line/60 align-top">
              {row.map((cell, k) => (
                <td key={k} className="py-1 pr-3">
                  {cell}
                </td>
              ))}
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}

function rowsOf<K extends TableKind>(document: DerivationDocument, kind: K): RowOf<K>[] {
  return document.cells.flatMap((cell) => (cell.kind === kind ? ((cell as TableCell).rows as RowOf<K>[]) : [])).filter((row) => row.name.trim() !== "");
}

function expressionOf(document: DerivationDocument, kind: "kinetic" | "potential" | "dissipation"): string {
  for (const cell of document.cells) if (cell.kind === kind) return cell.expr.trim();
  return "";
}

function ModelSection({ document }: { document: DerivationDocument }) {
  const coordinates = rowsOf(document, "coordinates");
  const parameters = rowsOf(document, "parameters");
  const inputs = rowsOf(document, "inputs");
  const definitions = rowsOf(document, "definitions");
  const forces = document.cells.flatMap((cell) => (cell.kind === "forces" ? cell.entries.filter((entry) => entry.expr.trim() !== "") : []));
  const notes = document.cells.flatMap((cell) => (cell.kind === "note" && cell.markdown.trim() ? [cell] : []));
  const energies = [
    { label: "Kinetic energy", symbol: "T", text: expressionOf(document, "kinetic") },
    { label: "Potential energy", symbol: "V", text: expressionOf(document, "potential") },
    { label: "Dissipation function", symbol: "D", text: expressionOf(document, "dissipation") },
  ].filter((entry) => entry.text !== "");
  return (
    <Section number={1} title="Model" id="report-model">
      {notes.length > 0 ? (
        <div className="space-y-2 text-sm">
          {notes.map((note) => (
            <ReportNote key={note.id} markdown={note.markdown} />
          ))}
        </div>
      ) : null}
      <h3 className="font-semibold">Generalized coordinates</h3>
      <Table
        label="Generalized coordinates"
        head={["Coordinate", "Unit", "Description"]}
        rows={coordinates.map((row) => [<Tex key="s" latex={symbolLatex(row.name)} />, row.unit, row.description])}
      />
      <h3 className="font-semibold">Parameters</h3>
      {parameters.length === 0 ? (
        <p className="text-sm text-muted">None.</p>
      ) : (
        <Table
          label="Parameters"
          head={["Parameter", "Value", "Unit", "Description"]}
          rows={parameters.map((row) => [
            <Tex key="s" latex={symbolLatex(row.name)} />,
            row.value.trim() || <span className="text-muted">symbolic</span>,
            row.unit,
            row.description,
          ])}
        />
      )}
      {inputs.length > 0 ? (
        <>
          <h3 className="font-semibold">Inputs</h3>
          <Table
            label="Inputs"
            head={["Input", "Unit", "Description"]}
            rows={inputs.map((row) => [<Tex key="s" latex={symbolLatex(row.name)} />, row.unit, row.description])}
          />
        </>
      ) : null}
      {definitions.length > 0 ? (
        <>
          <h3 className="font-semibold">Definitions</h3>
          <ul className="space-y-1">
            {definitions.map((row) => (
              <li key={row.id} className="flex flex-wrap items-baseline gap-x-2">
                <Tex latex={`${symbolLatex(row.name)} =`} /> <Expression text={row.expr} />
                {row.description ? <span className="text-xs text-muted">{row.description}</span> : null}
              </li>
            ))}
          </ul>
        </>
      ) : null}
      <h3 className="font-semibold">Energies and dissipation</h3>
      <ul className="space-y-1">
        {energies.map((entry) => (
          <li key={entry.symbol} className="flex flex-wrap items-baseline gap-x-2">
            <span className="w-44 shrink-0 text-sm text-muted">{entry.label}</span>
            <Tex latex={`${entry.symbol} =`} /> <Expression text={entry.text} />
          </li>
        ))}
      </ul>
      <h3 className="font-semibold">Generalized forces</h3>
      {forces.length === 0 ? (
        <p className="text-sm text-muted">None beyond the potential and the dissipation function.</p>
      ) : (
        <ul className="space-y-1">
          {forces.map((entry) => (
            <li key={entry.coordinate} className="flex flex-wrap items-baseline gap-x-2">
              <Tex latex={`Q_{${symbolLatex(entry.coordinate)}} =`} /> <Expression text={entry.expr} />
            </li>
          ))}
        </ul>
      )}
    </Section>
  );
}

function RunBlock({ run, index }: { run: ReportRun; index: number }) {
  return (
    <article className="hn-report-run space-y-2 rounded border border-line p-3" data-testid="report-run">
      <h3 className="font-semibold">
        Run {index + 1}
        {run.label ? `: ${run.label}` : ""}
        <span className="ml-2 text-sm font-normal text-muted">
          {run.createdByName ?? "a former member"}, {formatRecordTime(run.createdAt)}
        </span>
      </h3>
      <ul className="text-sm">
        {runSettingsText(run.settings).map((line) => (
          <li key={line}>{line}</li>
        ))}
        <li>{runOutcomeText(run)}</li>
      </ul>
      {run.trajectory ? (
        <div className="grid gap-2 md:grid-cols-2 print:grid-cols-2">
          {run.trajectory.coordinateNames.map((name, i) => (
            <SeriesChart
              key={name}
              times={run.trajectory!.times}
              values={run.trajectory!.coordinates[i] ?? []}
              label={name}
              unit={run.coordinateUnits[name] ?? ""}
            />
          ))}
        </div>
      ) : (
        <p className="text-sm text-muted">The trajectory of this run is not available.</p>
      )}
    </article>
  );
}

/** Each study cell's latest completed study: what varied, its worst cases, the sensitivity of each peak and the failed runs. */
function StudyBlock({ study }: { study: RevisionReport["studies"][number] }) {
  const sensitivity = studySensitivityTable(study);
  const failed = studyFailedRunsTable(study);
  const failedNote = studyFailedRunsNote(study);
  return (
    <div className="space-y-2" data-testid="report-study">
      <h3 className="font-semibold">{study.title}</h3>
      <p className="text-sm">{studySummaryText(study)}</p>
      {study.parameters.length > 0 ? <Table label={`Varied parameters of ${study.title}`} {...studyParameterTable(study)} /> : null}
      <h4 className="text-sm font-semibold">Worst cases</h4>
      {study.worst.length > 0 ? (
        <Table label={`Worst cases of ${study.title}`} {...studyWorstTable(study)} />
      ) : (
        <p className="text-sm text-muted">No run completed.</p>
      )}
      {sensitivity ? (
        <>
          <h4 className="text-sm font-semibold">Sensitivity</h4>
          <Table label={`Sensitivity of ${study.title}`} {...sensitivity} />
        </>
      ) : null}
      {failed ? (
        <>
          <h4 className="text-sm font-semibold">Failed runs</h4>
          <Table label={`Failed runs of ${study.title}`} {...failed} />
          {failedNote ? <p className="text-xs text-muted">{failedNote}</p> : null}
        </>
      ) : null}
      <p className="text-xs text-muted">{studyNoteText(study)}</p>
    </div>
  );
}

function ThreadBlock({ thread }: { thread: ReportThread }) {
  return (
    <article className="hn-report-thread space-y-1 rounded border border-line p-3 text-sm" data-testid="report-thread" data-status={thread.status}>
      <p>
        <strong>{thread.status === "open" ? "Open" : "Resolved"}</strong> — {thread.anchor.where}
        {thread.writtenOn ? <span className="text-muted"> (written on {thread.writtenOn})</span> : null}
      </p>
      {thread.anchor.kind === "text" ? (
        thread.anchor.quote ? (
          <blockquote className="border-l-2 border-line pl-2 font-mono text-xs whitespace-pre-wrap">{thread.anchor.quote}</blockquote>
        ) : null
      ) : (
        <p>On the term {thread.anchor.termLatex ? <Tex latex={thread.anchor.termLatex} /> : <code className="font-mono">{thread.anchor.termText}</code>}</p>
      )}
      <ul className="space-y-1">
        {thread.comments.map((comment, index) => (
          <li key={index}>
            <span className="text-muted">
              {comment.authorName}, {formatRecordTime(comment.createdAt)}
              {comment.edited ? " (edited)" : ""}:
            </span>{" "}
            {comment.deleted ? <em className="text-muted">comment deleted</em> : <span className="whitespace-pre-wrap">{comment.body}</span>}
          </li>
        ))}
      </ul>
      {thread.resolved ? (
        <p className="text-xs text-muted">
          Resolved by {thread.resolved.byName}, {formatRecordTime(thread.resolved.at)}.
        </p>
      ) : null}
    </article>
  );
}

export function ReportView({
  report,
  title,
  teamName,
  generatedAt,
  threads,
}: {
  report: RevisionReport;
  title: string;
  teamName: string;
  generatedAt: string;
  /** The derivation's comment threads as they stand now; null when the reader may not read comments. */
  threads: ReportThread[] | null;
}) {
  const { revision, evaluation, document } = report;
  const result = evaluation.ok ? evaluation.result : null;
  const current = report.approvals.find((approval) => approval.unlockedAt === null);
  const selected = result?.linearization?.selected;
  const equilibrium = selected ? result?.linearization?.equilibria[selected.index] : undefined;

  return (
    <article className="hn-report space-y-8" data-testid="report">
      <header className="space-y-3 border-b-2 border-ink pb-4">
        <p className="text-xs tracking-wide text-muted uppercase">Derivation report · {teamName}</p>
        <h1 className="text-3xl font-semibold" data-testid="report-title">
          {revision.title || title}
        </h1>
        <dl className="grid gap-x-6 gap-y-1 text-sm sm:grid-cols-[auto_1fr]">
          <dt className="text-muted">Revision</dt>
          <dd data-testid="report-revision">
            {revision.number} — {revision.name ?? revisionKindLabels[revision.kind]}, {formatRecordTime(revision.createdAt)}
            {revision.authorNames.length > 0 ? `; changes by ${revision.authorNames.join(", ")}` : ""}
          </dd>
          <dt className="text-muted">Content hash</dt>
          <dd className="font-mono text-xs break-all" data-testid="report-hash">
            SHA-256 {revision.contentHash}
          </dd>
          <dt className="text-muted">Status</dt>
          <dd>
            {current ? (
              <span className="font-semibold text-seal">
                Approved by {current.approvedByName ?? "a former member"}, {formatRecordTime(current.approvedAt)}
              </span>
            ) : report.approvals.length > 0 ? (
              "Approved earlier, since unlocked (see section 7)"
            ) : (
              "Not approved"
            )}
          </dd>
          <dt className="text-muted">Printed from</dt>
          <dd>
            Holonomy, {formatRecordTime(generatedAt)}
            {evaluation.ok ? `; engine ${evaluation.engineVersion}` : ""}
          </dd>
        </dl>
        {report.changedSince ? (
          <p className="rounded border border-line bg-sunken px-3 py-1.5 text-sm" data-testid="report-changed-since">
            The derivation has changed since this revision. This report shows revision {revision.number} as it was saved.
          </p>
        ) : null}
      </header>

      <ModelSection document={document} />

      <Section number={2} title="Equations of motion" id="report-equations">
        {!result ? (
          <p className="text-sm text-danger" role="alert">
            The engine could not derive this revision: {evaluation.ok ? "" : evaluation.message}
          </p>
        ) : (
          <>
            <p className="text-sm text-muted">Euler–Lagrange equations, one per coordinate (residual form):</p>
            {result.equations.map((equation) => (
              <Tex key={equation.coordinate} latex={equation.latex} display />
            ))}
            <p className="text-sm text-muted">
              In mass-matrix form <Tex latex="M(q)\,\ddot q = f(q, \dot q, t, u)" />:
            </p>
            {result.massMatrixLatex ? <Tex latex={result.massMatrixLatex} display /> : null}
          </>
        )}
      </Section>

      <Section number={3} title="Conserved quantities" id="report-conserved">
        {!result ? (
          <p className="text-sm text-muted">Not available without the equations.</p>
        ) : (
          <>
            {result.energyLatex ? (
              <div>
                <p className="text-sm text-muted">Energy function:</p>
                <Tex latex={`h = ${result.energyLatex}`} display />
              </div>
            ) : null}
            {(result.conserved ?? []).length === 0 ? (
              <p className="text-sm">No quantity is conserved for this model as it stands.</p>
            ) : (
              <ul className="space-y-2">
                {(result.conserved ?? []).map((quantity) => (
                  <li key={quantity.name}>
                    <p className="text-sm font-medium">{quantity.name}</p>
                    <Tex latex={quantity.latex} display />
                    <p className="text-xs text-muted">{quantity.reason}</p>
                  </li>
                ))}
              </ul>
            )}
            {result.energyNotConserved ? <p className="text-sm">The energy function is not conserved: {result.energyNotConserved}</p> : null}
            {(result.cyclicMomenta ?? []).length > 0 ? (
              <div className="space-y-1">
                <p className="text-sm text-muted">Cyclic coordinates, their momenta and momentum balance:</p>
                {(result.cyclicMomenta ?? []).map((entry) => (
                  <div key={entry.coordinate}>
                    <Tex latex={entry.rateLatex} display />
                    <p className="text-xs text-muted">{entry.conserved ? "Conserved: nothing acts on it." : `Acted on by ${entry.actedOnBy.join(", ")}.`}</p>
                  </div>
                ))}
              </div>
            ) : null}
          </>
        )}
      </Section>

      <Section number={4} title="Linearization and natural frequencies" id="report-linearization">
        {!selected ? (
          <p className="text-sm">{result?.linearizationNote ?? "No linearization for this revision."}</p>
        ) : (
          <>
            <p className="text-sm" data-testid="report-stability">
              About {equilibrium?.label ?? `equilibrium ${selected.index + 1}`}: <strong>{selected.stability}</strong>. {selected.stabilityReason}
            </p>
            {selected.modes.length > 0 ? (
              <Table label="Modes" head={modeTableHead(selected)} rows={selected.modes.map(modeCells)} />
            ) : (
              <p className="text-sm">No mode about this equilibrium.</p>
            )}
            <Tex
              display
              latex={`\\dot{\\mathbf{x}} = A\\,\\mathbf{x} + B\\,\\mathbf{u},\\quad \\mathbf{x} = \\begin{bmatrix}${selected.stateNames.map(stateLatex).join(" \\\\ ")}\\end{bmatrix}`}
            />
            <Tex display latex={`A = ${matrixLatex(selected.A)}`} />
            {selected.inputNames.length > 0 ? <Tex display latex={`B = ${matrixLatex(selected.B)}`} /> : null}
          </>
        )}
      </Section>

      <Section number={5} title="Checks" id="report-checks">
        <ul className="space-y-1 text-sm" data-testid="report-checks">
          {checkLines(report).map((line) => (
            <li key={line}>{line}</li>
          ))}
        </ul>
      </Section>

      <Section number={6} title="Stored simulation runs" id="report-runs">
        {report.runs.length === 0 ? (
          <p className="text-sm text-muted">No stored run used this revision&apos;s model.</p>
        ) : (
          report.runs.map((run, index) => <RunBlock key={run.id} run={run} index={index} />)
        )}
        {otherRunsText(report.otherRuns) ? <p className="text-xs text-muted">{otherRunsText(report.otherRuns)}</p> : null}
        {report.studies.length > 0 ? (
          <div className="space-y-4" data-testid="report-studies">
            <h3 className="text-base font-semibold">Parameter studies</h3>
            {report.studies.map((study) => (
              <StudyBlock key={study.cellId} study={study} />
            ))}
          </div>
        ) : null}
      </Section>

      <Section number={7} title="Review and approval" id="report-approval">
        {report.review ? (
          <div className="space-y-1 text-sm" data-testid="report-review">
            <p>
              Review requested by {report.review.requestedByName ?? "a former member"}, {formatRecordTime(report.review.requestedAt)}.
            </p>
            <ul className="space-y-1">
              {report.review.reviewers.map((reviewer, index) => (
                <li key={index}>
                  {reviewer.reviewerName ?? "A former member"}:{" "}
                  {reviewer.decision === "signed_off" ? "signed off" : reviewer.decision === "changes_requested" ? "requested changes" : "no decision"}
                  {reviewer.decidedAt ? `, ${formatRecordTime(reviewer.decidedAt)}` : ""}
                  {reviewer.comment ? ` — “${reviewer.comment}”` : ""}
                </li>
              ))}
            </ul>
          </div>
        ) : null}
        {report.approvals.length === 0 ? (
          <div className="hn-report-approval rounded border border-line p-3 text-sm" data-testid="report-approval-block">
            <p className="font-semibold">Not approved.</p>
            <p className="text-muted">This revision has not been approved by a lead. Its equations are not released for use.</p>
          </div>
        ) : (
          report.approvals.map((approval) => (
            <div key={approval.id} className="hn-report-approval space-y-1 rounded border-2 border-seal p-3 text-sm" data-testid="report-approval-block">
              <p className="font-semibold text-seal">Approved</p>
              <dl className="grid gap-x-4 gap-y-0.5 sm:grid-cols-[auto_1fr]">
                <dt className="text-muted">Approved by</dt>
                <dd data-testid="report-approver">{approval.approvedByName ?? "a former member"}</dd>
                <dt className="text-muted">When</dt>
                <dd>{formatRecordTime(approval.approvedAt)}</dd>
                <dt className="text-muted">Revision</dt>
                <dd>
                  {revision.number}, content hash <span className="font-mono text-xs break-all">{approval.contentHash}</span>
                </dd>
                {approval.unlockedAt ? (
                  <>
                    <dt className="text-muted">Unlocked</dt>
                    <dd>
                      by {approval.unlockedByName ?? "a former member"}, {formatRecordTime(approval.unlockedAt)}: “{approval.unlockReason}”
                    </dd>
                  </>
                ) : null}
              </dl>
            </div>
          ))
        )}
      </Section>

      {threads ? (
        <Section number={8} title="Comment threads" id="report-threads">
          {threads.length === 0 ? (
            <p className="text-sm text-muted">No comment threads.</p>
          ) : (
            <>
              <p className="text-xs text-muted">
                {threads.filter((t) => t.status === "open").length} open, {threads.filter((t) => t.status === "resolved").length} resolved; threads belong to
                the derivation and are printed as they stand now.
              </p>
              {threads.map((thread) => (
                <ThreadBlock key={thread.id} thread={thread} />
              ))}
            </>
          )}
        </Section>
      ) : null}

      <aside
        className="hn-report-safety rounded border border-l-4 border-seal/60 border-l-seal bg-seal-soft p-3 text-sm"
        data-testid="report-safety-note"
        role="note"
      >
        <p className="font-semibold">Safety note</p>
        <p>{safetyNote}</p>
      </aside>
    </article>
  );
}
