/**
 * The derivation document: an ordered list of typed cells with stable ids.
 *
 * - `schema.ts`: the stored shape (one zod schema; every type inferred from it)
 * - `create.ts`: new cells, rows and documents
 * - `operations.ts`: pure edits, and the same edits as data (`DocumentOperation`)
 * - `symbols.ts`: the names a document defines; where a model field sits in it
 * - `model-file.ts`: conversion to and from the model file
 * - `migrations.ts` + `stored.ts`: reading a stored document of any version
 * - `recover.ts`: the model file recoverable from content that does not read
 *
 * No React, no engine internals beyond the model types: this folder runs in the
 * browser, on the server and in tests alike.
 */
export {
  CELL_KINDS,
  CELL_LABELS,
  CODE_EXPORT_LANGUAGES,
  DEFAULT_SIMULATION_SETTINGS,
  DEFAULT_STUDY_SETTINGS,
  DOCUMENT_LIMITS,
  DOCUMENT_SCHEMA_VERSION,
  ENERGY_KINDS,
  EQUATION_FORMS,
  GENERATED_KINDS,
  SINGLETON_KINDS,
  STUDY_DISTRIBUTIONS,
  STUDY_LIMITS,
  STUDY_MODES,
  TABLE_KINDS,
  derivationDocumentSchema,
  isEnergyCell,
  isGeneratedCell,
  isTableCell,
  simulationSettingsSchema,
  studySettingsSchema,
  type AnyRow,
  type Cell,
  type CellKind,
  type CellOfKind,
  type CodeExportCell,
  type CodeExportLanguage,
  type ConservedCell,
  type CoordinateRow,
  type CoordinatesCell,
  type DefinitionRow,
  type DefinitionsCell,
  type DerivationDocument,
  type EnergyCell,
  type EnergyKind,
  type EquationForm,
  type EquationsCell,
  type ForceEntry,
  type ForcesCell,
  type GeneratedCell,
  type GeneratedKind,
  type InputRow,
  type InputsCell,
  type LinearizationCell,
  type NoteCell,
  type ParameterRow,
  type ParametersCell,
  type PointPair,
  type RowOf,
  type SettingsOf,
  type SimulationCell,
  type SimulationSettings,
  type SourceCell,
  type StudyCase,
  type StudyCell,
  type StudyDistribution,
  type StudyMode,
  type StudyParameter,
  type StudySettings,
  type TableCell,
  type TableKind,
} from "./schema";
export { DocumentError, type DocumentIssue } from "./errors";
export { blankDocument, createCell, createId, emptyRow } from "./create";
export {
  addCell,
  addRow,
  applyOperation,
  canAddCell,
  deleteCell,
  deleteRow,
  duplicateCell,
  findCell,
  moveCell,
  moveCellBy,
  moveRow,
  removeForce,
  setCellTitle,
  setCollapsed,
  setExpression,
  setForce,
  setNote,
  setTitle,
  updateRow,
  updateSettings,
  type DocumentOperation,
  type RowPatch,
  ROW_LIMITS,
  rowCount,
  canAddRow,
  rowLimitText,
} from "./operations";
export { coordinateNames, documentSymbols, isBlankRow, locateModelField, type DocumentSymbols, type FieldLocation } from "./symbols";
export { documentToModel, modelToDocument, parseParameterValue } from "./model-file";
export { DOCUMENT_MIGRATIONS, type DocumentMigration, type StoredContentVersion0, type StoredDocument, type StoredDocumentVersion1 } from "./migrations";
export { parseStoredDocument, type ParseStoredOptions, type StoredDocumentResult } from "./stored";
export { recoverModel, type RecoveredModel } from "./recover";
