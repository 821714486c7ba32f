"use client";

/**
 * The header's notifications: a button with the unread count, and a list of
 * the latest notifications (review requests, decisions, approvals, mentions in comments). Opening
 * one marks it read and goes to its derivation; "Mark all read" clears the count.
 */
import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import clsx from "clsx";
import { useRouter } from "next/navigation";
import { useEffect, useId, useRef, useState } from "react";
import { mayLeave } from "@/components/collab/use-leave-guard";
import { useShortcut } from "@/components/shortcuts";
import { apiFetch } from "@/lib/api/fetcher";
import { formatRecordTime } from "@/lib/history/format";

export interface NotificationItem {
  id: string;
  kind: string;
  text: string;
  derivationId: string | null;
  derivationTitle: string | null;
  actorName: string | null;
  readAt: string | null;
  createdAt: string;
}

interface NotificationsAnswer {
  unread: number;
  notifications: NotificationItem[];
}

export const notificationsKey = ["notifications"] as const;

const kindMarks: Record<string, string> = { review_request: "◐", signed_off: "✓", changes_requested: "✕", approved: "●", mention: "@" };

function BellMark() {
  return (
    <svg aria-hidden viewBox="0 0 20 20" className="h-4 w-4" fill="none" stroke="currentColor" strokeWidth="1.6">
      <path d="M5 14.5h10l-1.3-2V9a3.7 3.7 0 0 0-7.4 0v3.5z" strokeLinejoin="round" />
      <path d="M8.3 16.5a1.8 1.8 0 0 0 3.4 0" />
    </svg>
  );
}

export function NotificationsMenu() {
  const router = useRouter();
  const queryClient = useQueryClient();
  const [open, setOpen] = useState(false);
  const buttonRef = useRef<HTMLButtonElement>(null);
  const panelRef = useRef<HTMLDivElement>(null);
  const panelId = useId();

  const query = useQuery({
    queryKey: notificationsKey,
    queryFn: ({ signal }) => apiFetch<NotificationsAnswer>("/api/notifications", { signal }),
    refetchInterval: 60_000,
    refetchOnWindowFocus: true,
  });
  const markRead = useMutation({
    mutationFn: (ids?: string[]) => apiFetch<void>("/api/notifications/read", { method: "POST", body: ids ? { ids } : {} }),
    onSettled: () => queryClient.invalidateQueries({ queryKey: notificationsKey }),
  });

  const unread = query.data?.unread ?? 0;
  const items = query.data?.notifications ?? [];

  useShortcut("g n", "Open your notifications", () => setOpen(true));

  // Focus moves into the list when it opens; Escape or a click elsewhere closes it.
  const { refetch } = query;
  useEffect(() => {
    if (!open) return;
    void refetch();
    panelRef.current?.querySelector<HTMLElement>("a, button")?.focus();
    function onPointerDown(event: PointerEvent) {
      const target = event.target as Node;
      if (!panelRef.current?.contains(target) && !buttonRef.current?.contains(target)) setOpen(false);
    }
    document.addEventListener("pointerdown", onPointerDown);
    return () => document.removeEventListener("pointerdown", onPointerDown);
    // refetch is stable per query, so in effect only opening runs this.
  }, [open, refetch]);

  function close() {
    setOpen(false);
    buttonRef.current?.focus();
  }

  function openItem(item: NotificationItem) {
    if (!item.readAt) markRead.mutate([item.id]);
    setOpen(false);
    const derivationId = item.derivationId;
    if (derivationId) void mayLeave().then((leave) => leave && router.push(`/derivations/${derivationId}`));
  }

  return (
    <div className="relative">
      <button
        ref={buttonRef}
        type="button"
        aria-expanded={open}
        aria-controls={panelId}
        aria-label={unread > 0 ? `Notifications, ${unread} unread` : "Notifications"}
        title="Notifications (g then n)"
        data-testid="notifications-button"
        onClick={() => setOpen((value) => !value)}
        className="relative flex items-center gap-1 rounded border border-transparent px-2 py-1 text-sm text-muted hover:border-line hover:text-ink"
      >
        <BellMark />
        {unread > 0 ? (
          <span className="min-w-[1.25rem] rounded-full bg-action px-1 text-center text-xs font-semibold text-action-ink" data-testid="unread-count">
            {unread > 99 ? "99+" : unread}
          </span>
        ) : null}
      </button>
      {open ? (
        <div
          ref={panelRef}
          id={panelId}
          role="region"
          aria-label="Notifications"
          data-testid="notifications-panel"
          onKeyDown={(event) => {
            if (event.key === "Escape") {
              event.stopPropagation();
              close();
            }
          }}
          className="absolute right-0 z-40 mt-1 w-[min(24rem,calc(100vw-1.5rem))] rounded border border-line bg-surface text-sm shadow-lg"
        >
          <div className="flex items-center justify-between gap-2 border-b border-line px-3 py-2">
            <h2 className="font-semibold">Notifications</h2>
            <button
              type="button"
              className="text-xs text-action hover:underline disabled:text-muted disabled:no-underline"
              disabled={unread === 0 || markRead.isPending}
              onClick={() => markRead.mutate(undefined)}
            >
              Mark all read
            </button>
          </div>
          {query.isError ? (
            <p className="px-3 py-3 text-danger" role="alert">
              Notifications could not be loaded: {query.error.message}
            </p>
          ) : items.length === 0 ? (
            <p className="px-3 py-3 text-muted">{query.isPending ? "Loading…" : "Nothing yet. Review requests, decisions and approvals show up here."}</p>
          ) : (
            <ul className="max-h-[60vh] divide-y divide-line overflow-y-auto" data-testid="notification-list">
              {items.map((item) => (
                <li key={item.id}>
                  <button
                    type="button"
                    onClick={() => openItem(item)}
                    className={clsx(
                      "flex w-full gap-2 px-3 py-2 text-left hover:bg-sunken focus:bg-sunken focus:outline-none",
                      item.readAt ? "text-muted" : "text-ink",
                    )}
                    data-testid="notification"
                    data-unread={item.readAt ? undefined : "true"}
                  >
                    <span
                      aria-hidden
                      className={clsx(
                        "mt-0.5 w-4 shrink-0 text-center",
                        item.kind === "approved" ? "text-seal" : item.kind === "changes_requested" ? "text-danger" : "text-action",
                      )}
                    >
                      {kindMarks[item.kind] ?? "•"}
                    </span>
                    <span className="min-w-0 flex-1">
                      <span className={item.readAt ? "" : "font-medium"}>
                        {item.actorName ?? "Someone"} {item.text}
                      </span>
                      <span className="block text-xs text-muted">
                        {formatRecordTime(item.createdAt)}
                        {item.readAt ? "" : " · unread"}
                      </span>
                    </span>
                  </button>
                </li>
              ))}
            </ul>
          )}
        </div>
      ) : null}
    </div>
  );
}
