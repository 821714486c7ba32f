import "server-only";
import { getApprovalsByRevisionIds, getReviewStateByDerivationId } from "@/db/queries/reviews";
import { getRevisionByDerivationIdAndId, getRevisionsByDerivationId, type RevisionSummary } from "@/db/queries/revisions";
import { getSimulationRunByIdAndDerivationId, getSimulationRunsByDerivationId } from "@/db/queries/runs";
import { getFailedStudyRunsByStudyId, getLatestCompletedStudiesByDerivationId } from "@/db/queries/studies";
import { getMembersByTeamId } from "@/db/queries/teams";
import type { Derivation, Revision, RevisionKind, StoredTrajectory } from "@/db/schema";
import { documentFromContent, modelFromDocument } from "@/lib/evaluation/document-content";
import type { EvaluationResult } from "@/lib/evaluation/evaluate";
import { evaluateDocumentCached } from "@/lib/evaluation/service";
import { AppError, toAppError } from "@/lib/errors";
import { CELL_LABELS, type DerivationDocument } from "@/lib/notebook/document";
import type { Sensitivity, VariedParameter, WorstCase } from "@/lib/study";
import { modelHashOf, trajectoryOfRun } from "@/lib/runs/service";
import { decimate, decimationStride } from "@/lib/runs/trajectory";
import { contentHash } from "./content-hash";
import { compareDocuments, type DocumentComparison } from "./document-diff";
import { compareEquations, motionNames, type EquationChange } from "./term-diff";

// What the history, comparison and report pages show, assembled on the server.
// Heavy work (deriving a revision's equations) goes through the evaluation
// service, whose results are cached by model hash.

export const revisionKindLabels: Record<RevisionKind, string> = {
  auto: "Saved while editing",
  checkpoint: "Checkpoint",
  restore: "Restore",
  review: "Review request",
  import: "Import",
};

/** A revision as the pages show it (dates as ISO text, people by name). */
export interface RevisionView {
  id: string;
  number: number;
  kind: RevisionKind;
  name: string | null;
  title: string;
  contentHash: string;
  createdAt: string;
  createdByName: string | null;
  authorNames: string[];
}

export interface ApprovalView {
  id: string;
  revisionId: string;
  contentHash: string;
  approvedByName: string | null;
  approvedAt: string;
  unlockedAt: string | null;
  unlockedByName: string | null;
  unlockReason: string | null;
}

type NameOf = (id: string | null) => string | null;

async function teamNames(teamId: string): Promise<NameOf> {
  const members = await getMembersByTeamId({ teamId });
  const names = new Map(members.map((member) => [member.userId, member.name]));
  return (id) => (id ? (names.get(id) ?? "a former member") : null);
}

function revisionView(revision: RevisionSummary | Revision, nameOf: NameOf, createdByName?: string | null): RevisionView {
  return {
    id: revision.id,
    number: revision.number,
    kind: revision.kind,
    name: revision.name,
    title: revision.title,
    contentHash: revision.contentHash,
    createdAt: revision.createdAt.toISOString(),
    createdByName: createdByName ?? ("createdByName" in revision ? revision.createdByName : nameOf(revision.createdById)),
    authorNames: revision.authorIds.map((id) => nameOf(id) ?? "a former member"),
  };
}

/** Whether the derivation's current content and title are exactly its latest revision's, with no edits pending. */
export function currentIsLatest(
  derivation: Pick<Derivation, "content" | "title" | "pendingAuthorIds">,
  latest: Pick<Revision, "contentHash" | "title"> | undefined,
): boolean {
  return !!latest && latest.contentHash === contentHash(derivation.content) && latest.title === derivation.title && derivation.pendingAuthorIds.length === 0;
}

export interface DerivationHistory {
  revisions: (RevisionView & { approvals: ApprovalView[] })[];
  /** The current content has changes that no revision holds yet. */
  unrevisedChanges: boolean;
  lockedRevisionId: string | null;
}

