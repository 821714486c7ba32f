"use client";

/**
 * Cells the engine fills: equations of motion, conserved quantities,
 * linearization and code export. They render the last results they were
 * given; when those belong to an older version of the derivation they stay
 * visible but are marked stale (the frame shows the marker, the body dims).
 */
import clsx from "clsx";
import { lazy, Suspense, useEffect, useId, useReducer, useRef, useState, type ReactNode } from "react";
import { useTermComments } from "@/components/comments/term-comments";
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
import { STABILITY_RULE } from "@/lib/mechanics/browser";
import type { ModeView, NotebookResults } from "@/lib/notebook/results";
import { MathView } from "./math";
import { safetyNote } from "@/lib/domain";
import { ViewChoiceNote } from "./view-choice";

const FrequencyResponsePanel = lazy(() => import("./frequency-response-panel"));

export interface GeneratedCellProps<C> {
  cell: C;
  results: NotebookResults | null;
  /** An evaluation is running. */
  evaluating?: boolean;
  readOnly?: boolean;
  onOperation: (op: DocumentOperation) => void;
  /**
   * A person's view choice (form, equilibrium, language): when given, the
   * choice is theirs and `cell.settings` already carry it; readers may make it
   * too. Without it a choice changes the document's setting.
   */
  onViewChange?: (patch: Record<string, unknown>) => void;
  /** The document's own settings (the author's defaults), to show where a view choice differs. */
  documentSettings?: C extends { settings: infer S } ? S : never;
  /** Makes this person's choice the document's setting (for those who may edit). */
  onMakeDefault?: () => void;
}

