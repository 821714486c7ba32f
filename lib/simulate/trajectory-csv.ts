/**
 * A trajectory as CSV in the measured-data format (measured.ts): the header
 * cells are `name [unit]`, time first, then each coordinate, each rate and
 * the energy function when there is one, then the outputs, the constraints'
 * multipliers and their residuals when the run has them. Dependency-free, for
 * the server's run download and the notebook's browser runs alike.
 */

/** The columns of a trajectory, from a stored run or a run in the browser. */
export interface TrajectoryColumns {
  coordinateNames: readonly string[];
  times: ArrayLike<number>;
  coordinates: readonly ArrayLike<number>[];
  rates: readonly ArrayLike<number>[];
  energy: ArrayLike<number> | null;
  /** The system's outputs along the run. */
  outputs?: readonly { name: string; unit: string | null; values: ArrayLike<number> }[];
  /** The constraints' multipliers and residuals along the run. */
  constraints?: {
    names: readonly string[];
    multiplierNames: readonly string[];
    multipliers: readonly ArrayLike<number>[];
    residuals: readonly ArrayLike<number>[];
  } | null;
}

/** Units of the columns a run adds: each multiplier's and each constraint residual's, by name (the CSV writes `1` where none is known). */
export interface ExtraColumnUnits {
  multipliers?: Readonly<Record<string, string>>;
  residuals?: Readonly<Record<string, string>>;
}

/**
 * One row per output time. Numbers are written in full (shortest round-trip
 * form), so re-reading gives the same values; a coordinate without a unit is
 * written `[1]`, as the measured-data format asks of a dimensionless one.
 *
 * @example trajectoryCsv(run, { theta: "rad" }) // "t [s],theta [rad],theta' [rad/s]\n0,0.2,0\n…"
 */
export function trajectoryCsv(
  trajectory: TrajectoryColumns,
  coordinateUnits: Readonly<Record<string, string>> = {},
  extraUnits: ExtraColumnUnits = {},
): string {
  const constraints = trajectory.constraints ?? null;
  const unitOf = (name: string) => coordinateUnits[name]?.trim() || "1";
  // `*` and `/` associate to the left, so appending "/s" divides the whole unit.
  const rateUnit = (name: string) => (unitOf(name) === "1" ? "1/s" : `${unitOf(name)}/s`);
  const header = [
    "t [s]",
    ...trajectory.coordinateNames.map((name) => `${name} [${unitOf(name)}]`),
    ...trajectory.coordinateNames.map((name) => `${name}' [${rateUnit(name)}]`),
    ...(trajectory.energy ? ["energy [J]"] : []),
    ...(trajectory.outputs ?? []).map((o) => `${o.name} [${o.unit?.trim() || "1"}]`),
    ...(constraints?.multiplierNames ?? []).map((name) => `${name} [${extraUnits.multipliers?.[name]?.trim() || "1"}]`),
    ...(constraints?.names ?? []).map((name) => `residual ${name} [${extraUnits.residuals?.[name]?.trim() || "1"}]`),
  ];
  const lines = [header.join(",")];
  const cell = (value: number | null | undefined) => (value === null || value === undefined || !Number.isFinite(value) ? "" : String(value));
  for (let k = 0; k < trajectory.times.length; k++) {
    const row = [cell(trajectory.times[k])];
    for (const column of trajectory.coordinates) row.push(cell(column[k]));
    for (const column of trajectory.rates) row.push(cell(column[k]));
    if (trajectory.energy) row.push(cell(trajectory.energy[k]));
    for (const output of trajectory.outputs ?? []) row.push(cell(output.values[k]));
    for (const column of constraints?.multipliers ?? []) row.push(cell(column[k]));
    for (const column of constraints?.residuals ?? []) row.push(cell(column[k]));
    lines.push(row.join(","));
  }
  return `${lines.join("\n")}\n`;
}
