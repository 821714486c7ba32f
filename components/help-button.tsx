"use client";

import { useOpenShortcutHelp } from "./shortcuts";

export function HelpButton() {
  const open = useOpenShortcutHelp();
  return (
    <button
      type="button"
      onClick={open}
      aria-label="Keyboard shortcuts"
      title="Keyboard shortcuts (?)"
      className="rounded border border-transparent px-2 py-1 text-sm text-muted hover:border-line hover:text-ink"
    >
      ?
    </button>
  );
}
