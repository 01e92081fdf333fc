/**
 * The DuckDB engine against the memory engine (`node --import tsx bench/duckdb.ts` after
 * `npm run build`; also a step of `npm run bench`). Not a timed test.
 * 1. reading alone, in this process: the numeric cohort's first 10,000, 100,000 and all
 *    1,000,000 rows × 50 continuous columns, by the memory engine (`parallelReadTable`) and by
 *    DuckDB (`readDuckdbTable`), best of two: the figures behind `--engine auto`'s rule for text;
 * 2. `arrowaudit test --json` end to end on the 1,000,000 × 50 CSV with `--engine memory` and
 *    `--engine duckdb` in the same run (wall time and peak RSS from /proc);
 * 3. the same cohort as a Parquet file (written by DuckDB from the CSV), read by DuckDB;
 * 4. the linear sufficient statistics of the 50 columns (counts, sums and 1,275 cross-products
 *    per missing-data pattern) two ways: DuckDB's SQL aggregates (`patternMomentsSql`) over the
 *    Parquet file, and DuckDB's chunks streamed into our columns (`readDuckdbTable`) followed by
 *    our accumulators (`buildPatternMoments`, one thread), in this process;
 * 5. `arrowaudit test --json` on a 10,000,000 × 20 continuous Parquet file generated here by
 *    DuckDB (a seeded-shape linear Gaussian chain, 4% missing in every fourth column; DuckDB's
 *    random() is not reproducible across threads, so the values differ between runs), read by
 *    the DuckDB engine into memory with the default method, and with `--method linear` on the
 *    rows-free path (the moments in DuckDB SQL, no rows loaded: cli/duckdbMomentsAudit.ts),
 *    each with wall time and peak RSS. BENCH_LARGE_ROWS changes its rows.
 * Data: bench/out/numeric-<rows>.csv from bench/run.ts (generated here when absent). Set
 * BENCH_ROWS to run smaller. Writes bench/out/duckdb-results.json.
 */