/** Every revision of a derivation, newest first, each with its approvals. */
export async function derivationHistory(derivation: Derivation): Promise<DerivationHistory> {
  const [summaries, nameOf] = await Promise.all([getRevisionsByDerivationId({ derivationId: derivation.id }), teamNames(derivation.teamId)]);
  const approvals = await getApprovalsByRevisionIds({ revisionIds: summaries.map((revision) => revision.id) });
  return {
    revisions: summaries.map((revision) => ({
      ...revisionView(revision, nameOf),
      approvals: approvals
        .filter((approval) => approval.revisionId === revision.id)
        .sort((a, b) => b.approvedAt.getTime() - a.approvedAt.getTime())
        .map((approval) => approvalView(approval, nameOf)),
    })),
    unrevisedChanges: summaries.length > 0 && !currentIsLatest(derivation, summaries[0]),
    lockedRevisionId: derivation.lockedRevisionId,
  };
}

function approvalView(
  approval: {
    id: string;
    revisionId: string;
    contentHash: string;
    approvedById: string | null;
    approvedAt: Date;
    unlockedAt: Date | null;
    unlockedById: string | null;
    unlockReason: string | null;
  },
  nameOf: NameOf,
): ApprovalView {
  return {
    id: approval.id,
    revisionId: approval.revisionId,
    contentHash: approval.contentHash,
    approvedByName: nameOf(approval.approvedById),
    approvedAt: approval.approvedAt.toISOString(),
    unlockedAt: approval.unlockedAt?.toISOString() ?? null,
    unlockedByName: nameOf(approval.unlockedById),
    unlockReason: approval.unlockReason,
  };
}

/**
 * How a page has a revision evaluated: the evaluation service by default (a
 * queue worker rendering a report); the pages pass one that queues a large
 * model instead of deriving it on the request (lib/jobs/service.ts).
 */
export type RevisionEvaluator = (
  document: DerivationDocument,
) => Promise<{ result: EvaluationResult; engineVersion: string; modelHash: string; evaluatedAt: string }>;
const defaultEvaluator: RevisionEvaluator = (document) => evaluateDocumentCached({ document });

export type RevisionEvaluation =
  { ok: true; result: EvaluationResult; engineVersion: string; modelHash: string; evaluatedAt: string } | { ok: false; message: string };

/** The revision's document, or why it cannot be read. */
export function documentOfRevision(revision: Pick<Revision, "content" | "title">): { ok: true; document: DerivationDocument } | { ok: false; message: string } {
  try {
    return { ok: true, document: documentFromContent(revision.content, revision.title) };
  } catch (error) {
    return { ok: false, message: toAppError(error).message };
  }
}

/**
 * The engine's results for a revision's document, through the evaluation
 * service (cached by model hash). A model the engine refuses — an automatic
 * revision may hold half-typed work — is reported, not thrown.
 */
export async function evaluateRevision(document: DerivationDocument, evaluate: RevisionEvaluator = defaultEvaluator): Promise<RevisionEvaluation> {
  try {
    const response = await evaluate(document);
    return { ok: true, result: response.result, engineVersion: response.engineVersion, modelHash: response.modelHash, evaluatedAt: response.evaluatedAt };
  } catch (error) {
    const appError = toAppError(error);
    if (appError.kind === "internal" || appError.code === "unavailable:database") throw error;
    return { ok: false, message: appError.message };
  }
}

export interface RevisionPair {
  from: Revision;
  to: Revision;
  fromView: RevisionView;
  toView: RevisionView;
  revisions: RevisionView[];
}

/**
 * The two revisions to compare, by number: `to` defaults to the latest, `from`
 * to the one before `to`. Null when the derivation has fewer than two revisions
 * or a number names none.
 */
