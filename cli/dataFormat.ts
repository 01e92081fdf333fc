/**
 * Which data engine reads a data file (`--engine memory|duckdb|auto`) and how the file is
 * written.
 *
 * Terms: the *format* of a data file is read from its first bytes, not its name: a Parquet file
 * begins with the four bytes `PAR1` (Apache Parquet file format specification, "File Format");
 * a DuckDB database file holds `DUCK` at bytes 8–11 (its main header); anything else is taken
 * as delimited text. The *memory engine* is arrowaudit's own reader (`readTable`, two threads
 * for large plain files); the *DuckDB engine* is `readDuckdbTable`.
 *
 * The rule of `auto`: DuckDB for Parquet and database files (the memory engine reads only
 * delimited text); for delimited text, the memory engine at every size, because it was faster
 * than DuckDB on every file measured here (bench/duckdb.ts; the README gives the figures), so
 * the size threshold above which `auto` would choose DuckDB for text is infinite. Memory does
 * not argue otherwise: DuckDB reading text fills the same columns (the rows-free linear audit of
 * `duckdbMomentsAudit.ts` is for Parquet and database files only), so it holds as much. Measured
 * on the 1,000,000 × 50 CSV (372 MB) with `--method linear`: memory engine 2.95 s and 561 MB peak
 * RSS, DuckDB 7.0 s and 588 MB; with the default method 7.0 s and 743 MB against 10.8 s and 793 MB.
 */
import { closeSync, openSync, readSync, statSync } from "node:fs";
import { UsageError } from "../src/errors.js";

export type DataFormat = "csv" | "parquet" | "duckdb";
export type DataEngine = "memory" | "duckdb";
export const ENGINE_CHOICES = ["auto", "memory", "duckdb"] as const;

/**
 * Size in bytes from which `--engine auto` reads delimited text with DuckDB: infinite, since
 * the memory engine was the faster on every size measured (see the module comment).
 */
export const DUCKDB_CSV_MIN_BYTES = Number.POSITIVE_INFINITY;

/**
 * The first `bytes` bytes of a file (fewer when the file is shorter). Cost: O(bytes).
 * @throws the file system's error when the file cannot be read
 */
export function readFileHead(path: string, bytes: number): Uint8Array {
  const fd = openSync(path, "r");
  try {
    const buf = new Uint8Array(bytes);
    let n = 0;
    while (n < bytes) {
      const got = readSync(fd, buf, n, bytes - n, n);
      if (got === 0) break;
      n += got;
    }
    return buf.subarray(0, n);
  } finally {
    closeSync(fd);
  }
}

/**
 * The format of a file from its first 12 bytes (see the module comment). Cost: O(1).
 * @example formatOfHead(new TextEncoder().encode("PAR1....")) // "parquet"
 */
export function formatOfHead(head: Uint8Array): DataFormat {
  const ascii = (from: number, to: number) => String.fromCharCode(...head.subarray(from, to));
  if (head.length >= 4 && ascii(0, 4) === "PAR1") return "parquet";
  if (head.length >= 12 && ascii(8, 12) === "DUCK") return "duckdb";
  return "csv";
}

/**
 * The engine that reads a file, from `--engine` and the file's format and size (the rule is in
 * the module comment). Cost: O(1).
 * @throws UsageError for `--engine memory` on a Parquet or database file, and for `--table`
 *   on anything but a database file
 * @example chooseEngine("auto", "parquet", 1e6, "cohort.parquet") // "duckdb"
 */
export function chooseEngine(requested: string | undefined, format: DataFormat, size: number, name: string, table?: string): DataEngine {
  const label = format === "parquet" ? "a Parquet file" : "a DuckDB database file";
  if (table !== undefined && format !== "duckdb") {
    throw new UsageError(`--table names a table of a DuckDB database file, but ${name} is ${format === "parquet" ? "a Parquet file" : "not one (read as delimited text)"}; drop --table`);
  }
  if (requested === "memory") {
    if (format !== "csv") throw new UsageError(`--engine memory reads delimited text only, and ${name} is ${label}; use --engine duckdb or auto`);
    return "memory";
  }
  if (requested === "duckdb") return "duckdb";
  if (format !== "csv") return "duckdb";
  return size >= DUCKDB_CSV_MIN_BYTES ? "duckdb" : "memory";
}

/** Format and size of a file on disk. Cost: two system calls and a 12-byte read. */
export function probeFile(path: string): { format: DataFormat; size: number } {
  return { format: formatOfHead(readFileHead(path, 12)), size: statSync(path).size };
}
