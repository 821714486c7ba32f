/**
 * The one row an INSERT/UPDATE … RETURNING gave back. A write that returns
 * nothing here means the row vanished under us (or a bug), never user input,
 * so it is an internal error rather than a typed data error.
 */
export function returnedRow<T>(rows: readonly T[], what: string): T {
  const row = rows[0];
  if (row === undefined) throw new Error(`the ${what} write returned no row`);
  return row;
}
