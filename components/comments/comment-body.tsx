"use client";

import { useEffect, useState } from "react";
import { withPlainMentions } from "@/lib/comments/mentions";

/** A comment's Markdown, sanitized like a note (mentions read "@Name"); the plain text until it is rendered. */
export function CommentBody({ body }: { body: string }) {
  const source = withPlainMentions(body);
  const [html, setHtml] = useState<string | null>(null);
  useEffect(() => {
    let current = true;
    void import("@/components/notebook/markdown").then(({ renderNoteHtml }) => {
      if (current) setHtml(renderNoteHtml(source));
    });
    return () => {
      current = false;
    };
  }, [source]);
  if (html === null) return <p className="whitespace-pre-wrap text-sm">{source}</p>;
  // Sanitized by DOMPurify in renderNoteHtml.
  return <div className="hn-note hn-comment-body text-sm" dangerouslySetInnerHTML={{ __html: html }} />;
}
