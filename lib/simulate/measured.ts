import Papa from "papaparse";
import { parseUnitText, sameUnitDimension, siUnitText, type ParsedUnit, type UnitDimension } from "../units";
import { MeasuredDataError } from "./errors";

/**
 * Measured trajectories from a test rig, as CSV text.
 *
 * ## File layout (Holonomy's measured-data convention)
 *
 * ```text
 * # Gimbal rig G-2, run 14, pitch axis released from 20 deg
 * t [s], theta1 [deg], x [mm]
 * 0.000, 20.00, 0.0
 * 0.005, 19.96, 0.4
 * ```
 *
 * - Lines starting with `#` are comments; blank lines are skipped. Both may
 *   appear anywhere. Line numbers in messages count every physical line.
 * - The first other line is the header. Each header cell is
 *   `name [unit]`: the name is `t` (or `time`) for the time column, otherwise
 *   the name of a coordinate of the model; the unit, in square brackets, is
 *   any unit of the right kind (`s`, `ms`, `min`; `rad`, `deg`; `m`, `mm`,
 *   `cm`, …), written as in the model file (`*`, `/`, `^`). Every column needs
 *   a unit, so no reading is ever taken in an assumed unit; a dimensionless
 *   coordinate is written `[1]`.
 * - Cells are separated by commas; a header without commas may use
 *   semicolons or tabs instead, and the data rows then use the same. Cells may
 *   be wrapped in double quotes (then, quoted from the cell's first character,
 *   they may hold the delimiter); whitespace around a delimiter is ignored. Numbers use a decimal point (`1.5`, `-2e-3`).
 * - Every data row has one number per column: no empty cells, no `NaN`, no
 *   infinities. Time increases strictly from row to row.
 * - A time column and at least one coordinate column are required, and at
 *   least two data rows.
 * - A trajectory exported by Holonomy reads as it is: its rate columns
 *   (`theta1' [rad/s]`) and energy column (`energy [J]`) are checked for
 *   their units and otherwise not read.
 *
 * Values are converted to SI (or to the coordinate's unit in the model, when
 * given): deg → rad, mm → m, ms → s.
 */

export interface MeasuredSeries {
  /** Coordinate name. */
  coordinate: string;
  /** The unit as written in the header. */
  unit: string;
  /** The unit the values were converted to (the model's unit for the coordinate, or SI). */
  targetUnit: string;
  /** Factor applied to every reading. */
  scale: number;
  values: Float64Array;
}

export interface MeasuredData {
  /** Seconds. */
  times: Float64Array;
  /** The time column's unit as written. */
  timeUnit: string;
  series: MeasuredSeries[];
}

export interface MeasuredDataOptions {
  /**
   * The model's coordinates with their units. Columns must name one of them;
   * readings are converted to the given unit (which must be of the same kind).
   */
  coordinates: readonly { name: string; unit?: string }[];
  /** Coordinates the file must contain (a fit of them needs them); default none beyond one. */
  requiredCoordinates?: readonly string[];
  /** Largest accepted file, in bytes (UTF-8); default 10 MB. */
  maxBytes?: number;
  /** Largest accepted number of data rows; default 200 000. */
  maxRows?: number;
}

export const DEFAULT_MEASURED_LIMITS = { maxBytes: 10 * 1024 * 1024, maxRows: 200_000 };

