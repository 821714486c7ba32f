"use client";

/**
 * Cells the engine fills: equations of motion, conserved quantities,
 * linearization and code export. They render the last results they were
 * given; when those belong to an older version of the derivation they stay
 * visible but are marked stale (the frame shows the marker, the body dims).
 */
import clsx from "clsx";
import { useEffect, useReducer, useRef, useState, type ReactNode } from "react";
import {
  CODE_EXPORT_LANGUAGES,
  EQUATION_FORMS,
  type CodeExportCell,
  type CodeExportLanguage,
  type ConservedCell,
  type DocumentOperation,
  type EquationForm,
  type EquationsCell,
  type LinearizationCell,
} from "@/lib/notebook/document";
import { symbolLatex } from "@/lib/notebook/latex-preview";
import type { NotebookResults } from "@/lib/notebook/results";
import { MathView } from "./math";

export const SAFETY_NOTE =
  "Derived equations are a model. Before they drive real hardware or a safety-relevant decision, validate them against tests and the applicable codes and standards, under a qualified engineer's responsibility.";

export interface GeneratedCellProps<C> {
  cell: C;
  results: NotebookResults | null;
  /** An evaluation is running. */
  evaluating?: boolean;
  readOnly?: boolean;
  onOperation: (op: DocumentOperation) => void;
}

function Pending({ evaluating }: { evaluating?: boolean }) {
  return (
    <p className="text-sm text-muted" role="status">
      {evaluating ? "Evaluating…" : "Not evaluated yet. Results appear here once the derivation has been evaluated."}
    </p>
  );
}

// ---------------------------------------------------------------------------
// Equations of motion, with addressable terms

export interface EquationsCellProps extends GeneratedCellProps<EquationsCell> {
  /** The term highlighted from outside (e.g. a comment thread). */
  activeTerm?: string | null;
  /** Hovering or focusing a term (null when it leaves). */
  onTermFocus?: (termId: string | null) => void;
  /** Clicking or pressing Enter on a term. */
  onTermSelect?: (termId: string) => void;
}

const FORM_LABELS: Record<EquationForm, string> = { residual: "Residual form", "mass-matrix": "Mass-matrix form", accelerations: "Accelerations" };

export function EquationsCellView({ cell, results, evaluating, readOnly, onOperation, activeTerm = null, onTermFocus, onTermSelect }: EquationsCellProps) {
  const containerRef = useRef<HTMLDivElement>(null);
  const [hovered, setHovered] = useState<string | null>(null);
  const shown = hovered ?? activeTerm;
  // Equations typeset lazily; each one re-renders this cell so its terms get decorated below.
  const [, typeset] = useReducer((count: number) => count + 1, 0);
  const form = cell.settings.form;

  // Terms are spans KaTeX wrote from \htmlData{term=ID}; make them reachable by keyboard too.
  useEffect(() => {
    for (const element of containerRef.current?.querySelectorAll<HTMLElement>("[data-term]") ?? []) {
      element.tabIndex = 0;
      element.setAttribute("role", "button");
      element.setAttribute("aria-label", `Term ${element.textContent?.trim() ?? ""}`.trim());
    }
  });

  useEffect(() => {
    for (const element of containerRef.current?.querySelectorAll<HTMLElement>("[data-term]") ?? []) {
      element.classList.toggle("hn-term-active", shown !== null && element.dataset.term === shown);
    }
  });

  const termAt = (target: EventTarget | null) => (target instanceof Element ? (target.closest<HTMLElement>("[data-term]")?.dataset.term ?? null) : null);
  const enter = (target: EventTarget | null) => {
    const term = termAt(target);
    if (term === hovered) return;
    setHovered(term);
    onTermFocus?.(term);
  };

  let body: ReactNode;
  if (!results) body = <Pending evaluating={evaluating} />;
  else if (form === "residual") {
    body = results.equations.map((equation) => (
      <div key={equation.coordinate} className="min-w-0" data-coordinate={equation.coordinate}>
        <div className="text-xs text-muted">
          Equation for <span className="font-mono">{equation.coordinate}</span>
        </div>
        <MathView latex={equation.latex} display label={`Euler–Lagrange equation for ${equation.coordinate}`} onTypeset={typeset} />
      </div>
    ));
  } else if (form === "mass-matrix") {
    body = results.massMatrixLatex ? <MathView latex={results.massMatrixLatex} display label="Mass-matrix form" /> : <p className="text-sm text-muted">The mass-matrix form was not part of these results.</p>;
  } else {
    body = results.accelerations?.length ? (
      results.accelerations.map((entry) => <MathView key={entry.coordinate} latex={entry.latex} display label={`Acceleration of ${entry.coordinate}`} />)
    ) : (
      <p className="text-sm text-muted">{results.accelerationsNote ?? "Accelerations are solved only where the system is small enough."}</p>
    );
  }

  return (
    <div className="min-w-0">
      <div className="mb-2 flex flex-wrap items-center gap-3">
        <label className="flex items-center gap-2 text-[13px] text-muted">
          Form
          <select
            className="rounded border border-line bg-paper px-1.5 py-0.5 text-ink"
            value={form}
            disabled={readOnly}
            onChange={(event) => onOperation({ type: "updateSettings", cellId: cell.id, patch: { form: event.target.value } })}
          >
            {EQUATION_FORMS.map((option) => (
              <option key={option} value={option}>
                {FORM_LABELS[option]}
              </option>
            ))}
          </select>
        </label>
        {results?.timingMs !== undefined && <span className="text-xs text-muted">derived in {results.timingMs.toFixed(0)} ms</span>}
      </div>
      <div
        ref={containerRef}
        className="hn-equations hn-result-body flex min-w-0 flex-col gap-2"
        data-testid="equations"
        onMouseOver={(event) => enter(event.target)}
        onMouseLeave={() => enter(null)}
        onFocus={(event) => enter(event.target)}
        onBlur={() => enter(null)}
        onClick={(event) => {
          const term = termAt(event.target);
          if (term) onTermSelect?.(term);
        }}
        onKeyDown={(event) => {
          const term = termAt(event.target);
          if (term && (event.key === "Enter" || event.key === " ")) {
            event.preventDefault();
            onTermSelect?.(term);
          }
        }}
      >
        {body}
      </div>
    </div>
  );
}

