/**
 * SQL run in a fresh in-memory embedded DuckDB, for tests and benchmarks that write Parquet or
 * DuckDB files, or that check SQL against other references.
 */
import { DuckDBInstance } from "@duckdb/node-api";

/**
 * Run the statements in order in a fresh in-memory DuckDB and return the rows of the last one.
 * @example await duckdbSql(`COPY (SELECT 1 AS a) TO 'a.parquet' (FORMAT parquet)`)
 */
export async function duckdbSql(...statements: string[]): Promise<unknown[][]> {
  const instance = await DuckDBInstance.create(":memory:");
  const connection = await instance.connect();
  try {
    let rows: unknown[][] = [];
    for (const s of statements) rows = (await connection.runAndReadAll(s)).getRows() as unknown[][];
    return rows;
  } finally {
    connection.closeSync();
    instance.closeSync();
  }
}
