"use client";

import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { useState } from "react";
import { Button } from "@/components/ui/button";
import { Dialog } from "@/components/ui/dialog";
import { Notice } from "@/components/ui/notice";
import { StatusBadge } from "@/components/ui/status-badge";
import { apiFetch } from "@/lib/api/fetcher";
import { can } from "@/lib/auth/permissions";
import type { DerivationStatus, MemberRole } from "@/lib/domain";
import { derivationListKey, trashKey } from "./query-keys";

export interface TrashedRow {
  id: string;
  title: string;
  status: DerivationStatus;
  ownerId: string | null;
  ownerName: string | null;
  deletedAt: string;
  deletedBy: { id: string; name: string | null } | null;
  purgeAt: string;
}

interface TrashPage {
  retentionDays: number;
  derivations: TrashedRow[];
}

const dateFormat = new Intl.DateTimeFormat("en-GB", { dateStyle: "medium", timeStyle: "short" });
const dayFormat = new Intl.DateTimeFormat("en-GB", { dateStyle: "medium" });

/** Whole days (started days count) until `purgeAt`; never more than the retention period, whatever the clocks say. */
function daysLeft(purgeAt: string, now: number, retentionDays: number): number {
  return Math.min(retentionDays, Math.max(0, Math.ceil((Date.parse(purgeAt) - now) / 86_400_000)));
}

/**
 * The team's trash on the dashboard: what was deleted, by whom and when, and
 * until when it can be restored. The owner or a lead restores; a lead may
 * also remove an entry for good before its time is up.
 */
export function TrashPanel({ teamId, role, currentUserId }: { teamId: string; role: MemberRole; currentUserId: string }) {
  const queryClient = useQueryClient();
  const [open, setOpen] = useState(false);
  const [purging, setPurging] = useState<TrashedRow | null>(null);
  // Days left are counted from when the list was read, not from when the panel mounted.
  const { data, error, isPending, dataUpdatedAt } = useQuery({
    queryKey: trashKey(teamId),
    queryFn: ({ signal }) => apiFetch<TrashPage>(`/api/teams/${teamId}/trash`, { signal }),
  });
  const refresh = () =>
    Promise.all([queryClient.invalidateQueries({ queryKey: trashKey(teamId) }), queryClient.invalidateQueries({ queryKey: derivationListKey(teamId) })]);
  const restore = useMutation({
    mutationFn: (row: TrashedRow) => apiFetch(`/api/teams/${teamId}/trash/${row.id}/restore`, { method: "POST" }),
    onSuccess: refresh,
  });
  const purge = useMutation({
    mutationFn: (row: TrashedRow) => apiFetch(`/api/teams/${teamId}/trash/${row.id}`, { method: "DELETE" }),
    onSuccess: () => {
      setPurging(null);
      return refresh();
    },
  });

  const rows = data?.derivations ?? [];
  return (
    <section aria-labelledby="trash-heading" className="space-y-3" data-testid="trash-panel">
      <h2 id="trash-heading" className="text-lg font-semibold">
        <button
          type="button"
          aria-expanded={open}
          aria-controls="trash-list"
          onClick={() => setOpen((value) => !value)}
          className="inline-flex items-center gap-2 hover:text-action"
        >
          <span aria-hidden className="text-xs text-muted">
            {open ? "▼" : "▶"}
          </span>
          Trash
          <span className="text-sm font-normal text-muted" data-testid="trash-count">
            {isPending ? "" : `(${rows.length})`}
          </span>
        </button>
      </h2>
      {open ? (
        <div id="trash-list" className="space-y-3">
          <p className="text-sm text-muted">
            Deleted derivations stay here with their runs and files for {data?.retentionDays ?? 30} days; their owner or a lead can restore them. After that
            they are removed for good.
          </p>
          {error ? <Notice tone="error">{error.message}</Notice> : null}
          {restore.error ? <Notice tone="error">Could not restore: {restore.error.message}</Notice> : null}
          <div className="overflow-x-auto rounded border border-line bg-surface">
            <table className="w-full text-sm" data-testid="trash-table">
              <thead className="border-b border-line bg-sunken/60 text-left">
                <tr>
                  <th scope="col" className="px-3 py-2 font-medium">
                    Title
                  </th>
                  <th scope="col" className="px-3 py-2 font-medium">
                    Status
                  </th>
                  <th scope="col" className="px-3 py-2 font-medium">
                    Owner
                  </th>
                  <th scope="col" className="px-3 py-2 font-medium">
                    Deleted
                  </th>
                  <th scope="col" className="px-3 py-2 font-medium">
                    Removed for good
                  </th>
                  <th scope="col" className="px-3 py-2 text-right font-medium">
                    <span className="sr-only">Actions</span>
                  </th>
                </tr>
              </thead>
              <tbody>
                {rows.map((row) => {
                  const context = { status: row.status, isOwner: row.ownerId === currentUserId };
                  const left = daysLeft(row.purgeAt, dataUpdatedAt, data?.retentionDays ?? 30);
                  return (
                    <tr key={row.id} className="border-b border-line last:border-0">
                      <td className="px-3 py-2 font-medium">{row.title}</td>
                      <td className="px-3 py-2">
                        <StatusBadge status={row.status} />
                      </td>
                      <td className="px-3 py-2 text-muted">{row.ownerName ?? "—"}</td>
                      <td className="px-3 py-2 whitespace-nowrap text-muted">
                        {dateFormat.format(new Date(row.deletedAt))}
                        {row.deletedBy ? <span> · by {row.deletedBy.name ?? "a former member"}</span> : null}
                      </td>
                      <td className="px-3 py-2 whitespace-nowrap text-muted">
                        {dayFormat.format(new Date(row.purgeAt))} ({left === 1 ? "1 day" : `${left} days`} left)
                      </td>
                      <td className="px-3 py-2 text-right whitespace-nowrap">
                        {can(role, "derivation:restore", context) ? (
                          <Button
                            size="sm"
                            variant="ghost"
                            onClick={() => restore.mutate(row)}
                            disabled={restore.isPending}
                            aria-label={`Restore ${row.title}`}
                          >
                            Restore
                          </Button>
                        ) : null}
                        {can(role, "derivation:purge", context) ? (
                          <Button
                            size="sm"
                            variant="ghost"
                            onClick={() => setPurging(row)}
                            aria-label={`Delete ${row.title} for good`}
                            className="hover:text-danger"
                          >
                            Delete for good
                          </Button>
                        ) : null}
                      </td>
                    </tr>
                  );
                })}
                {!isPending && rows.length === 0 ? (
                  <tr>
                    <td colSpan={6} className="px-3 py-6 text-center text-muted">
                      The trash is empty.
                    </td>
                  </tr>
                ) : null}
              </tbody>
            </table>
          </div>
        </div>
      ) : null}
      <Dialog
        open={purging !== null}
        onClose={() => {
          setPurging(null);
          purge.reset();
        }}
        title="Delete for good"
      >
        <div className="space-y-4">
          {purge.error ? <Notice tone="error">{purge.error.message}</Notice> : null}
          <p className="text-sm">
            Delete <strong>{purging?.title}</strong> for good, with its stored runs and files? This cannot be undone.
          </p>
          <div className="flex justify-end gap-2">
            <Button onClick={() => setPurging(null)}>Keep it</Button>
            <Button variant="danger" onClick={() => purging && purge.mutate(purging)} disabled={purge.isPending}>
              {purge.isPending ? "Deleting…" : "Delete for good"}
            </Button>
          </div>
        </div>
      </Dialog>
    </section>
  );
}
