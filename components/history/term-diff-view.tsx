import clsx from "clsx";
import { renderLatex } from "@/components/notebook/katex-render";
import type { EquationChange, TermChange, TermView } from "@/lib/history/term-diff";

function Tex({ latex, className }: { latex: string; className?: string }) {
  return <span className={className} dangerouslySetInnerHTML={{ __html: renderLatex(latex) }} />;
}

/** A term with its sign written out, "+" included, as it stands in the sum. */
function SignedTerm({ term }: { term: TermView }) {
  const negative = term.latex.startsWith("-");
  return <Tex latex={negative ? `-\\,${term.latex.slice(1)}` : `+\\,${term.latex}`} />;
}

const statusLabel: Record<TermChange["status"], string> = { unchanged: "Unchanged", added: "Added", removed: "Removed", changed: "Changed" };

function TermRow({ change }: { change: TermChange }) {
  const tone =
    change.status === "added"
      ? "border-action/40 bg-action-soft"
      : change.status === "removed"
        ? "border-danger/40 bg-danger-soft"
        : change.status === "changed"
          ? "border-seal/50 bg-seal-soft"
          : "border-transparent text-muted";
  return (
    <li className={clsx("flex flex-wrap items-center gap-x-3 gap-y-1 rounded border px-2 py-1", tone)} data-testid="term-change" data-status={change.status}>
      <span
        className={clsx(
          "w-20 shrink-0 text-xs font-medium",
          change.status === "added" ? "text-action" : change.status === "removed" ? "text-danger" : change.status === "changed" ? "text-seal" : "text-muted",
        )}
      >
        {statusLabel[change.status]}
      </span>
      {change.status === "changed" ? (
        <span className="flex min-w-0 flex-1 flex-wrap items-center gap-x-2 gap-y-1">
          <span className="sr-only">Before:</span>
          <span className="line-through decoration-danger/70">
            {change.before.map((term) => (
              <SignedTerm key={term.id} term={term} />
            ))}
          </span>
          <span aria-hidden className="text-muted">
            →
          </span>
          <span className="sr-only">after:</span>
          <span>
            {change.after.map((term) => (
              <SignedTerm key={term.id} term={term} />
            ))}
          </span>
          {change.motionLatex !== "1" ? (
            <span className="text-xs text-muted">
              (the term in <Tex latex={change.motionLatex} />)
            </span>
          ) : (
            <span className="text-xs text-muted">(the constant term)</span>
          )}
        </span>
      ) : (
        <span className={clsx("min-w-0 flex-1 overflow-x-auto", change.status === "removed" && "line-through decoration-danger/70")} title={change.term.text}>
          <SignedTerm term={change.term} />
        </span>
      )}
    </li>
  );
}

/**
 * The equations of two revisions term by term: for each coordinate, every
 * term of the newer residual marked unchanged, added or changed, then the
 * removed ones. Equations without changes are listed, not repeated.
 */
export function TermDiffView({ equations }: { equations: readonly EquationChange[] }) {
  const changed = equations.filter((equation) => equation.status !== "unchanged");
  const same = equations.filter((equation) => equation.status === "unchanged");
  return (
    <div className="space-y-4" data-testid="term-diff">
      {changed.length === 0 ? <p className="text-sm text-muted">The equations of motion are the same term for term.</p> : null}
      {changed.map((equation) => (
        <section
          key={equation.coordinate}
          className="space-y-2 rounded border border-line bg-surface p-3"
          aria-label={`Equation of ${equation.coordinate}`}
          data-testid="equation-change"
          data-coordinate={equation.coordinate}
        >
          <h3 className="flex flex-wrap items-baseline gap-x-2 text-sm font-semibold">
            <span>
              Equation of <Tex latex={equation.coordinateLatex} />
            </span>
            <span className="text-xs font-normal text-muted">
              {equation.status === "added"
                ? "new coordinate"
                : equation.status === "removed"
                  ? "coordinate removed"
                  : [
                      equation.counts.added ? `${equation.counts.added} added` : "",
                      equation.counts.removed ? `${equation.counts.removed} removed` : "",
                      equation.counts.changed ? `${equation.counts.changed} changed` : "",
                      `${equation.counts.unchanged} unchanged`,
                    ]
                      .filter(Boolean)
                      .join(", ")}
            </span>
          </h3>
          <ol className="space-y-1 text-[15px]">
            {equation.terms.map((change, index) => (
              <TermRow key={index} change={change} />
            ))}
          </ol>
          <p className="text-xs text-muted">Residual form: the terms sum to zero.</p>
        </section>
      ))}
      {same.length > 0 ? (
        <p className="text-sm text-muted">
          Unchanged:{" "}
          {same.map((equation, index) => (
            <span key={equation.coordinate}>
              {index > 0 ? ", " : ""}equation of <Tex latex={equation.coordinateLatex} />
            </span>
          ))}
          .
        </p>
      ) : null}
    </div>
  );
}
