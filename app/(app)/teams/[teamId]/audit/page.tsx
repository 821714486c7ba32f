import type { Metadata } from "next";
import Link from "next/link";
import { Notice } from "@/components/ui/notice";
import { inputClass } from "@/components/ui/field";
import { getAuditActionsByTeamId, getAuditRowsByTeamId } from "@/db/queries/audit";
import { getMembersByTeamId } from "@/db/queries/teams";
import { auditFiltersOf, auditRowView } from "@/lib/audit";
import { loadTeamFor, orNotFound } from "@/lib/auth/access";
import { requirePageUser } from "@/lib/auth/session";
import { auditQuerySchema, type AuditQuery } from "@/lib/validation/audit";

export const metadata: Metadata = { title: "Audit log" };

const PAGE_SIZE = 200;

type SearchParams = Record<string, string | string[] | undefined>;

function firstValues(params: SearchParams): Record<string, string> {
  return Object.fromEntries(
    Object.entries(params).flatMap(([key, value]) => (typeof value === "string" ? [[key, value]] : Array.isArray(value) && value[0] ? [[key, value[0]]] : [])),
  );
}

/** A lead's view of the team's audit log: filters in the query string, newest first, CSV export of the same filter. */
export default async function TeamAuditPage({ params, searchParams }: { params: Promise<{ teamId: string }>; searchParams: Promise<SearchParams> }) {
  const { teamId } = await params;
  const user = await requirePageUser(`/teams/${teamId}/audit`);
  const { team } = await orNotFound(() => loadTeamFor(user, teamId, "team:audit"));
  const raw = firstValues(await searchParams);
  const page = Math.max(0, Math.min(1000, Number.parseInt(raw.page ?? "0", 10) || 0));
  const parsed = auditQuerySchema.safeParse({ ...raw, format: "json" });
  const query: AuditQuery = parsed.success ? parsed.data : { action: undefined, format: "json" };
  const [rows, actions, members] = await Promise.all([
    getAuditRowsByTeamId({ teamId: team.id, filters: auditFiltersOf(query), limit: PAGE_SIZE + 1, offset: page * PAGE_SIZE }),
    getAuditActionsByTeamId({ teamId: team.id }),
    getMembersByTeamId({ teamId: team.id }),
  ]);
  const views = rows.slice(0, PAGE_SIZE).map(auditRowView);
  const filterParams = new URLSearchParams(Object.entries(query).filter(([key, value]) => key !== "format" && typeof value === "string") as [string, string][]);
  const csvHref = `/api/teams/${team.id}/audit?${new URLSearchParams([...filterParams, ["format", "csv"]])}`;
  const pageHref = (to: number) => `/teams/${team.id}/audit?${new URLSearchParams([...filterParams, ["page", String(to)]])}`;

  return (
    <div className="space-y-6">
      <div>
        <Link href={`/teams/${team.id}`} className="text-sm text-action hover:underline">
          ← {team.name}
        </Link>
        <h1 className="text-2xl font-semibold">Audit log</h1>
        <p className="text-sm text-muted">
          Every recorded action in this team and its members&apos; sign-ins, newest first. Records cannot be changed or deleted.
        </p>
      </div>
      <form method="get" className="flex flex-wrap items-end gap-3 rounded border border-line bg-surface p-3" aria-label="Filter the audit log">
        <label className="space-y-1 text-sm">
          <span className="block font-medium">Action</span>
          <select name="action" defaultValue={query.action ?? ""} className={inputClass}>
            <option value="">All actions</option>
            {[...new Set(actions.map((action) => `${action.split(".")[0]}.`))].map((prefix) => (
              <option key={prefix} value={prefix}>
                {prefix}*
              </option>
            ))}
            {actions.map((action) => (
              <option key={action} value={action}>
                {action}
              </option>
            ))}
          </select>
        </label>
        <label className="space-y-1 text-sm">
          <span className="block font-medium">Person</span>
          <select name="actor" defaultValue={query.actor ?? ""} className={inputClass}>
            <option value="">Anyone</option>
            {members.map((member) => (
              <option key={member.userId} value={member.userId}>
                {member.name}
              </option>
            ))}
          </select>
        </label>
        <label className="space-y-1 text-sm">
          <span className="block font-medium">From</span>
          <input type="date" name="from" defaultValue={query.from ?? ""} className={inputClass} />
        </label>
        <label className="space-y-1 text-sm">
          <span className="block font-medium">To (inclusive)</span>
          <input type="date" name="to" defaultValue={query.to ?? ""} className={inputClass} />
        </label>
        <button
          type="submit"
          className="rounded border border-action bg-action px-3 py-1.5 text-sm font-medium text-action-ink hover:border-action-strong hover:bg-action-strong"
        >
          Filter
        </button>
        <a href={csvHref} className="ml-auto text-sm text-action hover:underline" data-testid="audit-csv">
          Download CSV
        </a>
      </form>
      {!parsed.success ? (
        <Notice tone="error">Some filters were not understood and were ignored: {parsed.error.issues.map((issue) => issue.message).join(" ")}</Notice>
      ) : null}
      <div className="overflow-x-auto rounded border border-line bg-surface">
        <table className="w-full text-sm" data-testid="audit-table">
          <thead className="border-b border-line bg-sunken/60 text-left">
            <tr>
              <th scope="col" className="px-3 py-2 font-medium">
                Time (UTC)
              </th>
              <th scope="col" className="px-3 py-2 font-medium">
                Action
              </th>
              <th scope="col" className="px-3 py-2 font-medium">
                Person
              </th>
              <th scope="col" className="px-3 py-2 font-medium">
                Target
              </th>
              <th scope="col" className="px-3 py-2 font-medium">
                Address
              </th>
              <th scope="col" className="px-3 py-2 font-medium">
                Details
              </th>
            </tr>
          </thead>
          <tbody>
            {views.length === 0 ? (
              <tr>
                <td colSpan={6} className="px-3 py-6 text-center text-muted">
                  No events match these filters.
                </td>
              </tr>
            ) : (
              views.map((row) => (
                <tr key={row.id} className="border-b border-line align-top last:border-0">
                  <td className="whitespace-nowrap px-3 py-2 font-mono text-xs">{row.at.replace("T", " ").slice(0, 19)}</td>
                  <td className="whitespace-nowrap px-3 py-2 font-mono text-xs">{row.action}</td>
                  <td className="px-3 py-2">{row.actor}</td>
                  <td className="px-3 py-2 text-muted">
                    {row.targetType}
                    {row.targetId ? <span className="block font-mono text-xs">{row.targetId.slice(0, 8)}</span> : null}
                  </td>
                  <td className="whitespace-nowrap px-3 py-2 font-mono text-xs">{row.address ?? "—"}</td>
                  <td className="max-w-md break-words px-3 py-2 font-mono text-xs text-muted">
                    {Object.keys(row.details).length > 0 ? JSON.stringify(row.details) : ""}
                  </td>
                </tr>
              ))
            )}
          </tbody>
        </table>
      </div>
      <nav className="flex justify-between text-sm" aria-label="Audit log pages">
        {page > 0 ? (
          <Link href={pageHref(page - 1)} className="text-action hover:underline">
            ← Newer
          </Link>
        ) : (
          <span />
        )}
        {rows.length > PAGE_SIZE ? (
          <Link href={pageHref(page + 1)} className="text-action hover:underline">
            Older →
          </Link>
        ) : (
          <span />
        )}
      </nav>
    </div>
  );
}
