import type { SimulationRun, StoredFile, StoredTrajectory } from "@/db/schema";

/** The JSON a client sees for an attached file. */
export function fileView(file: StoredFile & { uploadedByName?: string | null }) {
  return {
    id: file.id,
    derivationId: file.derivationId,
    kind: file.kind,
    originalName: file.originalName,
    contentType: file.contentType,
    sizeBytes: file.sizeBytes,
    summary: file.summary ?? null,
    uploadedBy: file.uploadedById ? { id: file.uploadedById, name: file.uploadedByName ?? null } : null,
    createdAt: file.createdAt.toISOString(),
    url: `/api/files/${file.id}`,
  };
}

/** The JSON a client sees for a run (trajectory only when asked for). */
export function runView(run: Omit<SimulationRun, "trajectory"> & { createdByName?: string | null }, trajectory?: StoredTrajectory | null) {
  return {
    id: run.id,
    derivationId: run.derivationId,
    status: run.status,
    failure: run.failureReason ? { reason: run.failureReason, message: run.failureMessage ?? "", timeReached: run.timeReached } : null,
    timeReached: run.timeReached,
    pointCount: run.pointCount,
    energyDrift: run.energyDrift,
    settings: run.settings,
    summary: run.summary,
    modelHash: run.modelHash,
    createdBy: run.createdById ? { id: run.createdById, name: run.createdByName ?? null } : null,
    createdAt: run.createdAt.toISOString(),
    ...(trajectory !== undefined ? { trajectory } : {}),
  };
}
