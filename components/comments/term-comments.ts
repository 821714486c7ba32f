"use client";

import { useEffect, type RefObject } from "react";
import { termKey } from "@/lib/comments/term-anchor";
import { useComments } from "./comments-context";
import "./comments.css";

/**
 * Comment counts beside the terms of an equations cell, and opening a term's
 * thread. The cell's container holds KaTeX spans with data-term inside an
 * element with data-coordinate; this decorates them after every render (the
 * equations typeset lazily) and answers null without a CommentsProvider.
 */
export function useTermComments(cellId: string, containerRef: RefObject<HTMLElement | null>) {
  const comments = useComments();
  const counts = comments?.termCounts;

  useEffect(() => {
    if (!counts) return;
    for (const element of containerRef.current?.querySelectorAll<HTMLElement>("[data-term]") ?? []) {
      const coordinate = element.closest<HTMLElement>("[data-coordinate]")?.dataset.coordinate;
      const key = coordinate && element.dataset.term ? termKey({ cellId, coordinate, termId: element.dataset.term }) : null;
      const count = key ? (counts.get(key) ?? 0) : 0;
      if (count > 0) {
        element.dataset.comments = String(count);
        element.classList.add("hn-term-commented");
        element.setAttribute("aria-description", `${count} open comment thread${count === 1 ? "" : "s"}`);
      } else if (element.dataset.comments) {
        delete element.dataset.comments;
        element.classList.remove("hn-term-commented");
        element.removeAttribute("aria-description");
      }
    }
  });

  if (!comments) return null;
  return {
    /** Opens the term's thread, or a new one on it. */
    open(target: HTMLElement) {
      const termId = target.closest<HTMLElement>("[data-term]")?.dataset.term;
      const coordinate = target.closest<HTMLElement>("[data-coordinate]")?.dataset.coordinate;
      if (termId && coordinate) comments.openTerm({ cellId, coordinate, termId });
    },
  };
}
