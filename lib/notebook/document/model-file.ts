/**
 * Conversion between a document and the model file (`*.model.json`), the
 * portable form of a derivation the engine reads.
 */
import type { Model } from "../../mechanics/browser";
import { createCell, createId } from "./create";
import { DocumentError } from "./errors";
import { DOCUMENT_SCHEMA_VERSION, type Cell, type DerivationDocument, type EnergyCell, type EnergyKind, type ForcesCell } from "./schema";
import { rowsOfKind } from "./symbols";

const NUMBER_TEXT = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;

/** Parses a parameter value as typed; `undefined` for blank (symbolic), `null` when not a number. */
export function parseParameterValue(text: string): number | undefined | null {
  const trimmed = text.trim();
  if (trimmed === "") return undefined;
  if (!NUMBER_TEXT.test(trimmed)) return null;
  const value = Number(trimmed);
  return Number.isFinite(value) ? value : null;
}

function withDescription<T extends object>(entry: T, description: string): T & { description?: string } {
  return description.trim() === "" ? entry : { ...entry, description };
}

/**
 * The model file for a document. Blank rows and blank optional expressions are
 * left out; a parameter value that is not a number throws a `DocumentError`
 * naming the model field (`parameters[2].value`), since a model cannot hold it.
 *
 * @example documentToModel(modelToDocument(model)) // deep-equals model
 */
export function documentToModel(doc: DerivationDocument): Model {
  const coordinates = rowsOfKind(doc, "coordinates").map(({ row }) => withDescription({ name: row.name.trim(), unit: row.unit.trim() }, row.description));
  const parameters = rowsOfKind(doc, "parameters").map(({ row }, index) => {
    const value = parseParameterValue(row.value);
    if (value === null) throw new DocumentError(`parameters[${index}].value`, `"${row.value}" is not a number`);
    const base = { name: row.name.trim(), unit: row.unit.trim() };
    return withDescription(value === undefined ? base : { ...base, value }, row.description);
  });
  const inputs = rowsOfKind(doc, "inputs").map(({ row }) => withDescription({ name: row.name.trim(), unit: row.unit.trim() }, row.description));
  const definitions = rowsOfKind(doc, "definitions").map(({ row }) => withDescription({ name: row.name.trim(), expr: row.expr }, row.description));
  const constraintsOf = (kind: "constraints" | "rate-constraints") =>
    rowsOfKind(doc, kind).map(({ row }) => withDescription({ name: row.name.trim(), expr: row.expr }, row.description));
  const constraints = constraintsOf("constraints");
  const rateConstraints = constraintsOf("rate-constraints");
  const outputs = rowsOfKind(doc, "outputs").map(({ row }) =>
    withDescription({ name: row.name.trim(), expr: row.expr, unit: row.unit.trim() }, row.description),
  );
  const energy = (kind: EnergyKind) => doc.cells.find((cell): cell is EnergyCell => cell.kind === kind)?.expr ?? "";
  const forcesCell = doc.cells.find((cell): cell is ForcesCell => cell.kind === "forces");
  const forces: Record<string, string> = {};
  for (const entry of forcesCell?.entries ?? []) if (entry.expr.trim() !== "") forces[entry.coordinate] = entry.expr;

  const dissipation = energy("dissipation");
  return {
    title: doc.title,
    coordinates,
    parameters,
    ...(inputs.length > 0 ? { inputs } : {}),
    ...(definitions.length > 0 ? { definitions } : {}),
    kinetic: energy("kinetic"),
    potential: energy("potential"),
    ...(dissipation.trim() !== "" ? { dissipation } : {}),
    ...(Object.keys(forces).length > 0 ? { forces } : {}),
    ...(constraints.length > 0 ? { constraints } : {}),
    ...(rateConstraints.length > 0 ? { rateConstraints } : {}),
    ...(outputs.length > 0 ? { outputs } : {}),
  };
}

/**
 * A document for a model file, in the default layout: coordinates, parameters,
 * inputs and definitions (when present), the energies, forces, constraints,
 * rate constraints and outputs (each when present), then the equations and
 * conserved quantities.
 */
export function modelToDocument(model: Model, newId: () => string = createId): DerivationDocument {
  const cells: Cell[] = [];
  const rowIds = (count: number) => Array.from({ length: count }, (_, i) => `r${i + 1}`);
  const describe = (description: string | undefined) => description ?? "";

  const coordinateIds = rowIds(model.coordinates.length);
  cells.push({
    ...createCell("coordinates", newId()),
    rows: model.coordinates.map((c, i) => ({ id: coordinateIds[i]!, name: c.name, unit: c.unit, description: describe(c.description) })),
  });
  const parameterIds = rowIds(model.parameters.length);
  cells.push({
    ...createCell("parameters", newId()),
    rows: model.parameters.map((p, i) => ({
      id: parameterIds[i]!,
      name: p.name,
      unit: p.unit,
      value: p.value === undefined ? "" : String(p.value),
      description: describe(p.description),
    })),
  });
  if (model.inputs && model.inputs.length > 0) {
    const ids = rowIds(model.inputs.length);
    cells.push({
      ...createCell("inputs", newId()),
      rows: model.inputs.map((u, i) => ({ id: ids[i]!, name: u.name, unit: u.unit, description: describe(u.description) })),
    });
  }
  if (model.definitions && model.definitions.length > 0) {
    const ids = rowIds(model.definitions.length);
    cells.push({
      ...createCell("definitions", newId()),
      rows: model.definitions.map((d, i) => ({ id: ids[i]!, name: d.name, expr: d.expr, description: describe(d.description) })),
    });
  }
  cells.push({ ...createCell("kinetic", newId()), expr: model.kinetic });
  cells.push({ ...createCell("potential", newId()), expr: model.potential });
  if (model.dissipation !== undefined && model.dissipation.trim() !== "") cells.push({ ...createCell("dissipation", newId()), expr: model.dissipation });
  if (model.forces && Object.keys(model.forces).length > 0) {
    cells.push({ ...createCell("forces", newId()), entries: Object.entries(model.forces).map(([coordinate, expr]) => ({ coordinate, expr })) });
  }
  for (const [kind, list] of [
    ["constraints", model.constraints],
    ["rate-constraints", model.rateConstraints],
  ] as const) {
    if (!list || list.length === 0) continue;
    const ids = rowIds(list.length);
    cells.push({ ...createCell(kind, newId()), rows: list.map((c, i) => ({ id: ids[i]!, name: c.name, expr: c.expr, description: describe(c.description) })) });
  }
  if (model.outputs && model.outputs.length > 0) {
    const ids = rowIds(model.outputs.length);
    cells.push({
      ...createCell("outputs", newId()),
      rows: model.outputs.map((o, i) => ({ id: ids[i]!, name: o.name, expr: o.expr, unit: o.unit, description: describe(o.description) })),
    });
  }
  cells.push(createCell("equations", newId()), createCell("conserved", newId()));
  return { schemaVersion: DOCUMENT_SCHEMA_VERSION, title: model.title, cells };
}
