/**
 * The reading options of the command line as `ReadOptions`, in a module of its own so that the
 * command layer checks them before any command's code is loaded.
 */
import { UsageError } from "../src/errors.js";
import { parseLevelDeclarations, parseMissingSpec, parseNameList, parseTypeDeclarations, type ReadOptions } from "../src/data/readOptions.js";

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
