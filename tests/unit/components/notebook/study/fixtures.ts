/**
 * A study test's model and answers: a trolley-and-rope model of our own with
 * a rope constraint and two outputs, and study answers shaped like the study
 * routes' (StudyView).
 */
import type { StudyRun, StudyView } from "@/components/notebook/study/types";
import { createCell, modelToDocument, type DerivationDocument, type StudyCell } from "@/lib/notebook/document";

export function studyDocument(): { doc: DerivationDocument; cellId: string } {
  const doc = modelToDocument({
    title: "Gantry trolley with a suspended load",
    coordinates: [
      { name: "x", unit: "m", description: "trolley travel" },
      { name: "xl", unit: "m", description: "load position, horizontal" },
      { name: "yl", unit: "m", description: "load position, vertical" },
    ],
    parameters: [
      { name: "M", unit: "kg", value: 400, description: "trolley mass" },
      { name: "m", unit: "kg", value: 1500, description: "load mass" },
      { name: "l", unit: "m", value: 5, description: "rope length" },
      { name: "g", unit: "m/s^2", value: 9.81, description: "gravitational acceleration" },
    ],
    inputs: [{ name: "a", unit: "m/s^2", description: "trolley acceleration demand" }],
    kinetic: "1/2*M*x'^2 + 1/2*m*(xl'^2 + yl'^2)",
    potential: "m*g*yl",
    forces: { x: "M*a" },
    constraints: [{ name: "rope", expr: "(xl - x)^2 + yl^2 - l^2", description: "rope length" }],
    outputs: [
      { name: "rope_tension", expr: "-2*l*lambda_rope", unit: "N", description: "rope pull" },
      { name: "side_load", expr: "-2*lambda_rope*(xl - x)", unit: "N", description: "side pull on the trolley" },
    ],
  });
  const cell = createCell("study", "study-1") as StudyCell;
  return { doc: { ...doc, cells: [...doc.cells, cell] }, cellId: cell.id };
}

export function run(index: number, caseName: string, parameters: Record<string, number>, tension: number | null, failed = false): StudyRun {
  return {
    index,
    caseName,
    parameters,
    status: failed ? "failed" : tension === null ? "pending" : "done",
    failure: failed ? { reason: "singular_mass_matrix", message: "The mass matrix is singular at t = 0.2 s." } : null,
    peaks:
      tension === null || failed ? {} : { rope_tension: { min: tension * 0.6, timeOfMin: 1, max: tension, timeOfMax: 2.5, peak: tension, timeOfPeak: 2.5 } },
    energyDrift: failed || tension === null ? null : 1e-9,
    constraintResidual: failed || tension === null ? null : 2e-12,
  };
}

export function studyView(overrides: Partial<StudyView> = {}): StudyView {
  return {
    id: "s1",
    cellId: "study-1",
    revisionId: null,
    state: "running",
    createdAt: "2041-03-06T10:00:00Z",
    createdBy: { id: "u1", name: "Mara Quist" },
    mode: "grid",
    parameterNames: ["m", "l"],
    caseNames: ["nominal"],
    watch: [{ name: "rope_tension", unit: "N", kind: "output" }],
    progress: { total: 4, done: 0, failed: 0, etaSeconds: null },
    error: null,
    runs: [],
    envelope: null,
    worst: {},
    sensitivity: {},
    ...overrides,
  };
}
