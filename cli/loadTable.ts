import { existsSync } from "node:fs";
import { resolve } from "node:path";
import { InputError, UsageError } from "../src/errors.js";
import { parseLevelDeclarations, parseMissingSpec, parseNameList, parseTypeDeclarations, type ReadOptions } from "../src/data/readOptions.js";
import type { Table } from "../src/data/Table.js";
import type { Io } from "./io.js";
import { parallelReadTable } from "./parallelReadTable.js";

/**
 * Data-reading options from parsed command-line options. Checks what the command line alone
 * can tell (the list grammar, `--decimal-comma` with `--delimiter ,`), so that such mistakes are
 * usage errors before any file is read.
 * @throws UsageError for a malformed list or contradictory options
 */
export function readOptionsFrom(opts: Record<string, unknown>, file: string, columns?: string[]): ReadOptions {
  const d = opts.delimiter as string | undefined;
  const delimiter = d ? ((d === "tab" || d === "\\t" ? "\t" : d) as ReadOptions["delimiter"]) : undefined;
  const decimalComma = !!opts.decimalComma;
  if (decimalComma && delimiter === ",") {
    throw new UsageError("--decimal-comma needs a semicolon or tab delimiter, since a decimal comma cannot also separate the fields; drop --delimiter , or give --delimiter ; or --delimiter tab");
  }
  const missing = typeof opts.missing === "string" ? parseMissingSpec(opts.missing) : undefined;
  return {
    file,
    ...(delimiter ? { delimiter } : {}),
    decimalComma,
    missing: missing?.codes ?? [],
    ...(missing && Object.keys(missing.byColumn).length > 0 ? { missingByColumn: missing.byColumn } : {}),
    types: typeof opts.types === "string" ? parseTypeDeclarations(opts.types) : {},
    levels: typeof opts.levels === "string" ? parseLevelDeclarations(opts.levels) : {},
    ...(typeof opts.ignore === "string" ? { ignore: parseNameList(opts.ignore, "--ignore") } : {}),
    ...(columns ? { columns } : {}),
  };
}

/**
 * Read a data file into typed columns, keeping only `columns` (the graph's measured nodes):
 * two threads for large plain files, the streaming reader otherwise (cli/parallelReadTable.ts
 * decides).
 * @throws UsageError when `--ignore` names one of `columns` (a measured node the audit needs)
 */
export async function loadTable(io: Io, path: string, opts: Record<string, unknown>, columns?: string[]): Promise<Table> {
  const options = readOptionsFrom(opts, path, columns);
  if (options.ignore && columns) {
    const needed = new Set(columns.map((n) => n.normalize("NFC")));
    const clash = options.ignore.filter((n) => needed.has(n.normalize("NFC")));
    if (clash.length > 0) {
      const list = clash.map((n) => `"${n}"`).join(", ");
      throw new UsageError(
        `--ignore: ${list} ${clash.length === 1 ? "is a measured node" : "are measured nodes"} of the graph, which the audit needs; remove ${clash.length === 1 ? "it" : "them"} from --ignore, or declare ${clash.length === 1 ? "it" : "them"} unmeasured (--unmeasured ${clash.join(",")}) to leave ${clash.length === 1 ? "it" : "them"} out of the tests`,
      );
    }
  }
  const full = resolve(io.cwd, path);
  if (!existsSync(full)) throw new InputError(`${path}: no such file; check the path`, { file: path });
  return parallelReadTable(full, options);
}
