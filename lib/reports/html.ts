/**
 * The derivation report of one revision as one self-contained HTML file: the
 * same sections as the report page (components/report/report-view.tsx) and the
 * comment threads, with the mathematics as MathML (KaTeX's MathML output, which
 * browsers lay out without fonts or style sheets) and the run plots as inline
 * SVG, so the file opens anywhere, offline, and prints as it is. Written by a
 * queue worker (a `report` job); pure: data in, text out, every piece of text
 * escaped.
 */
import katex from "katex";
import { safetyNote } from "@/lib/domain";
import { formatRecordTime } from "@/lib/history/format";
import type { ReportRun, ReportStudy, RevisionReport } from "@/lib/history/views";
import { symbolLatex, toLatex } from "@/lib/mechanics/browser";
import type { DerivationDocument, RowOf, TableCell, TableKind } from "@/lib/notebook/document";
import {
  CHART,
  checkLines,
  matrixLatex,
  modeCells,
  modeTableHead,
  otherRunsText,
  runOutcomeText,
  runSettingsText,
  seriesChartGeometry,
  stateLatex,
  studyFailedRunsNote,
  studyFailedRunsTable,
  studyNoteText,
  studyParameterTable,
  studySensitivityTable,
  studySummaryText,
  studyWorstTable,
  type TextTable,
} from "./format";
import type { ReportThread } from "./threads";

export interface ReportFileInput {
  report: RevisionReport;
  title: string;
  teamName: string;
  generatedAt: string;
  threads: ReportThread[] | null;
  /** The revision's name, or its kind in words (lib/history/views.ts's revisionKindLabels). */
  revisionLabel: string;
}

const ESCAPES: Record<string, string> = { "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "'": "&#39;" };

/** Text for HTML content or a quoted attribute. */
export function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => ESCAPES[c]!);
}

/** LaTeX as MathML; a LaTeX error comes out as the escaped source, never a throw. Nothing is trusted (no \href, no \htmlData). */
export function mathml(latex: string, display = false): string {
  return katex.renderToString(latex, {
    displayMode: display,
    throwOnError: false,
    output: "mathml",
    trust: false,
    strict: "ignore",
    maxSize: 20,
    maxExpand: 100_000,
  });
}

function tex(latex: string, display = false): string {
  return display ? `<div class="math">${mathml(latex, true)}</div>` : mathml(latex);
}

function expression(text: string): string {
  try {
    return tex(toLatex(text));
  } catch {
    return `<code>${escapeHtml(text)}</code>`;
  }
}

function section(number: number, title: string, id: string, body: string): string {
  return `<section id="${id}"><h2><span class="num">${number}</span> ${escapeHtml(title)}</h2>${body}</section>`;
}

/** A table; `rows` cells are HTML already. */
function table(label: string, head: string[], rows: string[][]): string {
  const th = head.map((cell) => `<th scope="col">${escapeHtml(cell)}</th>`).join("");
  const tr = rows.map((row) => `<tr>${row.map((cell) => `<td>${cell}</td>`).join("")}</tr>`).join("");
  return `<div class="table"><table aria-label="${escapeHtml(label)}"><thead><tr>${th}</tr></thead><tbody>${tr}</tbody></table></div>`;
}

/** A table of plain text, every cell escaped. */
function textTable(label: string, { head, rows }: TextTable): string {
  return table(
    label,
    head,
    rows.map((row) => row.map(escapeHtml)),
  );
}

const muted = (text: string) => `<p class="muted">${escapeHtml(text)}</p>`;

function rowsOf<K extends TableKind>(document: DerivationDocument, kind: K): RowOf<K>[] {
  return document.cells.flatMap((cell) => (cell.kind === kind ? ((cell as TableCell).rows as RowOf<K>[]) : [])).filter((row) => row.name.trim() !== "");
}

function expressionOf(document: DerivationDocument, kind: "kinetic" | "potential" | "dissipation"): string {
  for (const cell of document.cells) if (cell.kind === kind) return cell.expr.trim();
  return "";
}