/** Where a view choice goes: the person's own view, or the document's setting. */
function chooser<C extends { id: string }>({ cell, readOnly, onOperation, onViewChange }: GeneratedCellProps<C>) {
  return {
    disabled: readOnly && !onViewChange,
    choose: (patch: Record<string, unknown>) => (onViewChange ? onViewChange(patch) : onOperation({ type: "updateSettings", cellId: cell.id, patch })),
  };
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

export function EquationsCellView(props: EquationsCellProps) {
  const { cell, results, evaluating, activeTerm = null, onTermFocus, onTermSelect, documentSettings, onViewChange, onMakeDefault } = props;
  const view = chooser(props);
  const containerRef = useRef<HTMLDivElement>(null);
  const [hovered, setHovered] = useState<string | null>(null);
  const shown = hovered ?? activeTerm;
  // Equations typeset lazily; each one re-renders this cell so its terms get decorated below.
  const [, typeset] = useReducer((count: number) => count + 1, 0);
  const form = cell.settings.form;
  const termComments = useTermComments(cell.id, containerRef);

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
        <MathView latex={equation.latex} display breakable label={`Euler–Lagrange equation for ${equation.coordinate}`} onTypeset={typeset} />
      </div>
    ));
  } else if (form === "mass-matrix") {
    body = results.massMatrixLatex ? (
      <MathView latex={results.massMatrixLatex} display label="Mass-matrix form" />
    ) : (
      <p className="text-sm text-muted">The mass-matrix form was not part of these results.</p>
    );
  } else {
    body = results.accelerations?.length ? (
      results.accelerations.map((entry) => (
        <MathView key={entry.coordinate} latex={entry.latex} display breakable label={`Acceleration of ${entry.coordinate}`} />
      ))
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
            disabled={view.disabled}
            onChange={(event) => view.choose({ form: event.target.value })}
          >
            {EQUATION_FORMS.map((option) => (
              <option key={option} value={option}>
                {FORM_LABELS[option]}
              </option>
            ))}
          </select>
        </label>
        {documentSettings && documentSettings.form !== form ? (
          <ViewChoiceNote
            documentLabel={FORM_LABELS[documentSettings.form].toLowerCase()}
            onReset={onViewChange && (() => onViewChange({ form: undefined }))}
            onMakeDefault={onMakeDefault}
          />
        ) : null}
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
          if (term && event.target instanceof HTMLElement) termComments?.open(event.target);
        }}
        onKeyDown={(event) => {
          const term = termAt(event.target);
          if (term && (event.key === "Enter" || event.key === " ")) {
            event.preventDefault();
            onTermSelect?.(term);
            if (event.target instanceof HTMLElement) termComments?.open(event.target);
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
  const cyclic = results.cyclicMomenta ?? [];
  const forcedCyclic = cyclic.filter((entry) => !entry.conserved);
  return (
    <div className="hn-result-body flex min-w-0 flex-col gap-2">
      {results.energyLatex && (
        <div>
          <div className="text-xs text-muted">
            Energy function
            {energyConserved
              ? ` — conserved: ${energyConserved.reason}`
              : ` — not conserved${results.energyNotConserved ? `: ${results.energyNotConserved}` : ""}`}
          </div>
          <MathView latex={`h = ${results.energyLatex}`} display breakable />
        </div>
      )}
      {conserved.length === 0 ? (
        <p className="text-sm text-muted">
          No conserved quantity found.
          {results.cyclicMomenta && cyclic.length === 0 ? " No coordinate is cyclic (the Lagrangian depends on every coordinate)." : ""}
        </p>
      ) : (
        others.map((quantity) => (
          <div key={quantity.name} className="min-w-0">
            <div className="text-xs text-muted">
              {quantity.name} — {quantity.reason}
            </div>
            <MathView latex={quantity.latex} display breakable />
          </div>
        ))
      )}
      {forcedCyclic.map((entry) => (
        <div key={entry.coordinate} className="min-w-0 text-sm" data-testid="cyclic-not-conserved">
          <p>
            <span className="font-mono">{entry.coordinate}</span> is cyclic (the Lagrangian does not depend on it), but its momentum is not conserved:{" "}
            {actingText(entry.actedOnBy)} on it.
          </p>
          <MathView latex={entry.rateLatex} label={`Momentum balance of ${entry.coordinate}`} />
        </div>
      ))}
    </div>
  );
}

function actingText(actedOnBy: readonly string[]): string {
  if (actedOnBy.length === 0) return "a generalized force acts";
  const names = actedOnBy.map((cause) => (cause === "applied force" ? "the applied force" : cause === "constraint" ? "a constraint force" : "the dissipation"));
  return `${names.join(" and ")} act${names.length === 1 ? "s" : ""}`;
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

type ModeStability = "stable" | "marginal" | "unstable";

export interface LinearizationCellProps extends GeneratedCellProps<LinearizationCell> {
  inputNames: readonly string[];
}

export function LinearizationCellView(props: LinearizationCellProps) {
  const { cell, results, evaluating, readOnly, onOperation, inputNames, documentSettings, onViewChange, onMakeDefault } = props;
  const view = chooser(props);
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
            disabled={view.disabled || !linear || linear.equilibria.length === 0}
            onChange={(event) => view.choose({ equilibriumIndex: Number(event.target.value) })}
          >
            {(linear?.equilibria.length ? linear.equilibria : [{ label: "first found", values: {} }]).map((equilibrium, index) => (
              <option key={index} value={index}>
                {index + 1}. {equilibrium.label}
              </option>
            ))}
          </select>
        </label>
        {documentSettings && documentSettings.equilibriumIndex !== cell.settings.equilibriumIndex ? (
          <ViewChoiceNote
            documentLabel={`equilibrium ${documentSettings.equilibriumIndex + 1}`}
            onReset={onViewChange && (() => onViewChange({ equilibriumIndex: undefined }))}
            onMakeDefault={onMakeDefault}
          />
        ) : null}
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
          <MathView
            latex={`\\dot{\\mathbf{x}} = A\\,\\mathbf{x} + B\\,\\mathbf{u},\\quad \\mathbf{x} = \\begin{bmatrix}${selected.stateNames.map((n) => symbolLatex(n.replace(/'+$/, ""), (n.match(/'/g)?.length ?? 0) as 0 | 1 | 2)).join(" \\\\ ")}\\end{bmatrix}`}
            display
          />
          <MathView latex={`A = ${matrixLatex(selected.A)}`} display label="State matrix A" />
          {selected.inputNames.length > 0 && <MathView latex={`B = ${matrixLatex(selected.B)}`} display label="Input matrix B" />}
          <StabilityVerdictView stability={selected.stability} reason={selected.stabilityReason} eigenvalues={selected.eigenvalues} />
          {selected.constrained && <ConstrainedStateNote constrained={selected.constrained} />}
          {selected.modes.length > 0 && <ModeTable modes={selected.modes} coordinates={selected.shapeCoordinates ?? coordinatesOf(selected.stateNames)} />}
          {selected.outputs && (
            <Suspense fallback={<p className="text-sm text-muted">Loading the frequency response…</p>}>
              <FrequencyResponsePanel
                key={selected.index}
                selected={selected}
                outputs={cell.settings.outputs}
                input={cell.settings.input}
                title={cell.title ?? "linearization"}
                onChoose={readOnly ? undefined : (patch) => onOperation({ type: "updateSettings", cellId: cell.id, patch })}
              />
            </Suspense>
          )}
        </div>
      )}
    </div>
  );
}

