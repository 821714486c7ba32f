import "server-only";
import type { AuditFilters, AuditRow } from "@/db/queries/audit";
import type { AuditQuery } from "@/lib/validation/audit";

/** The database filters for a validated query; `to` names a whole day, so the bound is the next midnight (UTC). */
export function auditFiltersOf(query: AuditQuery): AuditFilters {
  const day = 24 * 3600 * 1000;
  return {
    action: query.action,
    actorId: query.actor,
    from: query.from ? new Date(`${query.from}T00:00:00Z`) : undefined,
    to: query.to ? new Date(Date.parse(`${query.to}T00:00:00Z`) + day) : undefined,
  };
}

/** One row as the page and the API show it. */
export function auditRowView(row: AuditRow) {
  return {
    id: row.id,
    at: row.createdAt.toISOString(),
    action: row.action,
    actorId: row.actorId,
    actor: row.actorName ?? (row.actorId ? "(removed account)" : "(unknown)"),
    actorEmail: row.actorEmail,
    targetType: row.targetType,
    targetId: row.targetId,
    address: row.address,
    details: row.details,
  };
}
export type AuditRowView = ReturnType<typeof auditRowView>;

const CSV_COLUMNS = ["time", "action", "actor", "actor_email", "target_type", "target_id", "address", "details"] as const;

// RFC 4180: a field with a comma, quote or line break is quoted, quotes doubled. A leading
// = + - @ is prefixed with ' so a spreadsheet opening the file does not run it as a formula.
function csvField(value: string): string {
  const safe = /^[=+\-@\t\r]/.test(value) ? `'${value}` : value;
  return /[",\r\n]/.test(safe) ? `"${safe.replace(/"/g, '""')}"` : safe;
}

/** The audit rows as CSV (header first, CRLF line ends as RFC 4180 writes them). */
export function auditCsv(rows: AuditRowView[]): string {
  const lines = [CSV_COLUMNS.join(",")];
  for (const row of rows) {
    lines.push(
      [row.at, row.action, row.actor, row.actorEmail ?? "", row.targetType, row.targetId ?? "", row.address ?? "", JSON.stringify(row.details)]
        .map(csvField)
        .join(","),
    );
  }
  return `${lines.join("\r\n")}\r\n`;
}