function modelSection(document: DerivationDocument): string {
  const parts: string[] = [];
  for (const cell of document.cells) {
    // Notes as their Markdown source: the file carries no script to render and sanitize it.
    if (cell.kind === "note" && cell.markdown.trim()) parts.push(`<div class="note">${escapeHtml(cell.markdown)}</div>`);
  }
  const symbol = (name: string) => tex(symbolLatex(name));
  parts.push("<h3>Generalized coordinates</h3>");
  parts.push(
    table(
      "Generalized coordinates",
      ["Coordinate", "Unit", "Description"],
      rowsOf(document, "coordinates").map((row) => [symbol(row.name), escapeHtml(row.unit), escapeHtml(row.description)]),
    ),
  );
  parts.push("<h3>Parameters</h3>");
  const parameters = rowsOf(document, "parameters");
  parts.push(
    parameters.length === 0
      ? muted("None.")
      : table(
          "Parameters",
          ["Parameter", "Value", "Unit", "Description"],
          parameters.map((row) => [
            symbol(row.name),
            row.value.trim() ? escapeHtml(row.value.trim()) : `<span class="muted">symbolic</span>`,
            escapeHtml(row.unit),
            escapeHtml(row.description),
          ]),
        ),
  );
  const inputs = rowsOf(document, "inputs");
  if (inputs.length > 0) {
    parts.push(
      "<h3>Inputs</h3>",
      table(
        "Inputs",
        ["Input", "Unit", "Description"],
        inputs.map((row) => [symbol(row.name), escapeHtml(row.unit), escapeHtml(row.description)]),
      ),
    );
  }
  const definitions = rowsOf(document, "definitions");
  if (definitions.length > 0) {
    const items = definitions.map(
      (row) =>
        `<li>${tex(`${symbolLatex(row.name)} =`)} ${expression(row.expr)}${row.description ? ` <span class="muted">${escapeHtml(row.description)}</span>` : ""}</li>`,
    );
    parts.push(`<h3>Definitions</h3><ul>${items.join("")}</ul>`);
  }
  const energies = [
    { label: "Kinetic energy", symbol: "T", text: expressionOf(document, "kinetic") },
    { label: "Potential energy", symbol: "V", text: expressionOf(document, "potential") },
    { label: "Dissipation function", symbol: "D", text: expressionOf(document, "dissipation") },
  ].filter((entry) => entry.text !== "");
  parts.push(
    `<h3>Energies and dissipation</h3><ul>${energies.map((e) => `<li><span class="label">${e.label}</span> ${tex(`${e.symbol} =`)} ${expression(e.text)}</li>`).join("")}</ul>`,
  );
  const forces = document.cells.flatMap((cell) => (cell.kind === "forces" ? cell.entries.filter((entry) => entry.expr.trim() !== "") : []));
  parts.push("<h3>Generalized forces</h3>");
  parts.push(
    forces.length === 0
      ? muted("None beyond the potential and the dissipation function.")
      : `<ul>${forces.map((entry) => `<li>${tex(`Q_{${symbolLatex(entry.coordinate)}} =`)} ${expression(entry.expr)}</li>`).join("")}</ul>`,
  );
  return section(1, "Model", "report-model", parts.join(""));
}

/** One coordinate of a run against time, as inline SVG. */
export function seriesSvg(times: readonly number[], values: readonly number[], label: string, unit: string): string {
  const chart = seriesChartGeometry(times, values);
  if (!chart) return muted(`No finite values of ${label} to plot.`);
  const { width, height, margin } = CHART;
  const grid = [
    ...chart.yTicks.map((t) => `<line x1="${margin.left}" x2="${width - margin.right}" y1="${t.at}" y2="${t.at}"/>`),
    ...chart.xTicks.map((t) => `<line x1="${t.at}" x2="${t.at}" y1="${margin.top}" y2="${height - margin.bottom}"/>`),
  ].join("");
  const labels = [
    ...chart.yTicks.map((t) => `<text x="${margin.left - 5}" y="${t.at + 3}" text-anchor="end">${escapeHtml(t.label)}</text>`),
    ...chart.xTicks.map((t) => `<text x="${t.at}" y="${height - margin.bottom + 13}" text-anchor="middle">${escapeHtml(t.label)}</text>`),
    `<text x="${width - margin.right}" y="${height - 2}" text-anchor="end">t [s]</text>`,
  ].join("");
  const units = escapeHtml(unit || "1");
  return (
    `<figure><svg viewBox="0 0 ${width} ${height}" role="img" aria-label="${escapeHtml(label)} in ${units} against time in s">` +
    `<g stroke="#d0d4da" stroke-width="0.6">${grid}</g>` +
    `<rect x="${chart.plot.x}" y="${chart.plot.y}" width="${chart.plot.width}" height="${chart.plot.height}" fill="none" stroke="#6b7280" stroke-width="0.8"/>` +
    `<g fill="#6b7280" font-size="10" font-family="monospace">${labels}</g>` +
    `<path d="${chart.path}" fill="none" stroke="#1d4ed8" stroke-width="1.4" stroke-linejoin="round"/>` +
    `</svg><figcaption><code>${escapeHtml(label)}</code> [${units}]</figcaption></figure>`
  );
}

