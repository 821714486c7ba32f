/**
 * A revision report of a demo derivation (Kestrel's gantry-crane trolley),
 * evaluated in process, and comment threads on it, for the report file tests.
 */
import { demoDerivations } from "@/db/seed/demo";
import { evaluateModel, settingsOfDocument } from "@/lib/evaluation/evaluate";
import type { RevisionReport } from "@/lib/history/views";
import type { ThreadView } from "@/lib/comments/views";
import { documentToModel, parseStoredDocument, type DerivationDocument } from "@/lib/notebook/document";
import { inProcessRunner } from "../evaluation/in-process";

export function craneDocument(): DerivationDocument {
  const demo = demoDerivations.find((d) => d.title.startsWith("Gantry crane: trolley"))!;
  const parsed = parseStoredDocument(demo.content, { title: demo.title });
  if (!parsed.ok) throw new Error("the demo document does not read");
  return parsed.document;
}

export async function craneReport(): Promise<RevisionReport> {
  const document = craneDocument();
  const { result } = await evaluateModel(inProcessRunner, documentToModel(document), settingsOfDocument(document));
  return {
    revision: {
      id: "00000000-0000-4000-8000-000000000001",
      number: 3,
      kind: "checkpoint",
      name: "Before the rope test",
      title: "Gantry crane: trolley with swinging load",
      contentHash: "ab".repeat(32),
      createdAt: "2026-11-30T09:15:00.000Z",
      createdByName: "Priya Anand",
      authorNames: ["Priya Anand"],
    },
    document,
    evaluation: { ok: true, result, engineVersion: "test-engine", modelHash: "cd".repeat(32), evaluatedAt: "2026-11-30T09:16:00.000Z" },
    studies: [],
    runs: [
      {
        id: "00000000-0000-4000-8000-000000000002",
        label: "Stop from 1 m/s",
        status: "completed",
        failureMessage: null,
        createdAt: "2026-11-30T10:00:00.000Z",
        createdByName: "Priya Anand",
        timeReached: 2,
        pointCount: 5,
        settings: { endTime: 2, outputStep: 0.5, initialCoordinates: { x: 0, theta: 0.1 } },
        energyCheck: { relativeDrift: 2e-9, threshold: 1e-6, warning: false },
        coordinateUnits: { x: "m", theta: "rad" },
        trajectory: {
          coordinateNames: ["x", "theta"],
          times: [0, 0.5, 1, 1.5, 2],
          coordinates: [
            [0, 0.1, 0.2, 0.3, 0.4],
            [0.1, 0.05, -0.02, -0.08, -0.1],
          ],
        },
      },
    ],
    otherRuns: 0,
    approvals: [],
    review: null,
    changedSince: false,
  };
}

/** A thread as the comment service answers it; `overrides` change what a test is about. */
export function thread(overrides: Partial<ThreadView> & Pick<ThreadView, "id" | "anchor">): ThreadView {
  return {
    status: "open",
    authorId: "00000000-0000-4000-8000-0000000000a1",
    authorName: "Priya Anand",
    createdAt: "2026-12-01T08:00:00.000Z",
    updatedAt: "2026-12-01T08:00:00.000Z",
    resolvedAt: null,
    resolvedByName: null,
    writtenOn: { revisionNumber: 3, sameAsRevision: true },
    comments: [],
    mayReply: true,
    mayResolve: true,
    ...overrides,
  };
}