const HEADER_CELL = /^([A-Za-z_][A-Za-z0-9_]*)(')?\s*(?:\[([^\]]*)\])?$/;
const NUMBER = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;
/** kg·m²/s², the energy function's unit (angle 0). */
const ENERGY_DIMENSION: UnitDimension = [1, 2, -2, 0, 0, 0, 0, 0];

interface CsvRecord {
  cells: string[];
  /** 1-based physical line where the record ends. */
  line: number;
}

/**
 * The file's records through papaparse: quoted cells may hold the delimiter
 * or a line break, `#` lines and blank lines are skipped, and each record
 * keeps the physical line where it ends. papaparse opens a quote only at a
 * cell's first character (RFC 4180), so a cell written `, "2"` is trimmed and
 * unquoted here, as such files were read before.
 */
function csvRecords(text: string, delimiter: string): CsvRecord[] {
  const records: CsvRecord[] = [];
  let counted = 0;
  let line = 1;
  /** The 1-based line of a text index (indexes only grow, so the count runs once over the text). */
  const lineAt = (index: number): number => {
    for (; counted < index; counted++) if (text.charCodeAt(counted) === 10) line++;
    return line;
  };
  let problem: MeasuredDataError | null = null;
  Papa.parse<string[]>(text, {
    delimiter,
    newline: "\n",
    comments: "#",
    skipEmptyLines: "greedy",
    step: (results, parser) => {
      const error = results.errors[0];
      if (error) {
        problem = new MeasuredDataError("syntax", csvProblem(error), lineAt(error.index ?? results.meta.cursor));
        parser.abort();
        return;
      }
      const end = results.meta.cursor;
      const rowEnd = end > 0 && text.charCodeAt(end - 1) === 10 ? end - 1 : end;
      const cells = results.data.map(unquote);
      // A comment indented by spaces is not papaparse's comment; skip it here.
      if (cells[0]?.startsWith("#")) {
        lineAt(end);
        return;
      }
      records.push({ cells, line: lineAt(rowEnd) });
    },
  });
  if (problem) throw problem;
  return records;
}

function unquote(cell: string): string {
  let value = cell.trim();
  if (value.length >= 2 && value.startsWith('"') && value.endsWith('"')) value = value.slice(1, -1).trim();
  return value;
}

function csvProblem(error: Papa.ParseError): string {
  switch (error.code) {
    case "MissingQuotes":
      return "a quoted cell is not closed";
    case "InvalidQuotes":
      return "a quote is misplaced inside a quoted cell (write a quote in a quoted cell as two quotes)";
    default:
      return `the line does not read as CSV (${error.message})`;
  }
}

type Column =
  | { kind: "time"; index: number }
  | { kind: "coordinate"; index: number; coordinate: string; unit: string; targetUnit: string; scale: number }
  /** A rate or the energy function (as a trajectory export writes them): checked, then not read. */
  | { kind: "other"; index: number };

/**
 * Parses and checks a CSV of measured data; throws `MeasuredDataError` with the
 * line number of the first problem. Nothing is returned half-parsed.
 *
 * @example
 * const data = parseMeasuredCsv(text, { coordinates: [{ name: "theta1", unit: "rad" }] });
 * data.series[0].values; // radians
 */
export function parseMeasuredCsv(text: string, options: MeasuredDataOptions): MeasuredData {
  const maxBytes = options.maxBytes ?? DEFAULT_MEASURED_LIMITS.maxBytes;
  const maxRows = options.maxRows ?? DEFAULT_MEASURED_LIMITS.maxRows;
  // Characters never outnumber UTF-8 bytes, so the cheap test comes first.
  if (text.length > maxBytes || utf8Length(text) > maxBytes) {
    throw new MeasuredDataError("too_large", `the file is larger than the limit of ${formatBytes(maxBytes)}`);
  }

  // One line break throughout, so every record's line number counts physical lines.
  const normalized = text.replace(/\r\n?/g, "\n");
  const headerText = firstContentLine(normalized);
  if (headerText === undefined) throw new MeasuredDataError("empty", "the file has no header row and no data");
  const delimiter = headerText.includes(",") ? "," : headerText.includes(";") ? ";" : headerText.includes("\t") ? "\t" : ",";
  const records = csvRecords(normalized, delimiter);
  const header = records[0];
  if (!header) throw new MeasuredDataError("empty", "the file has no header row and no data");
  const headerLine = header.line;

  const known = new Map(options.coordinates.map((c) => [c.name, c.unit]));
  const columns: Column[] = [];
  let timeUnit = "";
  let timeScale = 1;
  const seen = new Set<string>();

  header.cells.forEach((cell, index) => {
    const match = HEADER_CELL.exec(cell);
    if (!match) {
      throw new MeasuredDataError("header", `header cell ${index + 1} ("${cell}") is not of the form name [unit], e.g. theta1 [deg]`, headerLine, cell);
    }
    const name = match[1]!;
    const rate = match[2] === "'";
    const unitText = match[3]?.trim();
    const isTime = !rate && (name === "t" || name === "time");
    const isEnergy = !rate && name === "energy" && !known.has(name);
    const key = isTime ? "t" : rate ? `${name}'` : name;
    const label = rate ? `${name}'` : name;
    if (seen.has(key)) throw new MeasuredDataError("duplicate_column", `the column "${label}" appears twice`, headerLine, label);
    seen.add(key);
    if (!isTime && !isEnergy && !known.has(name)) {
      const names = [...known.keys()].join(", ");
      throw new MeasuredDataError("unknown_column", `"${name}" is not a coordinate of the model (coordinates: ${names}; time: t)`, headerLine, label);
    }
    if (unitText === undefined || unitText === "") {
      throw new MeasuredDataError(
        "missing_unit",
        `the column "${label}" has no unit; write it in brackets, e.g. ${label} [${isTime ? "s" : "rad"}]`,
        headerLine,
        label,
      );
    }
    if (isTime) {
      timeUnit = unitText;
      timeScale = conversionFactor(unitText, "s", headerLine, name);
      columns.push({ kind: "time", index });
    } else if (isEnergy) {
      expectDimension(unitText, ENERGY_DIMENSION, "J", headerLine, label);
      columns.push({ kind: "other", index });
    } else if (rate) {
      const target = known.get(name)?.trim();
      if (target) {
        const { dimension } = readUnit(target, headerLine, label, "model");
        expectDimension(
          unitText,
          dimension.map((d, i) => (i === 2 ? d - 1 : d)),
          `${target}/s`,
          headerLine,
          label,
        );
      } else readUnit(unitText, headerLine, label, "column");
      columns.push({ kind: "other", index });
    } else {
      const target = known.get(name);
      if (target === undefined || target.trim() === "") {
        const scale = conversionFactor(unitText, null, headerLine, name);
        columns.push({
          kind: "coordinate",
          index,
          coordinate: name,
          unit: unitText,
          targetUnit: siUnitText(readUnit(unitText, headerLine, name, "column").dimension),
          scale,
        });
      } else {
        columns.push({
          kind: "coordinate",
          index,
          coordinate: name,
          unit: unitText,
          targetUnit: target,
          scale: conversionFactor(unitText, target, headerLine, name),
        });
      }
    }
  });

  const timeColumn = columns.find((c) => c.kind === "time")?.index ?? -1;
  const coordinateColumns = columns.filter((c): c is Extract<Column, { kind: "coordinate" }> => c.kind === "coordinate");
  if (timeColumn < 0) throw new MeasuredDataError("missing_column", "the header has no time column (t [s])", headerLine, "t");
  if (coordinateColumns.length === 0) throw new MeasuredDataError("missing_column", "the header has no coordinate column", headerLine);
  for (const required of options.requiredCoordinates ?? []) {
    if (!coordinateColumns.some((c) => c.coordinate === required)) {
      throw new MeasuredDataError("missing_column", `the column "${required}" is missing`, headerLine, required);
    }
  }

  const rowCount = records.length - 1;
  if (rowCount > maxRows) throw new MeasuredDataError("too_many_rows", `more than ${maxRows} data rows`, records[maxRows + 1]!.line);
  if (rowCount < 2) throw new MeasuredDataError("too_few_rows", "at least two data rows are needed", rowCount === 0 ? headerLine : null);

  const times = new Float64Array(rowCount);
  const values = coordinateColumns.map(() => new Float64Array(rowCount));
  const width = header.cells.length;
  for (let row = 0; row < rowCount; row++) {
    const { cells, line } = records[row + 1]!;
    if (cells.length !== width) {
      throw new MeasuredDataError("column_count", `expected ${width} cells as in the header, found ${cells.length}`, line);
    }
    const read = (index: number, column: string): number => {
      const cell = cells[index]!;
      if (cell === "") throw new MeasuredDataError("bad_cell", `the ${column} cell is empty`, line, column);
      if (!NUMBER.test(cell)) throw new MeasuredDataError("bad_cell", `the ${column} cell "${cell}" is not a number`, line, column);
      const value = Number(cell);
      if (!Number.isFinite(value)) throw new MeasuredDataError("bad_cell", `the ${column} cell "${cell}" is out of range`, line, column);
      return value;
    };
    const t = read(timeColumn, "time") * timeScale;
    if (row > 0 && !(t > times[row - 1]!)) {
      throw new MeasuredDataError("non_monotone_time", `time ${cells[timeColumn]} ${timeUnit} is not after the previous row's`, line, "t");
    }
    times[row] = t;
    coordinateColumns.forEach((column, c) => {
      values[c]![row] = read(column.index, column.coordinate) * column.scale;
    });
  }

  return {
    times,
    timeUnit,
    series: coordinateColumns.map((column, c) => ({
      coordinate: column.coordinate,
      unit: column.unit,
      targetUnit: column.targetUnit,
      scale: column.scale,
      values: values[c]!,
    })),
  };
}

/** The first line that is neither blank nor a comment (the header), without splitting the whole file. */
function firstContentLine(text: string): string | undefined {
  for (let start = 0; start < text.length;) {
    const end = text.indexOf("\n", start);
    const line = text.slice(start, end < 0 ? text.length : end);
    const trimmed = line.trim();
    if (trimmed !== "" && !trimmed.startsWith("#")) return line;
    if (end < 0) break;
    start = end + 1;
  }
  return undefined;
}

/** Reads a unit of a column (or the model's unit for it); refuses unknown units and units with an offset (°C). */
function readUnit(text: string, line: number, column: string, whose: "column" | "model"): ParsedUnit {
  let unit: ParsedUnit;
  try {
    unit = parseUnitText(text);
  } catch {
    throw new MeasuredDataError(
      "unknown_unit",
      whose === "model" ? `the model's unit "${text}" for "${column}" is not known` : `unknown unit "${text}" in the column "${column}"`,
      line,
      column,
    );
  }
  if (unit.hasOffset) throw new MeasuredDataError("unknown_unit", `the unit "${text}" has an offset; use an absolute unit`, line, column);
  return unit;
}

function expectDimension(text: string, dimension: UnitDimension, expected: string, line: number, column: string): void {
  if (!sameUnitDimension(readUnit(text, line, column, "column").dimension, dimension)) {
    throw new MeasuredDataError("unit_mismatch", `the column "${column}" is in ${text}, which cannot be converted to ${expected}`, line, column);
  }
}

/**
 * Factor turning a reading in `from` into `to` (or SI when `to` is null).
 * Refuses unknown units, units of another kind, and units with an offset
 * (°C), for which no factor exists.
 */
function conversionFactor(from: string, to: string | null, line: number, column: string): number {
  const source = readUnit(from, line, column, "column");
  if (to === null) return source.factor;
  const target = readUnit(to, line, column, "model");
  if (!sameUnitDimension(source.dimension, target.dimension)) {
    throw new MeasuredDataError("unit_mismatch", `the column "${column}" is in ${from}, which cannot be converted to ${to}`, line, column);
  }
  return source.factor / target.factor;
}

function utf8Length(text: string): number {
  let bytes = 0;
  for (let i = 0; i < text.length; i++) {
    const code = text.charCodeAt(i);
    if (code < 0x80) bytes += 1;
    else if (code < 0x800) bytes += 2;
    else if (code >= 0xd800 && code <= 0xdbff) {
      bytes += 4;
      i++;
    } else bytes += 3;
  }
  return bytes;
}

function formatBytes(bytes: number): string {
  return bytes >= 1024 * 1024 ? `${(bytes / (1024 * 1024)).toFixed(1)} MB` : `${Math.ceil(bytes / 1024)} kB`;
}

/**
 * Values of a sampled signal at other times, by linear interpolation (for
 * overlaying measured data on a simulation grid or the reverse). Times outside
 * the samples get NaN, so a chart shows a gap rather than an invented value.
 */
export function resample(times: ArrayLike<number>, values: ArrayLike<number>, at: ArrayLike<number>): Float64Array {
  const out = new Float64Array(at.length);
  let k = 0;
  for (let i = 0; i < at.length; i++) {
    const t = at[i]!;
    if (!(t >= times[0]! && t <= times[times.length - 1]!)) {
      out[i] = Number.NaN;
      continue;
    }
    while (k < times.length - 2 && times[k + 1]! < t) k++;
    while (k > 0 && times[k]! > t) k--;
    const t0 = times[k]!;
    const t1 = times[k + 1] ?? t0;
    const s = t1 === t0 ? 0 : (t - t0) / (t1 - t0);
    out[i] = values[k]! + s * ((values[k + 1] ?? values[k]!) - values[k]!);
  }
  return out;
}
