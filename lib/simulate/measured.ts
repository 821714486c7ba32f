import { unit as mathUnit } from "mathjs";
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
 *   be wrapped in double quotes. Numbers use a decimal point (`1.5`, `-2e-3`).
 * - Every data row has one number per column: no empty cells, no `NaN`, no
 *   infinities. Time increases strictly from row to row.
 * - A time column and at least one coordinate column are required, and at
 *   least two data rows.
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

const HEADER_CELL = /^([A-Za-z_][A-Za-z0-9_]*)\s*(?:\[([^\]]*)\])?$/;
const NUMBER = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;

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

  const lines = text.split(/\r\n|\n|\r/);
  let headerIndex = -1;
  for (let i = 0; i < lines.length; i++) {
    const trimmed = lines[i]!.trim();
    if (trimmed === "" || trimmed.startsWith("#")) continue;
    headerIndex = i;
    break;
  }
  if (headerIndex < 0) throw new MeasuredDataError("empty", "the file has no header row and no data");

  const headerLine = headerIndex + 1;
  const headerText = lines[headerIndex]!;
  const delimiter = headerText.includes(",") ? "," : headerText.includes(";") ? ";" : headerText.includes("\t") ? "\t" : ",";
  const headerCells = splitCells(headerText, delimiter);

  const known = new Map(options.coordinates.map((c) => [c.name, c.unit]));
  let timeColumn = -1;
  let timeUnit = "";
  let timeScale = 1;
  const columns: { index: number; coordinate: string; unit: string; targetUnit: string; scale: number }[] = [];
  const seen = new Set<string>();

  headerCells.forEach((cell, index) => {
    const match = HEADER_CELL.exec(cell);
    if (!match) {
      throw new MeasuredDataError("header", `header cell ${index + 1} ("${cell}") is not of the form name [unit], e.g. theta1 [deg]`, headerLine, cell);
    }
    const name = match[1]!;
    const unitText = match[2]?.trim();
    const isTime = name === "t" || name === "time";
    const key = isTime ? "t" : name;
    if (seen.has(key)) throw new MeasuredDataError("duplicate_column", `the column "${name}" appears twice`, headerLine, name);
    seen.add(key);
    if (!isTime && !known.has(name)) {
      const names = [...known.keys()].join(", ");
      throw new MeasuredDataError("unknown_column", `"${name}" is not a coordinate of the model (coordinates: ${names}; time: t)`, headerLine, name);
    }
    if (unitText === undefined || unitText === "") {
      throw new MeasuredDataError("missing_unit", `the column "${name}" has no unit; write it in brackets, e.g. ${name} [${isTime ? "s" : "rad"}]`, headerLine, name);
    }
    if (isTime) {
      timeColumn = index;
      timeUnit = unitText;
      timeScale = conversionFactor(unitText, "s", headerLine, name);
    } else {
      const target = known.get(name);
      if (target === undefined || target.trim() === "") {
        const scale = conversionFactor(unitText, null, headerLine, name);
        columns.push({ index, coordinate: name, unit: unitText, targetUnit: siName(unitText), scale });
      } else {
        columns.push({ index, coordinate: name, unit: unitText, targetUnit: target, scale: conversionFactor(unitText, target, headerLine, name) });
      }
    }
  });

  if (timeColumn < 0) throw new MeasuredDataError("missing_column", "the header has no time column (t [s])", headerLine, "t");
  if (columns.length === 0) throw new MeasuredDataError("missing_column", "the header has no coordinate column", headerLine);
  for (const required of options.requiredCoordinates ?? []) {
    if (!columns.some((c) => c.coordinate === required)) {
      throw new MeasuredDataError("missing_column", `the column "${required}" is missing`, headerLine, required);
    }
  }

  // Count data rows first so the arrays are allocated once.
  let rowCount = 0;
  for (let i = headerIndex + 1; i < lines.length; i++) {
    const trimmed = lines[i]!.trim();
    if (trimmed === "" || trimmed.startsWith("#")) continue;
    rowCount++;
    if (rowCount > maxRows) throw new MeasuredDataError("too_many_rows", `more than ${maxRows} data rows`, i + 1);
  }
  if (rowCount < 2) throw new MeasuredDataError("too_few_rows", "at least two data rows are needed", rowCount === 0 ? headerLine : null);

  const times = new Float64Array(rowCount);
  const values = columns.map(() => new Float64Array(rowCount));
  const width = headerCells.length;
  let row = 0;
  for (let i = headerIndex + 1; i < lines.length; i++) {
    const raw = lines[i]!;
    const trimmed = raw.trim();
    if (trimmed === "" || trimmed.startsWith("#")) continue;
    const line = i + 1;
    const cells = splitCells(raw, delimiter);
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
    columns.forEach((column, c) => {
      values[c]![row] = read(column.index, column.coordinate) * column.scale;
    });
    row++;
  }

  return {
    times,
    timeUnit,
    series: columns.map((column, c) => ({ coordinate: column.coordinate, unit: column.unit, targetUnit: column.targetUnit, scale: column.scale, values: values[c]! })),
  };
}

/**
 * Factor turning a reading in `from` into `to` (or SI when `to` is null).
 * Refuses units mathjs does not know, units of another kind, and units with
 * an offset (°C), for which no factor exists.
 */
function conversionFactor(from: string, to: string | null, line: number, column: string): number {
  if (from === "1") {
    if (to === null || to === "1") return 1;
    throw new MeasuredDataError("unit_mismatch", `the column "${column}" is dimensionless but the model gives it in ${to}`, line, column);
  }
  let source;
  try {
    source = mathUnit(1, from);
  } catch {
    throw new MeasuredDataError("unknown_unit", `unknown unit "${from}" in the column "${column}"`, line, column);
  }
  if (mathUnit(0, from).toSI().toNumber() !== 0) {
    throw new MeasuredDataError("unknown_unit", `the unit "${from}" has an offset; use an absolute unit`, line, column);
  }
  if (to === null) return source.toSI().toNumber();
  let target;
  try {
    target = mathUnit(1, to);
  } catch {
    throw new MeasuredDataError("unknown_unit", `the model's unit "${to}" for "${column}" is not known`, line, column);
  }
  if (!source.equalBase(target)) {
    throw new MeasuredDataError("unit_mismatch", `the column "${column}" is in ${from}, which cannot be converted to ${to}`, line, column);
  }
  return source.toNumber(to);
}

function siName(unitText: string): string {
  if (unitText === "1") return "1";
  const si = mathUnit(1, unitText).toSI();
  return si.formatUnits();
}

function splitCells(line: string, delimiter: string): string[] {
  return line.split(delimiter).map((cell) => {
    let value = cell.trim();
    if (value.length >= 2 && value.startsWith('"') && value.endsWith('"')) value = value.slice(1, -1).trim();
    return value;
  });
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
