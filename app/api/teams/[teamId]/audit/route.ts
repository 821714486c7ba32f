import { getAuditRowsByTeamId, recordAuditEvent } from "@/db/queries/audit";
import { downloadResponse } from "@/lib/api/download";
import { apiRoute } from "@/lib/api/route";
import { auditCsv, auditFiltersOf, auditRowView } from "@/lib/audit";
import { loadTeamFor } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";
import { auditQuerySchema } from "@/lib/validation/audit";
import { parseOrThrow } from "@/lib/validation/parse";

/** Rows one export may hold; the page pages through the same query 200 at a time. */
const EXPORT_LIMIT = 50_000;

/**
 * The team's audit log for leads: `?action=&actor=&from=&to=` filter it (dates
 * YYYY-MM-DD, `to` inclusive), `format=csv` downloads it as CSV (the export is itself audited).
 */
export const GET = apiRoute<{ teamId: string }>(async (request, { params }) => {
  const user = await requireUser();
  const { team } = await loadTeamFor(user, (await params).teamId, "team:audit");
  const query = parseOrThrow(auditQuerySchema, Object.fromEntries(new URL(request.url).searchParams));
  const filters = auditFiltersOf(query);
  if (query.format === "csv") {
    const rows = await getAuditRowsByTeamId({ teamId: team.id, filters, limit: EXPORT_LIMIT });
    await recordAuditEvent({
      teamId: team.id,
      actorId: user.id,
      action: "audit.export",
      targetType: "team",
      targetId: team.id,
      details: { filters: query, rows: rows.length },
    });
    const stamp = new Date().toISOString().slice(0, 10);
    return downloadResponse(auditCsv(rows.map(auditRowView)), { filename: `${team.slug}-audit-${stamp}.csv`, contentType: "text/csv" });
  }
  const rows = await getAuditRowsByTeamId({ teamId: team.id, filters, limit: 200 });
  return Response.json({ events: rows.map(auditRowView) });
});