// ---------------------------------------------------------------------------
// Conserved quantities

export function ConservedCellView({ results, evaluating }: GeneratedCellProps<ConservedCell>) {
  if (!results) return <Pending evaluating={evaluating} />;
  // The energy function is always shown once at the top; when it is conserved it is
  // labelled so there rather than repeated in the list below.
  const conserved = results.conserved ?? [];
  const energyConserved = conserved.find((quantity) => quantity.name === "energy function");
  const others = results.energyLatex ? conserved.filter((quantity) => quantity !== energyConserved) : conserved;
  return (
    <div className="hn-result-body flex min-w-0 flex-col gap-2">
      {results.energyLatex && (
        <div>
          <div className="text-xs text-muted">
            Energy function{energyConserved ? ` — conserved: ${energyConserved.reason}` : " — not conserved"}
          </div>
          <MathView latex={`h = ${results.energyLatex}`} display />
        </div>
      )}
      {conserved.length === 0 ? (
        <p className="text-sm text-muted">No conserved quantity found: the Lagrangian depends on time, or dissipation or applied forces act, and no coordinate is cyclic.</p>
      ) : (
        others.map((quantity) => (
          <div key={quantity.name} className="min-w-0">
            <div className="text-xs text-muted">
              {quantity.name} — {quantity.reason}
            </div>
            <MathView latex={quantity.latex} display />
          </div>
        ))
      )}
    </div>
  );
}

// ---------------------------------------------------------------------------
// Linearization

function formatNumber(value: number): string {
  if (value === 0) return "0";
  const abs = Math.abs(value);
  if (abs >= 1e-3 && abs < 1e5) return Number(value.toPrecision(4)).toString();
  const [mantissa, exponent] = value.toExponential(3).split("e");
  return `${Number(mantissa)}\\times 10^{${Number(exponent)}}`;
}

function matrixLatex(rows: number[][]): string {
  if (rows.length === 0) return "\\varnothing";
  return `\\begin{bmatrix}${rows.map((row) => row.map(formatNumber).join(" & ")).join(" \\\\ ")}\\end{bmatrix}`;
}

export interface LinearizationCellProps extends GeneratedCellProps<LinearizationCell> {
  inputNames: readonly string[];
}