import { existsSync, mkdirSync, readFileSync, statSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import { generateMixedCohort } from "./generateMixedCsv.js";
import { ioFloor, measure } from "./measure.js";
import { duckdbSql } from "../test/helpers/duckdbSql.js";

const here = fileURLToPath(new URL(".", import.meta.url));
const out = join(here, "out");
const root = join(here, "..");
const cli = join(root, "dist", "cli", "main.js");
const rows = Number(process.env.BENCH_ROWS ?? 1_000_000);

const literal = (s: string) => `'${s.replace(/'/g, "''")}'`;

/** The first `n` data rows of a CSV file, written beside it (once). */
function sliceCsv(csv: string, n: number): string {
  const path = csv.replace(/\.csv$/u, `.first-${n}.csv`);
  if (existsSync(path)) return path;
  const text = readFileSync(csv, "utf8");
  let end = 0;
  for (let k = 0; k <= n; k++) end = text.indexOf("\n", end) + 1;
  writeFileSync(path, text.slice(0, end));
  return path;
}

/** Seconds to read a file with each engine, best of two, in this process (the build in dist/). */
async function readingAlone(path: string) {
  const { parallelReadTable } = (await import(pathToFileURL(join(root, "dist", "cli", "parallelReadTable.js")).href)) as typeof import("../cli/parallelReadTable.js");
  const { readDuckdbTable } = (await import(pathToFileURL(join(root, "dist", "cli", "readDuckdbTable.js")).href)) as typeof import("../cli/readDuckdbTable.js");
  const time = async (f: () => Promise<unknown>) => {
    let best = Infinity;
    for (let k = 0; k < 2; k++) {
      const t0 = performance.now();
      await f();
      best = Math.min(best, (performance.now() - t0) / 1000);
    }
    return +best.toFixed(2);
  };
  const memory_s = await time(() => parallelReadTable(path, { file: path }));
  const duckdb_s = await time(() => readDuckdbTable({ path, name: path, format: "csv" }, { file: path }));
  return { file: path.slice(root.length + 1), megabytes: +(statSync(path).size / 2 ** 20).toFixed(1), memory_s, duckdb_s, ratio: +(duckdb_s / memory_s).toFixed(2) };
}

/** `arrowaudit test --json` on a data file with extra options: wall time, peak RSS and claims. */
async function endToEnd(graph: string, data: string, types: string, extra: string[]) {
  const run = await measure("node", [cli, "test", graph, data, "--json", "--types", types, ...extra], { cwd: root });
  if (run.code !== 0) throw new Error(`arrowaudit test failed (${run.code}): ${run.stderr}`);
  const result = JSON.parse(run.stdout) as { claims: { p: number }[] };
  return { data: data.slice(root.length + 1), options: extra.join(" "), claims: result.claims.length, end_to_end_s: +run.seconds.toFixed(2), peak_rss_mb: Math.round(run.peakRssMB), result };
}

/** Seconds for the per-pattern moments of every column: SQL aggregates vs streamed chunks and our accumulators. */
export async function momentsTwoWays(parquetPath: string) {
  const { patternMomentsSql } = (await import(pathToFileURL(join(root, "dist", "src", "data", "patternMomentsSql.js")).href)) as typeof import("../src/data/patternMomentsSql.js");
  const { buildPatternMoments } = (await import(pathToFileURL(join(root, "dist", "src", "data", "buildPatternMoments.js")).href)) as typeof import("../src/data/buildPatternMoments.js");
  const { readDuckdbTable } = (await import(pathToFileURL(join(root, "dist", "cli", "readDuckdbTable.js")).href)) as typeof import("../cli/readDuckdbTable.js");
  const { DuckDBInstance } = await import("@duckdb/node-api");
  const instance = await DuckDBInstance.create(":memory:");
  const connection = await instance.connect();
  const names = (await connection.runAndReadAll(`DESCRIBE SELECT * FROM read_parquet(${literal(parquetPath)})`)).getRows().map((r) => String(r[0]));
  let t0 = performance.now();
  const rows = (await connection.runAndReadAll(patternMomentsSql(`read_parquet(${literal(parquetPath)})`, names.map((name) => ({ name }))))).getRows();
  const sql_s = +((performance.now() - t0) / 1000).toFixed(2);
  connection.closeSync();
  instance.closeSync();
  t0 = performance.now();
  const table = await readDuckdbTable({ path: parquetPath, name: parquetPath, format: "parquet" }, { file: parquetPath });
  const read_s = +((performance.now() - t0) / 1000).toFixed(2);
  const moments = buildPatternMoments(table, { variables: names });
  const streamed_s = +((performance.now() - t0) / 1000).toFixed(2);
  return { columns: names.length, patterns_sql: rows.length, patterns_ours: moments.patterns, sql_aggregates_s: sql_s, streamed_read_s: read_s, streamed_read_and_moments_s: streamed_s };
}

/** The 10,000,000 × 20 Parquet case (item 5 of the module comment). */
export async function largeParquet(rowsLarge = Number(process.env.BENCH_LARGE_ROWS ?? 10_000_000)) {
  const path = join(out, `chain-${rowsLarge}x20.parquet`);
  const graph = join(out, `chain-20.graph.txt`);
  const names = Array.from({ length: 20 }, (_, k) => `v${String(k + 1).padStart(2, "0")}`);
  const lines = ["# benchmark graph (generated, invented data): each node caused by the one or two before it", names[0]!];
  for (let k = 1; k < 20; k++) lines.push(`${[names[k - 1], ...(k >= 3 ? [names[k - 3]] : [])].join(", ")} -> ${names[k]}`);
  writeFileSync(graph, lines.join("\n") + "\n");
  if (!existsSync(path)) {
    const normal = "sqrt(-2 * ln(1 - random())) * cos(2 * pi() * random())";
    const cols: string[] = [`${normal} AS v01`];
    for (let k = 1; k < 20; k++) cols.push(`${normal} AS e${k + 1}`);
    // the structural equations, applied one node at a time through nested selects would be deep; a running sum keeps it flat
    const defs = [`v01`];
    for (let k = 1; k < 20; k++) defs.push(`(0.5 * ${defs[k - 1]}${k >= 3 ? ` + 0.3 * ${defs[k - 3]}` : ""} + e${k + 1})`);
    const select = names.map((n, k) => (k % 4 === 3 ? `CASE WHEN random() < 0.04 THEN NULL ELSE ${k === 0 ? "v01" : defs[k]} END AS ${n}` : `${k === 0 ? "v01" : defs[k]} AS ${n}`));
    const t0 = performance.now();
    await duckdbSql(`COPY (SELECT ${select.join(", ")} FROM (SELECT ${cols.join(", ")} FROM range(${rowsLarge}))) TO ${literal(path)} (FORMAT parquet)`);
    console.error(`generated ${path} in ${((performance.now() - t0) / 1000).toFixed(1)} s`);
  }
  const run = await measure("node", [cli, "test", graph, path, "--json"], { cwd: root });
  if (run.code !== 0) throw new Error(`arrowaudit test failed (${run.code}): ${run.stderr}`);
  const result = JSON.parse(run.stdout) as { claims: unknown[]; data: { rows: number; patterns: number } };
  // --method linear: the rows-free path (moments in DuckDB SQL, no rows loaded)
  const linear = await measure("node", [cli, "test", graph, path, "--json", "--method", "linear"], { cwd: root });
  if (linear.code !== 0) throw new Error(`arrowaudit test --method linear failed (${linear.code}): ${linear.stderr}`);
  const rowsFree = (JSON.parse(linear.stdout) as { warnings: string[] }).warnings.some((w) => w.startsWith("the rows were not loaded"));
  return {
    data: path.slice(root.length + 1), rows: result.data.rows, columns: 20, patterns: result.data.patterns, claims: result.claims.length, megabytes: +(statSync(path).size / 2 ** 20).toFixed(1),
    end_to_end_s: +run.seconds.toFixed(2), peak_rss_mb: Math.round(run.peakRssMB), under_2_gib: run.peakRssMB < 2048,
    linear: { rows_free: rowsFree, end_to_end_s: +linear.seconds.toFixed(2), peak_rss_mb: Math.round(linear.peakRssMB), under_2_gib: linear.peakRssMB < 2048 },
  };
}

/** Largest relative difference between the p-values of two results, claim by claim. */
function largestRelativeDifference(a: { claims: { p: number }[] }, b: { claims: { p: number }[] }): number {
  let worst = 0;
  a.claims.forEach((c, i) => {
    const p = b.claims[i]!.p;
    const d = Math.abs(c.p - p) / Math.max(Math.abs(c.p), Math.abs(p), Number.MIN_VALUE);
    worst = Math.max(worst, d);
  });
  return worst;
}

export async function benchDuckdb(): Promise<Record<string, unknown>> {
  mkdirSync(out, { recursive: true });
  if (!existsSync(cli)) throw new Error("build first: npm run build (npm run bench does)");
  const csv = join(out, `numeric-${rows}.csv`);
  const graph = join(out, `numeric-${rows}.graph.txt`);
  if (!existsSync(csv) || !existsSync(graph) || !existsSync(graph + ".types")) {
    console.error(`generating ${csv} ...`);
    await generateMixedCohort(csv, graph, { rows, nodes: 50, categorical: 0, density: 2, missing: 0.04, seed: 7 });
  }
  const types = readFileSync(graph + ".types", "utf8").trim();
  await ioFloor(csv); // warm the page cache

  const reading = [];
  for (const n of [10_000, 100_000].filter((k) => k < rows)) reading.push(await readingAlone(sliceCsv(csv, n)));
  reading.push(await readingAlone(csv));
  console.log(JSON.stringify(reading, null, 2));

  const memory = await endToEnd(graph, csv, types, ["--engine", "memory"]);
  const duckdb = await endToEnd(graph, csv, types, ["--engine", "duckdb"]);
  const parquetPath = join(out, `numeric-${rows}.parquet`);
  if (!existsSync(parquetPath)) await duckdbSql(`COPY (SELECT * FROM read_csv(${literal(csv)})) TO ${literal(parquetPath)} (FORMAT parquet)`);
  const parquet = await endToEnd(graph, parquetPath, types, []);
  const moments = await momentsTwoWays(parquetPath);
  console.log(JSON.stringify(moments, null, 2));
  const large = await largeParquet();
  console.log(JSON.stringify(large, null, 2));
  const strip = ({ result: _result, ...rest }: Awaited<ReturnType<typeof endToEnd>>) => rest;
  const results = {
    reading,
    csv: {
      memory: strip(memory),
      duckdb: strip(duckdb),
      duckdb_over_memory: +(duckdb.end_to_end_s / memory.end_to_end_s).toFixed(2),
      largest_relative_p_difference: largestRelativeDifference(memory.result, duckdb.result),
    },
    moments,
    large_parquet: large,
    parquet: { ...strip(parquet), megabytes: +(statSync(parquetPath).size / 2 ** 20).toFixed(1), largest_relative_p_difference: largestRelativeDifference(memory.result, parquet.result) },
  };
  console.log(JSON.stringify(results.csv, null, 2));
  console.log(JSON.stringify(results.parquet, null, 2));
  writeFileSync(join(out, "duckdb-results.json"), JSON.stringify(results, null, 2));
  return results;
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) await benchDuckdb();
