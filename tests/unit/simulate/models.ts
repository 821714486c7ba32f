// Every template (lib/notebook/templates.ts) and every demo model (db/seed/demo.ts, what scripts/seed.ts stores),
// derived once, as the simulator's mass-matrix form: the models the agreement tests run over.
import { demoDerivations } from "@/db/seed/demo";
import { deriveModel } from "@/lib/mechanics/derive";
import type { Model } from "@/lib/mechanics/model";
import { validateModel } from "@/lib/mechanics/validate-model";
import { documentToModel, parseStoredDocument } from "@/lib/notebook/document";
import { TEMPLATES } from "@/lib/notebook/templates";
import { expect } from "vitest";
import type { SimulationResult } from "@/lib/simulate/integrate";
import { massMatrixFormOf, type MassMatrixForm } from "@/lib/simulate/system";

export interface NamedForm {
  name: string;
  model: Model;
  form: MassMatrixForm;
}

let cached: NamedForm[] | null = null;

export function templateAndDemoForms(): NamedForm[] {
  if (cached) return cached;
  const models: { name: string; model: Model }[] = TEMPLATES.map((template) => ({ name: `template ${template.id}`, model: template.build() }));
  for (const stored of demoDerivations) {
    const parsed = parseStoredDocument(stored.content, { title: stored.title });
    if (!parsed.ok) throw new Error(`the demo document "${stored.title}" does not read`);
    models.push({ name: `demo "${stored.title}"`, model: validateModel(documentToModel(parsed.document)) });
  }
  cached = models.map(({ name, model }) => ({ name, model, form: massMatrixFormOf(model, deriveModel(model)) }));
  return cached;
}

/** A small deterministic generator (a linear congruential generator of Numerical Recipes, 2nd ed., 7.1): seeded random states. */
export function seededRandom(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (Math.imul(state, 1664525) + 1013904223) >>> 0;
    return state / 2 ** 32;
  };
}

/** The largest difference between two runs over every stored series, relative to 1 + the series' largest magnitude. */
export function largestDifference(a: SimulationResult, b: SimulationResult): number {
  const series = (r: SimulationResult) => [
    ...r.trajectory.coordinates,
    ...r.trajectory.rates,
    ...(r.energy ? [r.energy] : []),
    ...r.outputs.map((o) => o.values),
    ...(r.constraints?.multipliers ?? []),
  ];
  const left = series(a);
  const right = series(b);
  expect(left.length).toBe(right.length);
  let worst = 0;
  left.forEach((column, c) => {
    const other = right[c]!;
    expect(column.length).toBe(other.length);
    let scale = 1;
    for (let k = 0; k < column.length; k++) scale = Math.max(scale, Math.abs(other[k]!));
    for (let k = 0; k < column.length; k++) worst = Math.max(worst, Math.abs(column[k]! - other[k]!) / scale);
  });
  return worst;
}
