"use client";

/**
 * The connection to the shared document, in words: connecting, live (and for
 * editors "Saved" only once the server has stored every edit of theirs),
 * offline with the edits not yet stored, or refused with the server's reason.
 */
import clsx from "clsx";
import type { ConnectionState } from "./shared-session";

export interface ConnectionStatusProps {
  connection: ConnectionState;
  /** This person writes: say whether their edits are stored. */
  editor: boolean;
  pending: number;
  synced: boolean;
}

function edits(count: number): string {
  return count === 1 ? "1 edit" : `${count} edits`;
}

/** What the page says, and the `data-state` tests read. */
export function connectionText({ connection, editor, pending, synced }: ConnectionStatusProps): {
  state: string;
  text: string;
  tone: "muted" | "ok" | "warn" | "danger";
} {
  switch (connection.state) {
    case "connecting":
      return { state: "connecting", text: synced ? "Reconnecting…" : "Connecting…", tone: "muted" };
    case "live":
      if (!editor) return { state: "live", text: "Live", tone: "ok" };
      return pending > 0 ? { state: "saving", text: "Saving…", tone: "muted" } : { state: "saved", text: "Saved", tone: "ok" };
    case "offline":
      return {
        state: "offline",
        text: editor && pending > 0 ? `Offline — ${edits(pending)} not yet stored; they are sent when the connection returns` : "Offline — reconnecting",
        tone: "warn",
      };
    case "refused":
      return {
        state: "refused",
        text: `Refused: ${connection.reason}${editor && pending > 0 ? ` — ${edits(pending)} not stored` : ""}`,
        tone: "danger",
      };
  }
}

export function ConnectionStatus(props: ConnectionStatusProps) {
  const { state, text, tone } = connectionText(props);
  return (
    <span
      className={clsx("flex items-center gap-2", tone === "danger" ? "text-danger" : tone === "warn" ? "text-seal" : "text-muted")}
      role="status"
      aria-live="polite"
      data-testid="connection-status"
      data-state={state}
    >
      <span
        aria-hidden
        className={clsx(
          "inline-block h-2 w-2 shrink-0 rounded-full",
          tone === "ok" ? "bg-action" : tone === "danger" ? "bg-danger" : tone === "warn" ? "bg-seal" : "animate-pulse bg-muted",
        )}
      />
      {text}
    </span>
  );
}