function runBlock(run: ReportRun, index: number): string {
  const by = `${escapeHtml(run.createdByName ?? "a former member")}, ${escapeHtml(formatRecordTime(run.createdAt))}`;
  const lines = [...runSettingsText(run.settings), runOutcomeText(run)].map((line) => `<li>${escapeHtml(line)}</li>`).join("");
  const plots = run.trajectory
    ? `<div class="plots">${run.trajectory.coordinateNames
        .map((name, i) => seriesSvg(run.trajectory!.times, run.trajectory!.coordinates[i] ?? [], name, run.coordinateUnits[name] ?? ""))
        .join("")}</div>`
    : muted("The trajectory of this run is not available.");
  return `<article class="box"><h3>Run ${index + 1}${run.label ? `: ${escapeHtml(run.label)}` : ""} <span class="muted">${by}</span></h3><ul>${lines}</ul>${plots}</article>`;
}

/** A study cell's latest completed study: what varied, worst cases, sensitivity and the failed runs. */
function studyBlock(study: ReportStudy): string {
  const sensitivity = studySensitivityTable(study);
  const failed = studyFailedRunsTable(study);
  const failedNote = studyFailedRunsNote(study);
  return (
    `<article class="box study"><h3>${escapeHtml(study.title)}</h3><p>${escapeHtml(studySummaryText(study))}</p>` +
    (study.parameters.length > 0 ? textTable(`Varied parameters of ${study.title}`, studyParameterTable(study)) : "") +
    `<h4>Worst cases</h4>` +
    (study.worst.length > 0 ? textTable(`Worst cases of ${study.title}`, studyWorstTable(study)) : muted("No run completed.")) +
    (sensitivity ? `<h4>Sensitivity</h4>${textTable(`Sensitivity of ${study.title}`, sensitivity)}` : "") +
    (failed ? `<h4>Failed runs</h4>${textTable(`Failed runs of ${study.title}`, failed)}${failedNote ? muted(failedNote) : ""}` : "") +
    muted(studyNoteText(study)) +
    `</article>`
  );
}

function threadBlock(thread: ReportThread): string {
  const head = `<p><strong>${thread.status === "open" ? "Open" : "Resolved"}</strong> — ${escapeHtml(thread.anchor.where)}${
    thread.writtenOn ? ` <span class="muted">(written on ${escapeHtml(thread.writtenOn)})</span>` : ""
  }</p>`;
  const anchor =
    thread.anchor.kind === "text"
      ? thread.anchor.quote
        ? `<blockquote>${escapeHtml(thread.anchor.quote)}</blockquote>`
        : ""
      : `<p>On the term ${thread.anchor.termLatex ? tex(thread.anchor.termLatex) : `<code>${escapeHtml(thread.anchor.termText)}</code>`}</p>`;
  const comments = thread.comments
    .map(
      (c) =>
        `<li><span class="muted">${escapeHtml(c.authorName)}, ${escapeHtml(formatRecordTime(c.createdAt))}${c.edited ? " (edited)" : ""}:</span> ${
          c.deleted ? `<em class="muted">comment deleted</em>` : `<span class="pre">${escapeHtml(c.body)}</span>`
        }</li>`,
    )
    .join("");
  const resolved = thread.resolved ? muted(`Resolved by ${thread.resolved.byName}, ${formatRecordTime(thread.resolved.at)}.`) : "";
  return `<article class="box thread" data-status="${thread.status}">${head}${anchor}<ul>${comments}</ul>${resolved}</article>`;
}

const STYLE = `
body{font:15px/1.5 system-ui,sans-serif;color:#1f2328;max-width:52rem;margin:2rem auto;padding:0 1rem}
header{border-bottom:2px solid #1f2328;padding-bottom:1rem}
h1{font-size:1.8rem;margin:.2rem 0}h2{font-size:1.15rem;border-bottom:1px solid #d0d4da;padding-bottom:.2rem;margin-top:2rem}
h3{font-size:1rem}h4{font-size:.9rem;margin:.8rem 0 .2rem}.num{font-family:monospace;color:#6b7280;margin-right:.4rem}
.muted,.label{color:#6b7280;font-size:.85rem}.label{display:inline-block;width:11rem}
.table{overflow-x:auto}table{border-collapse:collapse;width:100%;font-size:.9rem}th{text-align:left;color:#6b7280;font-weight:500;font-size:.8rem}
th,td{border-bottom:1px solid #e5e7eb;padding:.2rem .6rem .2rem 0;vertical-align:top}
dl{display:grid;grid-template-columns:auto 1fr;gap:.1rem 1.2rem;font-size:.9rem}dt{color:#6b7280}dd{margin:0}
.math{overflow-x:auto;margin:.5rem 0}.hash{font-family:monospace;font-size:.8rem;word-break:break-all}
.box{border:1px solid #d0d4da;border-radius:4px;padding:.6rem .8rem;margin:.6rem 0}
.approved{border:2px solid #166534}.seal{color:#166534;font-weight:600}
.plots{display:grid;grid-template-columns:1fr 1fr;gap:.5rem}figure{margin:0}svg{width:100%;height:auto}
blockquote{border-left:2px solid #d0d4da;margin:.3rem 0;padding-left:.5rem;font-family:monospace;font-size:.85rem;white-space:pre-wrap}
.note,.pre{white-space:pre-wrap}.note{font-size:.9rem;margin:.4rem 0}
.safety{border:1px solid #d6c07a;border-left:4px solid #a16207;background:#fefce8;padding:.6rem .8rem;margin-top:2rem}
.alert{color:#b3261e}
@media print{body{margin:0;max-width:none}.box{break-inside:avoid}}
`;

