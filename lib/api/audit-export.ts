import "server-only";
import { recordAuditEvent } from "@/db/queries/audit";

/** What a person took out of Holonomy: the formats the export routes write. */
export type ExportFormat = "model" | "latex" | "code" | "trajectory-csv" | "recovered-model" | "notebook-archive" | "study-csv";

/**
 * Records `derivation.export` once the file is ready: leads see in the audit
 * log who took which equations or data out, in which format, and when.
 */
export async function auditExport({
  actorId,
  derivation,
  format,
  details = {},
}: {
  actorId: string;
  derivation: { id: string; teamId: string };
  format: ExportFormat;
  details?: Record<string, unknown>;
}): Promise<void> {
  await recordAuditEvent({
    teamId: derivation.teamId,
    actorId,
    action: "derivation.export",
    targetType: "derivation",
    targetId: derivation.id,
    details: { format, ...details },
  });
}
