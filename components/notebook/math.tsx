"use client";

/**
 * Mathematics on the notebook's pages. KaTeX itself (katex-render.ts) loads on
 * first use, and display math is typeset once it comes near the viewport, so
 * neither the bundle nor a long chain's equations hold up the first render.
 */
import clsx from "clsx";
import { memo, useEffect, useRef, useState } from "react";
import { useNearViewport } from "./use-near-viewport";

type KatexRender = typeof import("./katex-render");

let loaded: KatexRender | null = null;
let loading: Promise<KatexRender> | null = null;

/** The KaTeX renderer, loading it the first time. */
export function loadKatexRender(): Promise<KatexRender> {
  loading ??= import("./katex-render").then((module) => (loaded = module));
  return loading;
}

export interface MathViewProps {
  latex: string;
  display?: boolean;
  className?: string;
  /** Accessible description; KaTeX's MathML is read by screen readers too. */
  label?: string;
  /** Called after the LaTeX has been typeset into the element (display math typesets lazily). */
  onTypeset?: () => void;
  /**
   * Display math that may break over lines between its top-level terms
   * instead of scrolling: typeset as inline math in display style, which
   * KaTeX lets break after a top-level + − or =. Continuation lines are indented.
   */
  breakable?: boolean;
  "data-testid"?: string;
}

/**
 * Renders LaTeX; display math scrolls horizontally inside its box instead of
 * widening the page, or, when breakable, breaks between terms. Display math is
 * typeset once it comes near the viewport (a notebook of a long chain holds
 * megabytes of KaTeX markup otherwise).
 */
export const MathView = memo(function MathView({ latex, display = false, breakable = false, className, label, onTypeset, ...rest }: MathViewProps) {
  const ref = useRef<HTMLElement>(null);
  const near = useNearViewport(ref);
  const ready = near || !display;
  const [html, setHtml] = useState("");

  useEffect(() => {
    if (!ready) return;
    const wrapping = breakable && display;
    const source = wrapping ? `\\displaystyle ${latex}` : latex;
    if (loaded) {
      setHtml(loaded.renderLatex(source, display && !wrapping));
      return;
    }
    let current = true;
    void loadKatexRender().then((render) => {
      if (current) setHtml(render.renderLatex(source, display && !wrapping));
    });
    return () => {
      current = false;
    };
  }, [latex, display, breakable, ready]);

  useEffect(() => {
    if (html !== "") onTypeset?.();
  }, [html, onTypeset]);
  const Tag = display ? "div" : "span";
  return (
    <Tag
      ref={ref as never}
      className={clsx(display ? "hn-math-display" : "hn-math-inline", display && breakable && "hn-math-breakable", html === "" && "hn-math-pending", className)}
      aria-label={label}
      aria-busy={html === "" || undefined}
      data-testid={rest["data-testid"]}
      // KaTeX output from a trust-limited render; see trustTermData.
      dangerouslySetInnerHTML={{ __html: html }}
    />
  );
});