/** The whole report file. */
export function reportHtml({ report, title, teamName, generatedAt, threads, revisionLabel }: ReportFileInput): string {
  const { revision, evaluation, document } = report;
  const result = evaluation.ok ? evaluation.result : null;
  const current = report.approvals.find((approval) => approval.unlockedAt === null);
  const selected = result?.linearization?.selected;
  const equilibrium = selected ? result?.linearization?.equilibria[selected.index] : undefined;
  const heading = revision.title || title;
  const status = current
    ? `<span class="seal">Approved by ${escapeHtml(current.approvedByName ?? "a former member")}, ${escapeHtml(formatRecordTime(current.approvedAt))}</span>`
    : report.approvals.length > 0
      ? "Approved earlier, since unlocked (see section 7)"
      : "Not approved";

  const header =
    `<header><p class="muted">DERIVATION REPORT · ${escapeHtml(teamName)}</p><h1>${escapeHtml(heading)}</h1><dl>` +
    `<dt>Revision</dt><dd>${revision.number} — ${escapeHtml(revisionLabel)}, ${escapeHtml(formatRecordTime(revision.createdAt))}${
      revision.authorNames.length > 0 ? `; changes by ${escapeHtml(revision.authorNames.join(", "))}` : ""
    }</dd>` +
    `<dt>Content hash</dt><dd class="hash">SHA-256 ${escapeHtml(revision.contentHash)}</dd>` +
    `<dt>Status</dt><dd>${status}</dd>` +
    `<dt>Rendered by</dt><dd>Holonomy, ${escapeHtml(formatRecordTime(generatedAt))}${evaluation.ok ? `; engine ${escapeHtml(evaluation.engineVersion)}` : ""}</dd></dl>` +
    (report.changedSince
      ? `<p class="box">The derivation has changed since this revision. This report shows revision ${revision.number} as it was saved.</p>`
      : "") +
    `</header>`;

  const equations = !result
    ? `<p class="alert">The engine could not derive this revision: ${escapeHtml(evaluation.ok ? "" : evaluation.message)}</p>`
    : muted("Euler–Lagrange equations, one per coordinate (residual form):") +
      result.equations.map((equation) => tex(equation.latex, true)).join("") +
      `<p class="muted">In mass-matrix form ${tex("M(q)\\,\\ddot q = f(q, \\dot q, t, u)")}:</p>` +
      (result.massMatrixLatex ? tex(result.massMatrixLatex, true) : "");

  const conserved = !result
    ? muted("Not available without the equations.")
    : (result.energyLatex ? muted("Energy function:") + tex(`h = ${result.energyLatex}`, true) : "") +
      ((result.conserved ?? []).length === 0
        ? "<p>No quantity is conserved for this model as it stands.</p>"
        : `<ul>${(result.conserved ?? []).map((q) => `<li><strong>${escapeHtml(q.name)}</strong>${tex(q.latex, true)}<span class="muted">${escapeHtml(q.reason)}</span></li>`).join("")}</ul>`) +
      (result.energyNotConserved ? `<p>The energy function is not conserved: ${escapeHtml(result.energyNotConserved)}</p>` : "") +
      ((result.cyclicMomenta ?? []).length > 0
        ? muted("Cyclic coordinates, their momenta and momentum balance:") +
          (result.cyclicMomenta ?? [])
            .map(
              (entry) => tex(entry.rateLatex, true) + muted(entry.conserved ? "Conserved: nothing acts on it." : `Acted on by ${entry.actedOnBy.join(", ")}.`),
            )
            .join("")
        : "");

  const linearization = !selected
    ? `<p>${escapeHtml(result?.linearizationNote ?? "No linearization for this revision.")}</p>`
    : `<p>About ${escapeHtml(equilibrium?.label ?? `equilibrium ${selected.index + 1}`)}: <strong>${escapeHtml(selected.stability)}</strong>. ${escapeHtml(selected.stabilityReason)}</p>` +
      (selected.modes.length > 0
        ? textTable("Modes", { head: modeTableHead(selected), rows: selected.modes.map(modeCells) })
        : "<p>No mode about this equilibrium.</p>") +
      tex(
        `\\dot{\\mathbf{x}} = A\\,\\mathbf{x} + B\\,\\mathbf{u},\\quad \\mathbf{x} = \\begin{bmatrix}${selected.stateNames.map(stateLatex).join(" \\\\ ")}\\end{bmatrix}`,
        true,
      ) +
      tex(`A = ${matrixLatex(selected.A)}`, true) +
      (selected.inputNames.length > 0 ? tex(`B = ${matrixLatex(selected.B)}`, true) : "");

  const checks = checkLines(report);

  const otherRuns = otherRunsText(report.otherRuns);
  const runs =
    (report.runs.length === 0 ? muted("No stored run used this revision's model.") : report.runs.map(runBlock).join("")) +
    (otherRuns ? muted(otherRuns) : "") +
    (report.studies.length > 0 ? `<div id="report-studies"><h3>Parameter studies</h3>${report.studies.map(studyBlock).join("")}</div>` : "");

  const review = report.review
    ? `<p>Review requested by ${escapeHtml(report.review.requestedByName ?? "a former member")}, ${escapeHtml(formatRecordTime(report.review.requestedAt))}.</p><ul>${report.review.reviewers
        .map(
          (r) =>
            `<li>${escapeHtml(r.reviewerName ?? "A former member")}: ${r.decision === "signed_off" ? "signed off" : r.decision === "changes_requested" ? "requested changes" : "no decision"}${
              r.decidedAt ? `, ${escapeHtml(formatRecordTime(r.decidedAt))}` : ""
            }${r.comment ? ` — “${escapeHtml(r.comment)}”` : ""}</li>`,
        )
        .join("")}</ul>`
    : "";
  const approvals =
    report.approvals.length === 0
      ? `<div class="box"><p><strong>Not approved.</strong></p>${muted("This revision has not been approved by a lead. Its equations are not released for use.")}</div>`
      : report.approvals
          .map(
            (a) =>
              `<div class="box approved"><p class="seal">Approved</p><dl><dt>Approved by</dt><dd>${escapeHtml(a.approvedByName ?? "a former member")}</dd><dt>When</dt><dd>${escapeHtml(
                formatRecordTime(a.approvedAt),
              )}</dd><dt>Revision</dt><dd>${revision.number}, content hash <span class="hash">${escapeHtml(a.contentHash)}</span></dd>${
                a.unlockedAt
                  ? `<dt>Unlocked</dt><dd>by ${escapeHtml(a.unlockedByName ?? "a former member")}, ${escapeHtml(formatRecordTime(a.unlockedAt))}: “${escapeHtml(a.unlockReason ?? "")}”</dd>`
                  : ""
              }</dl></div>`,
          )
          .join("");

  const threadSection = threads
    ? section(
        8,
        "Comment threads",
        "report-threads",
        threads.length === 0
          ? muted("No comment threads.")
          : muted(
              `${threads.filter((t) => t.status === "open").length} open, ${threads.filter((t) => t.status === "resolved").length} resolved; threads belong to the derivation and are printed as they stood when this file was rendered.`,
            ) + threads.map(threadBlock).join(""),
      )
    : "";

  const body = [
    header,
    modelSection(document),
    section(2, "Equations of motion", "report-equations", equations),
    section(3, "Conserved quantities", "report-conserved", conserved),
    section(4, "Linearization and natural frequencies", "report-linearization", linearization),
    section(5, "Checks", "report-checks", `<ul>${checks.map((line) => `<li>${escapeHtml(line)}</li>`).join("")}</ul>`),
    section(6, "Stored simulation runs", "report-runs", runs),
    section(7, "Review and approval", "report-approval", review + approvals),
    threadSection,
    `<aside class="safety" role="note"><p><strong>Safety note</strong></p><p>${escapeHtml(safetyNote)}</p></aside>`,
  ].join("\n");

  return `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<title>${escapeHtml(`${heading} — revision ${revision.number}`)}</title><style>${STYLE}</style></head>
<body><article class="report">${body}</article></body></html>
`;
}
