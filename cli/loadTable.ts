import { readTable } from "../src/data/readTable.js";
import { parseLevelDeclarations, parseMissingCodes, parseTypeDeclarations, type ReadOptions } from "../src/data/readOptions.js";
import type { Table } from "../src/data/Table.js";
import { type Io, streamInput } from "./io.js";

/** Data-reading options from parsed command-line options. */
export function readOptionsFrom(opts: Record<string, unknown>, file: string, columns?: string[]): ReadOptions {
  const d = opts.delimiter as string | undefined;
  return {
    file,
    ...(d ? { delimiter: (d === "tab" || d === "\\t" ? "\t" : d) as ReadOptions["delimiter"] } : {}),
    decimalComma: !!opts.decimalComma,
    missing: typeof opts.missing === "string" ? parseMissingCodes(opts.missing) : [],
    types: typeof opts.types === "string" ? parseTypeDeclarations(opts.types) : {},
    levels: typeof opts.levels === "string" ? parseLevelDeclarations(opts.levels) : {},
    ...(columns ? { columns } : {}),
  };
}

/** Stream a data file into typed columns, keeping only `columns`; print its warnings unless --quiet. */
export async function loadTable(io: Io, path: string, opts: Record<string, unknown>, columns?: string[]): Promise<Table> {
  const table = await readTable(streamInput(path, io.cwd), readOptionsFrom(opts, path, columns));
  return table;
}
