import "server-only";
import { z } from "zod";
import { getLatestApprovalByDerivationId, getLatestApprovalsByTeamId } from "@/db/queries/approvals";
import { getDerivationById } from "@/db/queries/derivations";
import { mergeRevisionResultsById } from "@/db/queries/revisions";
import type { Revision } from "@/db/schema";
import { safetyNote } from "@/lib/domain";
import { AppError } from "@/lib/errors";
import { documentFromContent, modelFromDocument } from "@/lib/evaluation/document-content";
import { codeExportInput, codeFileName, engineCodeLanguage, type EngineRunner } from "@/lib/evaluation/evaluate";
import { engineErrorToAppError } from "@/lib/evaluation/service";
import type { DerivationReport, Model } from "@/lib/mechanics";
import type { CodeExportLanguage } from "@/lib/notebook/document";
import { getEnginePool } from "@/lib/workers/engine-pool";
import { engineVersion } from "@/lib/workers/worker-file";

// The public API's view of approved work. A firmware or control build pulls the
// latest approved revision of a derivation: its model file, its equations (the
// derivation CLI's keys) and optionally generated code. The equations and code
// are derived once in the engine's worker pool and stored on the revision, whose
// content never changes, so later pulls only read.

/** The path of a derivation's approved revision, as the list links to it. */
export function approvedPath(derivationId: string): string {
  return `/api/v1/derivations/${derivationId}/approved`;
}

/** The team's derivations that have an approval, each with its latest one. */
export async function approvedDerivationsOfTeam({ teamId }: { teamId: string }) {
  const rows = await getLatestApprovalsByTeamId({ teamId });
  return rows.map((row) => ({
    id: row.derivation.id,
    title: row.derivation.title,
    status: row.derivation.status,
    /** Whether the derivation is still locked at this approval; false after an unlock for edits. */
    locked: row.derivation.lockedAt !== null && row.approval.unlockedAt === null,
    approval: { revisionId: row.approval.revisionId, revision: row.revisionNumber, ...approvalView(row.approval, row.approvedByName) },
    links: { approved: approvedPath(row.derivation.id) },
  }));
}

function approvalView(
  approval: { approvedById: string | null; approvedAt: Date; unlockedAt: Date | null; contentHash: string },
  approvedByName: string | null,
) {
  return {
    contentHash: approval.contentHash,
    approvedBy: approval.approvedById ? { id: approval.approvedById, name: approvedByName } : null,
    approvedAt: approval.approvedAt.toISOString(),
    unlockedAt: approval.unlockedAt?.toISOString() ?? null,
  };
}

/** The derivation CLI's output without its timing: what the public API serves as `derived`. */
const derivedSchema = z.object({
  engineVersion: z.string(),
  coordinates: z.array(z.string()),
  equations: z.array(z.object({ coordinate: z.string(), residual: z.string(), latex: z.string() })),
  massMatrix: z.array(z.array(z.string())),
  forcing: z.array(z.string()),
  energy: z.string(),
  conserved: z.array(z.object({ name: z.string(), expr: z.string(), reason: z.string() })),
  constraints: z.array(z.object({ name: z.string(), kind: z.enum(["position", "rate"]), expr: z.string(), multiplier: z.string().nullable() })).optional(),
  outputs: z.array(z.object({ name: z.string(), expr: z.string(), unit: z.string() })).optional(),
});
type StoredDerived = z.infer<typeof derivedSchema>;

const storedCodeSchema = z.object({ engineVersion: z.string(), filename: z.string(), source: z.string() });

/** What this module keeps in `revisions.results` (other readers may keep other keys beside it). */
const storedResultsSchema = z.object({
  apiDerived: derivedSchema.optional().catch(undefined),
  apiCode: z.record(z.string(), storedCodeSchema.optional().catch(undefined)).optional().catch(undefined),
});

function storedResultsOf(revision: Revision) {
  const parsed = storedResultsSchema.safeParse(revision.results ?? {});
  return parsed.success ? parsed.data : {};
}

async function runEngine<T>(runner: EngineRunner, task: string, payload: unknown): Promise<T> {
  try {
    return await runner.run<T>(task, payload);
  } catch (error) {
    throw engineErrorToAppError(error);
  }
}

/** The revision's equations: stored ones, or derived now in the worker pool and stored. */
async function derivedOf(revision: Revision, model: Model, runner: EngineRunner): Promise<{ derived: StoredDerived; stored: boolean }> {
  const stored = storedResultsOf(revision).apiDerived;
  if (stored) return { derived: stored, stored: true };
  const { timingMs: _timing, ...report } = await runEngine<DerivationReport>(runner, "report", { model });
  const derived: StoredDerived = { engineVersion: engineVersion(), ...report };
  await mergeRevisionResultsById({ id: revision.id, results: { apiDerived: derived } });
  return { derived, stored: false };
}

/** The revision's code in `language`, generated from its stored M and f when it is not stored yet. */
async function codeOf(revision: Revision, model: Model, derived: StoredDerived, language: CodeExportLanguage, runner: EngineRunner) {
  const stored = storedResultsOf(revision).apiCode?.[language];
  if (stored) return { language, filename: stored.filename, source: stored.source };
  const engineLanguage = engineCodeLanguage(language);
  const { code: source } = await runEngine<{ code: string }>(runner, "exportCode", { input: codeExportInput(model, derived), language: engineLanguage });
  const entry = { engineVersion: engineVersion(), filename: codeFileName(model.title, engineLanguage), source };
  await mergeRevisionResultsById({ id: revision.id, results: { apiCode: { [language]: entry } } });
  return { language, filename: entry.filename, source };
}

/**
 * The latest approved revision of a derivation of `teamId`: also after the
 * derivation was unlocked and edited, until a new approval. A derivation of
 * another team is "not found", exactly like a missing one.
 */
export async function approvedDerivation({
  teamId,
  derivationId,
  language,
  runner = getEnginePool(),
}: {
  teamId: string;
  derivationId: string;
  language?: CodeExportLanguage;
  runner?: EngineRunner;
}) {
  const derivation = await getDerivationById({ id: derivationId });
  if (!derivation || derivation.teamId !== teamId) throw new AppError("not_found:derivation", "No derivation with this id in the token's team.");
  const latest = await getLatestApprovalByDerivationId({ derivationId });
  if (!latest) throw new AppError("not_found:revision", "This derivation has no approved revision yet.");
  const { approval, approvedByName, revision } = latest;
  const document = documentFromContent(revision.content, revision.title);
  const model = modelFromDocument(document);
  if (!model.title.trim()) model.title = revision.title;
  const { derived, stored } = await derivedOf(revision, model, runner);
  const { engineVersion: derivedWith, ...equations } = derived;
  const code = language ? await codeOf(revision, model, derived, language, runner) : undefined;
  return {
    body: {
      derivation: { id: derivation.id, title: derivation.title, status: derivation.status },
      revision: { id: revision.id, number: revision.number, title: revision.title, ...approvalView(approval, approvedByName) },
      model,
      document: revision.content,
      derived: equations,
      ...(code ? { code } : {}),
      engineVersion: derivedWith,
      safetyNote,
    },
    /** Whether the equations came from the revision's stored results (no engine run). */
    stored,
  };
}
