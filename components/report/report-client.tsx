"use client";

import { useEffect, useState } from "react";
import { Button } from "@/components/ui/button";

/** Opens the browser's print dialog, where the report is printed or saved as PDF. */
export function PrintButton() {
  return (
    <Button variant="primary" onClick={() => window.print()} title="Print, or choose “Save as PDF” in the print dialog">
      Print or save as PDF
    </Button>
  );
}

/**
 * A note cell, rendered in the browser as the notebook renders it (sanitizing
 * needs the DOM, and server and first client render must agree); the source
 * text until then.
 */
export function ReportNote({ markdown }: { markdown: string }) {
  const [html, setHtml] = useState<string | null>(null);
  useEffect(() => {
    let current = true;
    void import("@/components/notebook/markdown").then(({ renderNoteHtml }) => {
      if (current) setHtml(renderNoteHtml(markdown));
    });
    return () => {
      current = false;
    };
  }, [markdown]);
  if (html === null) return <p className="hn-note whitespace-pre-wrap">{markdown}</p>;
  // Sanitized by DOMPurify in renderNoteHtml.
  return <div className="hn-note" dangerouslySetInnerHTML={{ __html: html }} />;
}