export async function revisionPair(derivation: Derivation, numbers: { from?: number; to?: number }): Promise<RevisionPair | null> {
  const [summaries, nameOf] = await Promise.all([getRevisionsByDerivationId({ derivationId: derivation.id }), teamNames(derivation.teamId)]);
  if (summaries.length < 2) return null;
  const byNumber = new Map(summaries.map((revision) => [revision.number, revision]));
  const toSummary = numbers.to !== undefined ? byNumber.get(numbers.to) : summaries[0];
  if (!toSummary) return null;
  const fromSummary = numbers.from !== undefined ? byNumber.get(numbers.from) : summaries.find((revision) => revision.number < toSummary.number);
  if (!fromSummary) return null;
  const [from, to] = await Promise.all([
    getRevisionByDerivationIdAndId({ derivationId: derivation.id, id: fromSummary.id }),
    getRevisionByDerivationIdAndId({ derivationId: derivation.id, id: toSummary.id }),
  ]);
  if (!from || !to) return null;
  return {
    from,
    to,
    fromView: revisionView(fromSummary, nameOf),
    toView: revisionView(toSummary, nameOf),
    revisions: summaries.map((revision) => revisionView(revision, nameOf)),
  };
}

export type DocumentsComparison =
  { ok: true; comparison: DocumentComparison; before: DerivationDocument; after: DerivationDocument } | { ok: false; message: string };

/** The two revisions' documents compared cell by cell, and their parameters as a table. */
export function compareRevisionDocuments(from: Revision, to: Revision): DocumentsComparison {
  const before = documentOfRevision(from);
  if (!before.ok) return { ok: false, message: `Revision ${from.number} cannot be read: ${before.message}` };
  const after = documentOfRevision(to);
  if (!after.ok) return { ok: false, message: `Revision ${to.number} cannot be read: ${after.message}` };
  return { ok: true, comparison: compareDocuments(before.document, after.document), before: before.document, after: after.document };
}

export type EquationsComparison = { ok: true; equations: EquationChange[]; engineVersion: string } | { ok: false; message: string };

function inputNames(document: DerivationDocument): string[] {
  return document.cells.flatMap((cell) => (cell.kind === "inputs" ? cell.rows.map((row) => row.name.trim()).filter(Boolean) : []));
}

/** Both revisions evaluated, their equations compared term by term. */
export async function compareRevisionEquations(
  before: DerivationDocument,
  after: DerivationDocument,
  numbers: { from: number; to: number },
  evaluate: RevisionEvaluator = defaultEvaluator,
): Promise<EquationsComparison> {
  const [old, current] = await Promise.all([evaluateRevision(before, evaluate), evaluateRevision(after, evaluate)]);
  if (!old.ok) return { ok: false, message: `Revision ${numbers.from} does not derive: ${old.message}` };
  if (!current.ok) return { ok: false, message: `Revision ${numbers.to} does not derive: ${current.message}` };
  const isMotion = motionNames({
    coordinates: [...old.result.coordinates, ...current.result.coordinates],
    inputs: [...inputNames(before), ...inputNames(after)],
  });
  return { ok: true, equations: compareEquations(old.result.equations, current.result.equations, isMotion), engineVersion: current.engineVersion };
}

// ---------------------------------------------------------------------------
// The report

export interface ReportRun {
  id: string;
  label: string | null;
  status: "completed" | "failed";
  failureMessage: string | null;
  createdAt: string;
  createdByName: string | null;
  timeReached: number;
  pointCount: number;
  settings: Record<string, unknown>;
  energyCheck: { relativeDrift: number; threshold: number; warning: boolean } | null;
  coordinateUnits: Record<string, string>;
  /** Decimated for the printed plot. */
  trajectory: Pick<StoredTrajectory, "coordinateNames" | "times" | "coordinates"> | null;
}

