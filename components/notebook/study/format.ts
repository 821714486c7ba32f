/** Numbers of a study as the cell prints them: four significant digits, exponent form when very small or large. */
export function formatStudyNumber(value: number | null | undefined, digits = 4): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return "—";
  if (value === 0) return "0";
  const magnitude = Math.abs(value);
  return magnitude >= 1e-3 && magnitude < 1e6 ? String(Number(value.toPrecision(digits))) : value.toExponential(digits - 1);
}

/** Time left in words ("about 3 min"), from the server's estimate in seconds. */
export function formatTimeLeft(seconds: number | null): string | null {
  if (seconds === null || !Number.isFinite(seconds) || seconds < 0) return null;
  if (seconds < 60) return `about ${Math.max(1, Math.round(seconds))} s left`;
  if (seconds < 3600) return `about ${Math.round(seconds / 60)} min left`;
  const hours = Math.floor(seconds / 3600);
  return `about ${hours} h ${Math.round((seconds - hours * 3600) / 60)} min left`;
}

/** "m = 1.2, l = 4.75" */
export function formatParameters(parameters: Record<string, number>, names?: readonly string[]): string {
  const keys = names ?? Object.keys(parameters);
  return keys
    .filter((name) => name in parameters)
    .map((name) => `${name} = ${formatStudyNumber(parameters[name])}`)
    .join(", ");
}
