"use client";

import { keepPreviousData, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { createColumnHelper, rowSortingFeature, tableFeatures, useTable, type SortingState } from "@tanstack/react-table";
import Link from "next/link";
import { useRouter } from "next/navigation";
import { useEffect, useRef, useState } from "react";
import { useShortcut } from "@/components/shortcuts";
import { Button } from "@/components/ui/button";
import { inputClass } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { StatusBadge } from "@/components/ui/status-badge";
import { apiFetch } from "@/lib/api/fetcher";
import { can } from "@/lib/auth/permissions";
import type { DerivationPageJson, DerivationSummaryJson } from "@/lib/derivations/views";
import { derivationStatuses, roleLabels, statusLabels, type DerivationStatus, type MemberRole } from "@/lib/domain";
import { DeleteDerivationDialog, DerivationTitleDialog } from "./derivation-dialogs";
import { ImportDerivationDialog, NewDerivationDialog } from "./new-derivation-dialogs";
import { derivationListKey, trashKey } from "./query-keys";

export type DerivationRow = DerivationSummaryJson;
type DerivationPage = DerivationPageJson;

// Sorting, filtering and paging happen on the server (the table only shows one page),
// so the table keeps the sorting state but no client-side sorted row model.
const features = tableFeatures({ rowSortingFeature });
const helper = createColumnHelper<typeof features, DerivationRow>();
const columns = helper.columns([
  helper.accessor("title", { header: "Title" }),
  helper.accessor("status", { id: "status", header: "Status" }),
  helper.accessor((row) => row.ownerName ?? "", { id: "owner", header: "Owner" }),
  helper.accessor("coordinatesCount", { id: "coordinates", header: "Coordinates" }),
  helper.accessor((row) => row.updatedAt, { id: "updatedAt", header: "Last edited" }),
]);
const PAGE_SIZE = 20;

const dateFormat = new Intl.DateTimeFormat("en-GB", { dateStyle: "medium", timeStyle: "short" });
const emptyRows: DerivationRow[] = [];

export function DerivationsBoard({
  teamId,
  role,
  currentUserId,
  owners,
}: {
  teamId: string;
  role: MemberRole;
  currentUserId: string;
  owners: { id: string; name: string }[];
}) {
  const queryClient = useQueryClient();
  const router = useRouter();
  const [statusFilter, setStatusFilter] = useState<DerivationStatus | "">("");
  const [ownerFilter, setOwnerFilter] = useState("");
  const [search, setSearch] = useState("");
  const [searchTerm, setSearchTerm] = useState("");
  const [sorting, setSorting] = useState<SortingState>([{ id: "updatedAt", desc: true }]);
  // Typing in the search box asks the server once the typing pauses.
  useEffect(() => {
    const timer = setTimeout(() => setSearchTerm(search.trim()), 250);
    return () => clearTimeout(timer);
  }, [search]);
  // The page belongs to one choice of filters and sorting: another choice starts again at page 1.
  const listing = JSON.stringify([statusFilter, ownerFilter, searchTerm, sorting]);
  const [paging, setPaging] = useState({ listing, page: 1 });
  const page = paging.listing === listing ? paging.page : 1;
  const setPage = (next: (page: number) => number) => setPaging({ listing, page: next(page) });
  const sort = sorting[0];
  const params = new URLSearchParams({ page: String(page), pageSize: String(PAGE_SIZE) });
  if (sort) {
    params.set("sort", sort.id);
    params.set("direction", sort.desc ? "desc" : "asc");
  }
  if (statusFilter) params.set("status", statusFilter);
  if (ownerFilter) params.set("ownerId", ownerFilter);
  if (searchTerm) params.set("search", searchTerm);
  const listKey = derivationListKey(teamId);
  const { data, error, isPending, isFetching, dataUpdatedAt } = useQuery({
    queryKey: [...listKey, params.toString()],
    queryFn: ({ signal }) => apiFetch<DerivationPage>(`/api/teams/${teamId}/derivations?${params.toString()}`, { signal }),
    placeholderData: keepPreviousData,
  });
  const [creating, setCreating] = useState(false);
  const [importing, setImporting] = useState(false);
  const [renaming, setRenaming] = useState<DerivationRow | null>(null);
  const [deleting, setDeleting] = useState<DerivationRow | null>(null);
  const [trashed, setTrashed] = useState<{ row: DerivationRow; at: number } | null>(null);
  const searchRef = useRef<HTMLInputElement>(null);
  const mayCreate = can(role, "derivation:create");

  useShortcut("/", "Search derivations by title", () => searchRef.current?.focus());
  useShortcut("n", "New derivation", () => setCreating(true), mayCreate);
  useShortcut("i", "Import a model file", () => setImporting(true), mayCreate);

  const rows = data?.derivations ?? emptyRows;
  // Listed again in an answer read after the deletion (restored from the trash panel, say): nothing left to
  // undo. Adjusted while rendering (React's pattern for state that follows other values), not in an effect.
  if (trashed && dataUpdatedAt > trashed.at && rows.some((row) => row.id === trashed.row.id)) setTrashed(null);
  const total = data?.total ?? 0;
  const pages = Math.max(1, Math.ceil(total / PAGE_SIZE));
  const filtered = Boolean(statusFilter || ownerFilter || searchTerm);

  const table = useTable({ features, columns, data: rows, state: { sorting }, onSortingChange: setSorting, manualSorting: true, enableSortingRemoval: false });

  const refresh = () => queryClient.invalidateQueries({ queryKey: listKey });
  const opened = (id: string) => {
    setCreating(false);
    setImporting(false);
    void refresh();
    router.push(`/derivations/${id}`);
  };
  const rename = useMutation({
    mutationFn: ({ id, title }: { id: string; title: string }) => apiFetch(`/api/derivations/${id}`, { method: "PATCH", body: { title } }),
    onSuccess: () => {
      setRenaming(null);
      return refresh();
    },
  });
  // Deleting moves the derivation to the team's trash; the notice offers to undo it at once.
  const remove = useMutation({
    mutationFn: (row: DerivationRow) => apiFetch(`/api/derivations/${row.id}`, { method: "DELETE" }),
    onSuccess: (_answer, row) => {
      setDeleting(null);
      setTrashed({ row, at: Date.now() });
      void queryClient.invalidateQueries({ queryKey: trashKey(teamId) });
      return refresh();
    },
  });
  const undo = useMutation({
    mutationFn: (row: DerivationRow) => apiFetch(`/api/teams/${teamId}/trash/${row.id}/restore`, { method: "POST" }),
    onSuccess: () => {
      setTrashed(null);
      void queryClient.invalidateQueries({ queryKey: trashKey(teamId) });
      return refresh();
    },
  });

  return (
    <section aria-labelledby="derivations-heading" className="space-y-4">
      <div className="flex flex-wrap items-end gap-3">
        <h2 id="derivations-heading" className="mr-auto text-lg font-semibold">
          Derivations
        </h2>
        <label className="text-sm">
          <span className="mb-1 block text-xs text-muted">Search</span>
          <input
            ref={searchRef}
            type="search"
            value={search}
            onChange={(event) => setSearch(event.target.value)}
            placeholder="Title contains…  ( / )"
            className={`${inputClass} w-56`}
            aria-label="Search derivations"
          />
        </label>
        <label className="text-sm">
          <span className="mb-1 block text-xs text-muted">Status</span>
          <select
            value={statusFilter}
            onChange={(event) => setStatusFilter(event.target.value as DerivationStatus | "")}
            className={inputClass}
            aria-label="Filter by status"
          >
            <option value="">Any status</option>
            {derivationStatuses.map((status) => (
              <option key={status} value={status}>
                {statusLabels[status]}
              </option>
            ))}
          </select>
        </label>
        <label className="text-sm">
          <span className="mb-1 block text-xs text-muted">Owner</span>
          <select value={ownerFilter} onChange={(event) => setOwnerFilter(event.target.value)} className={inputClass} aria-label="Filter by owner">
            <option value="">Anyone</option>
            <option value={currentUserId}>Me</option>
            {owners
              .filter((owner) => owner.id !== currentUserId)
              .map((owner) => (
                <option key={owner.id} value={owner.id}>
                  {owner.name}
                </option>
              ))}
          </select>
        </label>
        {mayCreate ? (
          <>
            <Button onClick={() => setImporting(true)} title="Import a model file (i)">
              Import
            </Button>
            <Button variant="primary" onClick={() => setCreating(true)} title="New derivation (n)">
              New derivation
            </Button>
          </>
        ) : null}
      </div>

      {!mayCreate ? (
        <p className="text-sm text-muted" data-testid="read-only-note">
          As {roleLabels[role].toLowerCase()} you can read this team&apos;s derivations; creating and editing them is for analysts and leads.
        </p>
      ) : null}

      {error ? <Notice tone="error">{error.message}</Notice> : null}
      {trashed ? (
        <div className="flex flex-wrap items-center gap-3 rounded border border-line bg-surface px-3 py-2 text-sm" role="status" data-testid="trashed-notice">
          <span className="mr-auto">
            Moved <strong>{trashed.row.title}</strong> to the team&apos;s trash.
            {undo.error ? <span className="text-danger"> Could not undo: {undo.error.message}</span> : null}
          </span>
          <Button size="sm" onClick={() => undo.mutate(trashed.row)} disabled={undo.isPending}>
            {undo.isPending ? "Restoring…" : "Undo"}
          </Button>
          <Button size="sm" variant="ghost" onClick={() => setTrashed(null)} aria-label="Dismiss">
            ✕
          </Button>
        </div>
      ) : null}

      {/* relative: the header's screen-reader-only text is positioned inside this scroll box, not the page (which it would widen on a phone). */}
      <div className="relative overflow-x-auto rounded border border-line bg-surface">
        <table className="w-full text-sm" data-testid="derivations-table">
          <thead className="border-b border-line bg-sunken/60 text-left">
            {table.getHeaderGroups().map((group) => (
              <tr key={group.id}>
                {group.headers.map((header) => {
                  const sorted = header.column.getIsSorted();
                  return (
                    <th
                      key={header.id}
                      scope="col"
                      aria-sort={sorted === "asc" ? "ascending" : sorted === "desc" ? "descending" : "none"}
                      className="px-3 py-2 font-medium"
                    >
                      <button type="button" onClick={header.column.getToggleSortingHandler()} className="inline-flex items-center gap-1 hover:text-action">
                        <table.FlexRender header={header} />
                        <span aria-hidden className="text-xs text-muted">
                          {sorted === "asc" ? "▲" : sorted === "desc" ? "▼" : "↕"}
                        </span>
                      </button>
                    </th>
                  );
                })}
                <th scope="col" className="px-3 py-2 text-right font-medium">
                  <span className="sr-only">Actions</span>
                </th>
              </tr>
            ))}
          </thead>
          <tbody>
            {table.getRowModel().rows.map((tableRow) => {
              const row = tableRow.original;
              return (
                <tr key={row.id} className="border-b border-line last:border-0 hover:bg-sunken/40">
                  <td className="px-3 py-2">
                    <Link href={`/derivations/${row.id}`} className="font-medium text-ink hover:text-action hover:underline">
                      {row.title}
                    </Link>
                  </td>
                  <td className="px-3 py-2">
                    <StatusBadge status={row.status} />
                  </td>
                  <td className="px-3 py-2 text-muted">{row.ownerName ?? "—"}</td>
                  <td className="px-3 py-2 text-right tabular-nums text-muted" data-testid="coordinates-count">
                    {row.coordinatesCount}
                  </td>
                  <td className="px-3 py-2 whitespace-nowrap text-muted">
                    {dateFormat.format(new Date(row.updatedAt))}
                    {row.updatedByName ? <span className="hidden lg:inline"> · by {row.updatedByName}</span> : null}
                  </td>
                  <td className="px-3 py-2 text-right whitespace-nowrap">
                    {can(role, "derivation:rename", { status: row.status }) ? (
                      <Button size="sm" variant="ghost" onClick={() => setRenaming(row)} aria-label={`Rename ${row.title}`}>
                        Rename
                      </Button>
                    ) : null}
                    {can(role, "derivation:delete", { status: row.status, isOwner: row.ownerId === currentUserId }) ? (
                      <Button size="sm" variant="ghost" onClick={() => setDeleting(row)} aria-label={`Delete ${row.title}`} className="hover:text-danger">
                        Delete
                      </Button>
                    ) : null}
                  </td>
                </tr>
              );
            })}
            {!isPending && rows.length === 0 ? (
              <tr>
                <td colSpan={6} className="px-3 py-8 text-center text-muted">
                  {filtered ? "No derivation matches these filters." : "No derivations yet."}
                </td>
              </tr>
            ) : null}
            {isPending ? (
              <tr>
                <td colSpan={6} className="px-3 py-8 text-center text-muted">
                  Loading…
                </td>
              </tr>
            ) : null}
          </tbody>
        </table>
      </div>
      <nav className="flex items-center justify-between gap-3 text-sm text-muted" aria-label="Pages">
        <span data-testid="derivations-total">
          {total === 0 ? "No derivations" : `${(page - 1) * PAGE_SIZE + 1}–${Math.min(page * PAGE_SIZE, total)} of ${total}`}
          {isFetching && !isPending ? " · updating…" : ""}
        </span>
        <span className="flex items-center gap-2">
          <Button size="sm" onClick={() => setPage((p) => Math.max(1, p - 1))} disabled={page <= 1}>
            Previous
          </Button>
          <span>
            Page {page} of {pages}
          </span>
          <Button size="sm" onClick={() => setPage((p) => Math.min(pages, p + 1))} disabled={page >= pages}>
            Next
          </Button>
        </span>
      </nav>

      <NewDerivationDialog open={creating} teamId={teamId} onCreated={opened} onClose={() => setCreating(false)} />
      <ImportDerivationDialog open={importing} teamId={teamId} onImported={opened} onClose={() => setImporting(false)} />
      <DerivationTitleDialog
        open={renaming !== null}
        heading="Rename derivation"
        submitLabel="Rename"
        initialTitle={renaming?.title ?? ""}
        pending={rename.isPending}
        error={rename.error}
        onSubmit={(title) => renaming && rename.mutate({ id: renaming.id, title })}
        onClose={() => {
          setRenaming(null);
          rename.reset();
        }}
      />
      <DeleteDerivationDialog
        derivation={deleting}
        pending={remove.isPending}
        error={remove.error}
        onConfirm={() => deleting && remove.mutate(deleting)}
        onClose={() => {
          setDeleting(null);
          remove.reset();
        }}
      />
    </section>
  );
}
