"use client";

import { useEffect, useState } from "react";
import { renderNoteHtml } from "@/components/notebook/markdown";
import { Button } from "@/components/ui/button";

/** Opens the browser's print dialog, where the report is printed or saved as PDF. */
export function PrintButton() {
  return (
    <Button variant="primary" onClick={() => window.print()} title="Print, or choose “Save as PDF” in the print dialog">
      Print or save as PDF
    </Button>
  );
}

/** A note cell, rendered once in the browser (sanitizing needs its DOM); the source text until then. */
export function ReportNote({ markdown }: { markdown: string }) {
  const [html, setHtml] = useState<string | null>(null);
  useEffect(() => setHtml(renderNoteHtml(markdown)), [markdown]);
  if (html === null) return <p className="hn-note whitespace-pre-wrap">{markdown}</p>;
  // Sanitized by DOMPurify in renderNoteHtml.
  return <div className="hn-note" dangerouslySetInnerHTML={{ __html: html }} />;
}
