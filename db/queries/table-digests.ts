import "server-only";
import { sql } from "drizzle-orm";
import { db } from "../client";

export interface TableDigest {
  rows: number;
  /** MD5 of the table's rows as text, sorted, so the digest does not depend on physical order. */
  md5: string;
}

/**
 * Columns that stand for a table's content where the whole row does not: the
 * job queue's one-row `version` table also holds the times its workers last
 * ran maintenance, which they stamp every few minutes, so a live database and
 * a dump taken a moment later differ there and nowhere that matters.
 */
const CONTENT_COLUMNS: Record<string, readonly string[]> = { "pgboss.version": ["version"] };

/**
 * Row count and content digest of every table outside the system catalogs
 * (the app's tables, drizzle's migration journal, the job queue), keyed
 * "schema.table". A restored backup must give the same map as its source.
 */
export async function getTableDigests(): Promise<Record<string, TableDigest>> {
  const tables = await db.execute<{ schema: string; name: string }>(sql`
    select table_schema as schema, table_name as name from information_schema.tables
    where table_type = 'BASE TABLE' and table_schema not in ('pg_catalog', 'information_schema')
    order by table_schema, table_name`);
  const digests: Record<string, TableDigest> = {};
  for (const { schema, name } of tables.rows) {
    const table = sql.identifier(name);
    const owner = sql.identifier(schema);
    const columns = CONTENT_COLUMNS[`${schema}.${name}`];
    const rowText = columns
      ? sql`row(${sql.join(
          columns.map((column) => sql`t.${sql.identifier(column)}`),
          sql`, `,
        )})::text`
      : sql`t::text`;
    const result = await db.execute<{ rows: string; md5: string | null }>(sql`
      select count(*)::text as rows, md5(coalesce(string_agg(row_text, E'\\n' order by row_text), '')) as md5
      from (select ${rowText} as row_text from ${owner}.${table} t) as rows_as_text`);
    const row = result.rows[0]!;
    digests[`${schema}.${name}`] = { rows: Number(row.rows), md5: row.md5 ?? "" };
  }
  return digests;
}

/** Tables outside the system catalogs; a restore target must have none. */
export async function countUserTables(): Promise<number> {
  const result = await db.execute<{ count: string }>(sql`
    select count(*)::text as count from information_schema.tables
    where table_type = 'BASE TABLE' and table_schema not in ('pg_catalog', 'information_schema')`);
  return Number(result.rows[0]!.count);
}
