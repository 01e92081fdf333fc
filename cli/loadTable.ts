import { existsSync } from "node:fs";
import { resolve } from "node:path";
import { InputError } from "../src/errors.js";
import { parseLevelDeclarations, parseMissingCodes, parseTypeDeclarations, type ReadOptions } from "../src/data/readOptions.js";
import type { Table } from "../src/data/Table.js";
import type { Io } from "./io.js";
import { parallelReadTable } from "./parallelReadTable.js";

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

/**
 * Read a data file into typed columns, keeping only `columns`: two threads for large plain
 * files, the streaming reader otherwise (cli/parallelReadTable.ts decides).
 */
export async function loadTable(io: Io, path: string, opts: Record<string, unknown>, columns?: string[]): Promise<Table> {
  const full = resolve(io.cwd, path);
  if (!existsSync(full)) throw new InputError(`${path}: no such file; check the path`, { file: path });
  return parallelReadTable(full, readOptionsFrom(opts, path, columns));
}
