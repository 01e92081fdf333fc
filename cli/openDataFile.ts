/**
 * Open a data file of `test`, `report` and `suggest` with the engine `--engine` asks for (see
 * `dataFormat.ts` for the rule of `auto`): delimited text with the memory engine (`loadTable`)
 * or DuckDB (`readDuckdbTable`), Parquet files and DuckDB database tables (`--table`) with
 * DuckDB. A text file's names come from its header line; a Parquet file's or a table's from
 * its schema.
 */
import { resolve } from "node:path";
import { UsageError } from "../src/errors.js";
import { readFailure } from "./fileErrors.js";
import { chooseEngine, probeFile } from "./dataFormat.js";
import { type Io, readHead } from "./io.js";
import { loadTable } from "./loadTable.js";
import { readOptionsFrom } from "./readOptionsFrom.js";
import type { DataSource } from "./readStdin.js";
import { listDuckdbFields, readDuckdbTable, type DuckdbSource } from "./readDuckdbTable.js";

/**
 * The data source of a regular file, read by the engine `opts.engine` chooses. Cost: a 12-byte
 * read and a stat; for Parquet and database files, opening DuckDB to read the schema.
 * @throws UsageError for an engine or `--table` that does not fit the file (see `chooseEngine`)
 * @throws InputError when the file cannot be read, or DuckDB cannot read it
 */
export async function openDataFile(io: Io, path: string, opts: Record<string, unknown>): Promise<DataSource> {
  const full = resolve(io.cwd, path);
  let probe: ReturnType<typeof probeFile>;
  try {
    probe = probeFile(full);
  } catch (e) {
    throw readFailure(path, e, "data file");
  }
  const table = typeof opts.table === "string" ? opts.table : undefined;
  const engine = chooseEngine(opts.engine as string | undefined, probe.format, probe.size, path, table);
  if (engine === "memory") return { name: path, head: readHead(path, io.cwd), load: (columns) => loadTable(io, path, opts, columns) };
  const source: DuckdbSource = { path: full, name: path, format: probe.format, ...(table !== undefined ? { table } : {}) };
  const load = (columns: string[]) => readDuckdbTable(source, readOptionsFrom(opts, path, columns));
  if (probe.format === "csv") return { name: path, head: readHead(path, io.cwd), load };
  for (const flag of ["delimiter", "decimalComma"] as const) {
    if (opts[flag]) throw new UsageError(`--${flag === "decimalComma" ? "decimal-comma" : flag} is for delimited text, and ${path} is ${probe.format === "parquet" ? "a Parquet file" : "a DuckDB database file"}; drop it`);
  }
  return { name: path, head: "", fields: await listDuckdbFields(source), load };
}