const STABILITY_HEADINGS: Record<ModeStability, string> = {
  stable: "Stable equilibrium.",
  marginal: "Marginal equilibrium.",
  unstable: "Unstable equilibrium.",
};

/** The verdict of the one stability rule, the clause that decided it, the eigenvalues it read, and the rule itself. */
function StabilityVerdictView({ stability, reason, eigenvalues }: { stability: ModeStability; reason: string; eigenvalues: { re: number; im: number }[] }) {
  // One entry per real eigenvalue or conjugate pair; the pair's lower half is implied by "±".
  const listed = eigenvalues.filter((l) => l.im >= 0).sort((a, b) => b.re - a.re || a.im - b.im);
  return (
    <div className="flex flex-col gap-1 text-sm" data-testid="stability-verdict">
      <p>
        <strong className={clsx("font-medium", stability === "unstable" ? "text-danger" : stability === "marginal" ? "text-review" : "text-ink")}>
          {STABILITY_HEADINGS[stability]}
        </strong>{" "}
        {reason}
      </p>
      <p className="text-muted">
        Eigenvalues of A (1/s):{" "}
        {listed.map((l, k) => (
          <span key={k} className={clsx("font-mono", l.re > 0 && "text-danger")}>
            {k > 0 && ", "}
            {eigenvalueText(l)}
            {l.re > 0 && " (grows)"}
          </span>
        ))}
      </p>
      <details className="text-xs text-muted">
        <summary className="cursor-pointer">How the verdict is decided</summary>
        <p className="mt-1">{STABILITY_RULE}</p>
      </details>
    </div>
  );
}

function eigenvalueText({ re, im }: { re: number; im: number }): string {
  const part = (value: number) => Number(value.toPrecision(4)).toString().replace("-", "−");
  if (im === 0) return part(re);
  return re === 0 ? `±${part(im)}i` : `${part(re)} ± ${part(im)}i`;
}

/** Coordinate names from the state names [q; q']. */
/** With constraints: which coordinates the state holds and the multipliers at the equilibrium. */
type LinearizationSelected = NonNullable<NonNullable<NotebookResults["linearization"]>["selected"]>;

function ConstrainedStateNote({ constrained }: { constrained: NonNullable<LinearizationSelected["constrained"]> }) {
  return (
    <p className="text-sm text-muted" data-testid="constrained-state">
      The state holds the independent coordinates {constrained.independent.join(", ") || "(none)"}
      {constrained.dependent.length > 0 && <>; {constrained.dependent.join(", ")} follow from the constraints</>}. Multipliers at this equilibrium:{" "}
      {constrained.multipliers.map((m, k) => (
        <span key={m.symbol}>
          {k > 0 && ", "}
          <code>{m.symbol}</code> = {Number(m.value.toPrecision(4)).toString().replace("-", "−")}
        </span>
      ))}
      .
    </p>
  );
}

function coordinatesOf(stateNames: readonly string[]): string[] {
  return stateNames.filter((name) => !name.endsWith("'"));
}