export function LinearizationCellView({ cell, results, evaluating, readOnly, onOperation, inputNames }: LinearizationCellProps) {
  const linear = results?.linearization;
  const selected = linear?.selected;
  return (
    <div className="flex min-w-0 flex-col gap-3">
      <div className="flex flex-wrap items-end gap-3 text-[13px]">
        <label className="flex flex-col gap-1 text-muted">
          Equilibrium
          <select
            className="rounded border border-line bg-paper px-1.5 py-0.5 text-ink"
            value={cell.settings.equilibriumIndex}
            disabled={readOnly || !linear || linear.equilibria.length === 0}
            onChange={(event) => onOperation({ type: "updateSettings", cellId: cell.id, patch: { equilibriumIndex: Number(event.target.value) } })}
          >
            {(linear?.equilibria.length ? linear.equilibria : [{ label: "first found", values: {} }]).map((equilibrium, index) => (
              <option key={index} value={index}>
                {index + 1}. {equilibrium.label}
              </option>
            ))}
          </select>
        </label>
        {inputNames.map((name) => (
          <label key={name} className="flex flex-col gap-1 text-muted">
            Input {name}
            <input
              className="w-24 rounded border border-line bg-paper px-1.5 py-0.5 font-mono text-ink placeholder:font-sans placeholder:text-xs placeholder:italic placeholder:text-muted/70"
              value={cell.settings.inputValues[name] ?? ""}
              placeholder="blank = 0"
              readOnly={readOnly}
              inputMode="decimal"
              onChange={(event) =>
                onOperation({ type: "updateSettings", cellId: cell.id, patch: { inputValues: { ...cell.settings.inputValues, [name]: event.target.value } } })
              }
            />
          </label>
        ))}
      </div>
      {!results ? (
        <Pending evaluating={evaluating} />
      ) : !selected ? (
        <p className="text-sm text-muted">No equilibrium was found for the current parameter values.</p>
      ) : (
        <div className="hn-result-body flex min-w-0 flex-col gap-2">
          <MathView latex={`\\dot{\\mathbf{x}} = A\\,\\mathbf{x} + B\\,\\mathbf{u},\\quad \\mathbf{x} = \\begin{bmatrix}${selected.stateNames.map((n) => symbolLatex(n.replace(/'+$/, ""), (n.match(/'/g)?.length ?? 0) as 0 | 1 | 2)).join(" \\\\ ")}\\end{bmatrix}`} display />
          <MathView latex={`A = ${matrixLatex(selected.A)}`} display label="State matrix A" />
          {selected.inputNames.length > 0 && <MathView latex={`B = ${matrixLatex(selected.B)}`} display label="Input matrix B" />}
          <p className={clsx("text-sm", selected.stable ? "text-ink" : "text-danger")}>{selected.stable ? "Stable equilibrium." : "Unstable equilibrium."}</p>
          {selected.frequenciesHz.length > 0 && (
            <div className="overflow-x-auto">
              <table className="text-sm">
                <caption className="text-left text-xs text-muted">Natural frequencies and mode shapes</caption>
                <thead>
                  <tr className="text-left text-xs text-muted">
                    <th className="pr-4 font-medium">Mode</th>
                    <th className="pr-4 font-medium">Frequency (Hz)</th>
                    <th className="font-medium">Shape</th>
                  </tr>
                </thead>
                <tbody className="font-mono">
                  {selected.frequenciesHz.map((frequency, mode) => (
                    <tr key={mode}>
                      <td className="pr-4">{mode + 1}</td>
                      <td className="pr-4">{Number(frequency.toPrecision(5))}</td>
                      <td>{selected.modeShapes.map((row) => Number((row[mode] ?? 0).toPrecision(3))).join(", ")}</td>
                    </tr>
                  ))}
                </tbody>
              </table>
            </div>
          )}
        </div>
      )}
    </div>
  );
}

// ---------------------------------------------------------------------------
// Code export

const LANGUAGE_LABELS: Record<CodeExportLanguage, string> = { python: "Python (NumPy)", typescript: "TypeScript", c: "C", julia: "Julia", octave: "MATLAB/Octave" };

export function CodeExportCellView({ cell, results, evaluating, readOnly, onOperation }: GeneratedCellProps<CodeExportCell>) {
  const [copied, setCopied] = useState(false);
  const code = results?.code?.find((entry) => entry.language === cell.settings.language);

  async function copy() {
    if (!code) return;
    await navigator.clipboard.writeText(code.source);
    setCopied(true);
    setTimeout(() => setCopied(false), 1500);
  }

  function download() {
    if (!code) return;
    const url = URL.createObjectURL(new Blob([code.source], { type: "text/plain" }));
    const link = document.createElement("a");
    link.href = url;
    link.download = code.filename;
    link.click();
    URL.revokeObjectURL(url);
  }

  return (
    <div className="flex min-w-0 flex-col gap-2">
      <div className="flex flex-wrap items-center gap-2 text-[13px]">
        <label className="flex items-center gap-2 text-muted">
          Language
          <select
            className="rounded border border-line bg-paper px-1.5 py-0.5 text-ink"
            value={cell.settings.language}
            disabled={readOnly}
            onChange={(event) => onOperation({ type: "updateSettings", cellId: cell.id, patch: { language: event.target.value } })}
          >
            {CODE_EXPORT_LANGUAGES.map((language) => (
              <option key={language} value={language}>
                {LANGUAGE_LABELS[language]}
              </option>
            ))}
          </select>
        </label>
        <button type="button" className="rounded border border-line px-2 py-0.5 text-ink hover:border-action hover:text-action disabled:opacity-40" disabled={!code} onClick={copy}>
          {copied ? "Copied" : "Copy"}
        </button>
        <button type="button" className="rounded border border-line px-2 py-0.5 text-ink hover:border-action hover:text-action disabled:opacity-40" disabled={!code} onClick={download}>
          Download
        </button>
      </div>
      {!results ? (
        <Pending evaluating={evaluating} />
      ) : !code ? (
        <p className="text-sm text-muted">No {LANGUAGE_LABELS[cell.settings.language]} code in these results.</p>
      ) : (
        <pre className="hn-result-body max-h-96 overflow-auto rounded bg-sunken p-2 font-mono text-xs text-ink">{code.source}</pre>
      )}
      <p className="border-l-2 border-seal pl-2 text-xs text-muted" role="note">
        {SAFETY_NOTE}
      </p>
    </div>
  );
}

// ---------------------------------------------------------------------------
// Simulation (settings and runs arrive with the simulation work)

// The simulation cell lives in ./simulation (settings, worker runs, results loaded on first use).
export { SimulationCellView } from "./simulation/simulation-cell";