/** The latest completed study of a study cell, as the report prints it. */
export interface ReportStudy {
  cellId: string;
  title: string;
  mode: "grid" | "tolerance";
  createdAt: string;
  total: number;
  done: number;
  failed: number;
  /** The study ran on exactly this revision's content. */
  onThisRevision: boolean;
  /** The varied parameters: each one's grid or distribution. */
  parameters: VariedParameter[];
  /** The first failed runs (REPORT_FAILED_RUNS at most) with their reasons. */
  failedRuns: { index: number; caseName: string; parameters: Record<string, number>; reason: string; message: string }[];
  cases: string[];
  worst: { name: string; unit: string | null; value: number; time: number; caseName: string; parameters: Record<string, number> }[];
  sensitivity: {
    name: string;
    method: "finite-difference" | "regression";
    byParameter: Record<string, { slope: number; normalized: number; r2: number | null }>;
  }[];
}

export interface ReviewSignOff {
  reviewerName: string | null;
  decision: "pending" | "signed_off" | "changes_requested";
  comment: string;
  decidedAt: string | null;
}

export interface RevisionReport {
  revision: RevisionView;
  document: DerivationDocument;
  evaluation: RevisionEvaluation;
  runs: ReportRun[];
  /** Stored runs of this derivation that used another version of the model. */
  otherRuns: number;
  /** Each study cell's latest completed study. */
  studies: ReportStudy[];
  approvals: ApprovalView[];
  /** Reviewers of the review request made for this revision, if one was. */
  review: { requestedByName: string | null; requestedAt: string; message: string; reviewers: ReviewSignOff[] } | null;
  /** The derivation's content has moved on since this revision. */
  changedSince: boolean;
}

/** Points per series in a printed plot: enough for a smooth line on A4. */
const PLOT_POINTS = 600;
/** Runs shown in a report, newest first. */
const REPORT_RUNS = 6;

function numberOrNull(value: unknown): number | null {
  return typeof value === "number" && Number.isFinite(value) ? value : null;
}

async function reportRuns(derivationId: string, modelHash: string): Promise<{ runs: ReportRun[]; otherRuns: number }> {
  const all = await getSimulationRunsByDerivationId({ derivationId, limit: 200 });
  const mine = all.filter((run) => run.modelHash === modelHash);
  const shown = mine.slice(0, REPORT_RUNS);
  const runs = await Promise.all(
    shown.map(async (summary): Promise<ReportRun> => {
      const run = await getSimulationRunByIdAndDerivationId({ id: summary.id, derivationId });
      // A trajectory object missing from storage leaves the run listed without its plot.
      const trajectory = run ? await trajectoryOfRun(run).catch(() => null) : null;
      const stride = trajectory ? decimationStride(trajectory.times.length, PLOT_POINTS) : 1;
      const energy = (summary.summary as { energyCheck?: { relativeDrift?: unknown; threshold?: unknown; warning?: unknown } | null }).energyCheck;
      const relativeDrift = numberOrNull(energy?.relativeDrift);
      const threshold = numberOrNull(energy?.threshold);
      return {
        id: summary.id,
        label: typeof summary.settings.label === "string" ? summary.settings.label : null,
        status: summary.status,
        failureMessage: summary.failureMessage,
        createdAt: summary.createdAt.toISOString(),
        createdByName: summary.createdByName,
        timeReached: summary.timeReached,
        pointCount: summary.pointCount,
        settings: summary.settings,
        energyCheck: relativeDrift !== null && threshold !== null ? { relativeDrift, threshold, warning: energy?.warning === true } : null,
        coordinateUnits: ((summary.summary as { coordinateUnits?: Record<string, string> }).coordinateUnits ?? {}) as Record<string, string>,
        trajectory: trajectory
          ? {
              coordinateNames: trajectory.coordinateNames,
              times: decimate(trajectory.times, stride),
              coordinates: trajectory.coordinates.map((column) => decimate(column, stride)),
            }
          : null,
      };
    }),
  );
  return { runs, otherRuns: all.length - mine.length };
}

/** Failed runs of a study the report lists; the count says how many more there were. */
export const REPORT_FAILED_RUNS = 20;

