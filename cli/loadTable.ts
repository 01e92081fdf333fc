import { existsSync } from "node:fs";
import { resolve } from "node:path";
import { InputError, UsageError } from "../src/errors.js";
import type { Table } from "../src/data/Table.js";
import type { Io } from "./io.js";
import { parallelReadTable } from "./parallelReadTable.js";
import { readOptionsFrom } from "./readOptionsFrom.js";

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