/** Every mode of the linearization, the growing (divergent) ones marked, none left out. */
function ModeTable({ modes, coordinates }: { modes: ModeView[]; coordinates: string[] }) {
  const captionId = useId();
  const precision = (value: number, digits: number) => Number(value.toPrecision(digits)).toString().replace("-", "−");
  return (
    // The description sits outside the scrolling box: as the table's caption it would be as wide as the table and scroll away with it.
    <div className="flex min-w-0 flex-col">
      <p id={`${captionId}-modes`} className="text-xs text-muted">
        Modes of K v = ω² M v (undamped), with the damped frequency and damping ratio of the matching eigenvalue of A
      </p>
      <div className="overflow-x-auto" tabIndex={0} role="region" aria-label="Modes (scrolls sideways)">
        <table className="text-sm" aria-labelledby={`${captionId}-modes`}>
          <thead>
            <tr className="text-left text-xs text-muted">
              <th className="pr-4 font-medium">Mode</th>
              <th className="pr-4 font-medium">Frequency (Hz)</th>
              <th className="pr-4 font-medium">Damped (Hz), ζ</th>
              <th className="font-medium">Shape ({coordinates.join(", ")})</th>
            </tr>
          </thead>
          <tbody className="font-mono">
            {modes.map((mode, k) => (
              <tr key={k} data-testid="mode-row" data-kind={mode.kind} className={clsx(mode.kind === "divergent" && "text-danger")}>
                <td className="pr-4">{k + 1}</td>
                <td className="whitespace-nowrap pr-4">
                  {mode.kind === "oscillating" && precision(mode.hertz!, 5)}
                  {mode.kind === "rigid" && <span className="font-sans">0 (rigid: no restoring stiffness)</span>}
                  {mode.kind === "divergent" && <span className="font-sans">growing: exp({precision(mode.growthRate!, 4)}·t), no oscillation</span>}
                </td>
                <td className="whitespace-nowrap pr-4">
                  {mode.eigenvalue ? (
                    `${precision(mode.eigenvalue.im / (2 * Math.PI), 5)}, ζ = ${precision(-mode.eigenvalue.re / Math.hypot(mode.eigenvalue.re, mode.eigenvalue.im), 3)}`
                  ) : (
                    <span className="font-sans text-muted">—</span>
                  )}
                </td>
                <td className="whitespace-nowrap">{mode.shape.map((value) => precision(value, 3)).join(", ")}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </div>
  );
}

// ---------------------------------------------------------------------------
// Code export

const LANGUAGE_LABELS: Record<CodeExportLanguage, string> = {
  python: "Python (NumPy)",
  typescript: "TypeScript",
  c: "C",
  julia: "Julia",
  octave: "MATLAB/Octave",
};

export function CodeExportCellView(props: GeneratedCellProps<CodeExportCell>) {
  const { cell, results, evaluating, documentSettings, onViewChange, onMakeDefault } = props;
  const view = chooser(props);
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
            disabled={view.disabled}
            onChange={(event) => view.choose({ language: event.target.value })}
          >
            {CODE_EXPORT_LANGUAGES.map((language) => (
              <option key={language} value={language}>
                {LANGUAGE_LABELS[language]}
              </option>
            ))}
          </select>
        </label>
        <button
          type="button"
          className="rounded border border-line px-2 py-0.5 text-ink hover:border-action hover:text-action disabled:opacity-40"
          disabled={!code}
          onClick={copy}
        >
          {copied ? "Copied" : "Copy"}
        </button>
        <button
          type="button"
          className="rounded border border-line px-2 py-0.5 text-ink hover:border-action hover:text-action disabled:opacity-40"
          disabled={!code}
          onClick={download}
        >
          Download
        </button>
        {documentSettings && documentSettings.language !== cell.settings.language ? (
          <ViewChoiceNote
            documentLabel={LANGUAGE_LABELS[documentSettings.language]}
            onReset={onViewChange && (() => onViewChange({ language: undefined }))}
            onMakeDefault={onMakeDefault}
          />
        ) : null}
      </div>
      {!results ? (
        <Pending evaluating={evaluating} />
      ) : !code ? (
        <p className="text-sm text-muted" role="status">
          {evaluating ? `Preparing ${LANGUAGE_LABELS[cell.settings.language]} code…` : `No ${LANGUAGE_LABELS[cell.settings.language]} code in these results.`}
        </p>
      ) : (
        <pre className="hn-result-body max-h-96 overflow-auto rounded bg-sunken p-2 font-mono text-xs text-ink">{code.source}</pre>
      )}
      <p className="border-l-2 border-seal pl-2 text-xs text-muted" role="note">
        {safetyNote}
      </p>
    </div>
  );
}

// ---------------------------------------------------------------------------
// Simulation (settings and runs arrive with the simulation work)

// The simulation cell lives in ./simulation (settings, worker runs, results loaded on first use).
export { SimulationCellView } from "./simulation/simulation-cell";