/** The latest completed study of each study cell of the document, in the document's order. */
async function reportStudies(derivationId: string, document: DerivationDocument, revisionId: string): Promise<ReportStudy[]> {
  const cells = document.cells.filter((cell) => cell.kind === "study");
  if (cells.length === 0) return [];
  const latest = new Map((await getLatestCompletedStudiesByDerivationId({ derivationId })).map((study) => [study.cellId, study]));
  const studies: ReportStudy[] = [];
  for (const cell of cells) {
    const study = latest.get(cell.id);
    if (!study) continue;
    const figures = (study.aggregate ?? {}) as { worst?: Record<string, WorstCase>; sensitivity?: Record<string, Sensitivity> };
    const unitOf = new Map(study.spec.watch.map((w) => [w.name, w.unit]));
    const failedRuns = study.failed > 0 ? await getFailedStudyRunsByStudyId({ studyId: study.id, limit: REPORT_FAILED_RUNS }) : [];
    studies.push({
      cellId: cell.id,
      title: cell.title?.trim() || CELL_LABELS.study,
      mode: study.mode,
      createdAt: study.createdAt.toISOString(),
      total: study.total,
      done: study.done,
      failed: study.failed,
      onThisRevision: study.revisionId === revisionId,
      parameters: study.spec.parameters,
      failedRuns: failedRuns.map((run) => ({
        index: run.runIndex,
        caseName: run.caseName,
        parameters: run.parameters,
        reason: run.failureReason ?? "failed",
        message: run.failureMessage ?? "",
      })),
      cases: study.spec.cases.map((c) => c.name),
      worst: Object.entries(figures.worst ?? {}).map(([name, worst]) => ({ name, unit: unitOf.get(name) ?? null, ...worst })),
      sensitivity: Object.entries(figures.sensitivity ?? {}).map(([name, entry]) => ({ name, ...entry })),
    });
  }
  return studies;
}

/** Everything the printable report of one revision shows. */
export async function revisionReport(derivation: Derivation, revisionId: string, evaluate: RevisionEvaluator = defaultEvaluator): Promise<RevisionReport> {
  const [revision, nameOf, state] = await Promise.all([
    getRevisionByDerivationIdAndId({ derivationId: derivation.id, id: revisionId }),
    teamNames(derivation.teamId),
    getReviewStateByDerivationId({ derivationId: derivation.id }),
  ]);
  if (!revision) throw new AppError("not_found:revision", "No such revision of this derivation.");
  const read = documentOfRevision(revision);
  if (!read.ok) throw new AppError("unprocessable:revision", `Revision ${revision.number} cannot be read: ${read.message}`);
  const document = read.document;
  const evaluation = await evaluateRevision(document, evaluate);
  let runs: ReportRun[] = [];
  let otherRuns = 0;
  try {
    ({ runs, otherRuns } = await reportRuns(derivation.id, modelHashOf(modelFromDocument(document))));
  } catch (error) {
    // A document whose model does not convert has no runs of its own.
    if (!(error instanceof AppError && error.kind === "unprocessable")) throw error;
  }
  const studies = await reportStudies(derivation.id, document, revision.id);
  const approvals = (await getApprovalsByRevisionIds({ revisionIds: [revision.id] }))
    .sort((a, b) => b.approvedAt.getTime() - a.approvedAt.getTime())
    .map((approval) => approvalView(approval, nameOf));
  const request = state.request?.revisionId === revision.id ? state.request : null;
  return {
    revision: revisionView(revision, nameOf),
    document,
    evaluation,
    runs,
    otherRuns,
    studies,
    approvals,
    review: request
      ? {
          requestedByName: request.requestedByName,
          requestedAt: request.createdAt.toISOString(),
          message: request.message,
          reviewers: state.assignments.map((assignment) => ({
            reviewerName: assignment.reviewerName,
            decision: assignment.decision,
            comment: assignment.comment,
            decidedAt: assignment.decidedAt?.toISOString() ?? null,
          })),
        }
      : null,
    changedSince: contentHash(derivation.content) !== revision.contentHash || derivation.title !== revision.title,
  };
}
