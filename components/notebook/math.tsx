"use client";

/**
 * KaTeX rendering for the notebook. Only `\htmlData{term=ID}` is trusted —
 * it is how the engine marks each top-level term of an equation so the
 * interface can address it; every other HTML-producing command is refused.
 */
import katex from "katex";
import clsx from "clsx";
import { memo, useMemo } from "react";

const TERM_ID = /^[A-Za-z0-9_.:-]{1,96}$/;

/**
 * Allows `\htmlData` with a single `term` attribute holding a plain id, nothing
 * else. KaTeX reports the attribute with its `data-` prefix.
 */
export function trustTermData(context: { command: string; attributes?: Record<string, string> }): boolean {
  if (context.command !== "\\htmlData" || !context.attributes) return false;
  const entries = Object.entries(context.attributes);
  if (entries.length !== 1) return false;
  const [key, value] = entries[0]!;
  return key === "data-term" && TERM_ID.test(value);
}

/** HTML for a LaTeX string; a LaTeX error renders as the source in the error colour, never throws. */
export function renderLatex(latex: string, display = false): string {
  return katex.renderToString(latex, {
    displayMode: display,
    throwOnError: false,
    errorColor: "var(--danger, #b3261e)",
    trust: trustTermData,
    strict: "ignore",
    maxSize: 20,
    maxExpand: 200,
    output: "htmlAndMathml",
  });
}

export interface MathViewProps {
  latex: string;
  display?: boolean;
  className?: string;
  /** Accessible description; KaTeX's MathML is read by screen readers too. */
  label?: string;
  "data-testid"?: string;
}

/** Renders LaTeX; display math scrolls horizontally inside its box instead of widening the page. */
export const MathView = memo(function MathView({ latex, display = false, className, label, ...rest }: MathViewProps) {
  const html = useMemo(() => renderLatex(latex, display), [latex, display]);
  const Tag = display ? "div" : "span";
  return (
    <Tag
      className={clsx(display ? "hn-math-display" : "hn-math-inline", className)}
      aria-label={label}
      data-testid={rest["data-testid"]}
      // KaTeX output from a trust-limited render; see trustTermData.
      dangerouslySetInnerHTML={{ __html: html }}
    />
  );
});
