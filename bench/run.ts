/**
 * `npm run bench`: the benchmarks behind the README's figures. Not a timed test.
 * 1. claim derivation on random DAGs (200 and 1,000 nodes);
 * 2. `arrowaudit test` end to end on 1,000,000 rows × 50 continuous columns with a few % missing,
 *    against the I/O floor (reading the file in 4 MiB chunks and counting newlines);
 *    and the same with `--method linear` (the fast linear test, no flexible adjustment);
 * 3. `arrowaudit test` end to end on 1,000,000 rows × 50 mixed columns (30 categorical);
 * 4. claims whose conditioning set makes thousands of sparse strata (permutation p-values;
 *    bench/sparse.ts, also `npm run bench:sparse` on its own, where BENCH_CLI picks another build);
 * 5. the DuckDB engine against the memory engine on the numeric cohort, as CSV and as Parquet
 *    (bench/duckdb.ts, also runnable on its own);
 * 6. pooling 20 site summaries of the mixed 50-variable cohort (5,000 rows a site), end to end and
 *    the library part alone, and summarize against test on one site of 100,000 rows
 *    (bench/sites.ts, also runnable on its own; BENCH_SITES, BENCH_SITE_ROWS and
 *    BENCH_LARGE_SITE_ROWS run it smaller).
 * Data are generated (invented) into bench/out/ on first use. Set BENCH_ROWS to run smaller.
 */
import { existsSync, mkdirSync, readFileSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { benchClaims } from "./claims.js";
import { generateMixedCohort } from "./generateMixedCsv.js";
import { benchDuckdb } from "./duckdb.js";
import { benchSites } from "./sites.js";
import { benchSparse } from "./sparse.js";
import { ioFloor, measure } from "./measure.js";

const here = fileURLToPath(new URL(".", import.meta.url));
const out = join(here, "out");
const root = join(here, "..");
const cli = join(root, "dist", "cli", "main.js");
const rows = Number(process.env.BENCH_ROWS ?? 1_000_000);

async function endToEnd(name: string, categorical: number, extra: string[] = []) {
  const csv = join(out, `${name}-${rows}.csv`);
  const graph = join(out, `${name}-${rows}.graph.txt`);
  if (!existsSync(csv) || !existsSync(graph) || !existsSync(graph + ".types")) {
    console.error(`generating ${csv} ...`);
    await generateMixedCohort(csv, graph, { rows, nodes: 50, categorical, density: 2, missing: 0.04, seed: 7 + categorical });
  }
  const types = readFileSync(graph + ".types", "utf8").trim();
  await ioFloor(csv); // warm the page cache
  const floor = await ioFloor(csv);
  const run = await measure("node", [cli, "test", graph, csv, "--json", "--types", types, ...extra], { cwd: root });
  if (run.code !== 0) throw new Error(`arrowaudit test failed (${run.code}): ${run.stderr}`);
  const result = JSON.parse(run.stdout) as { claims: { test: string }[]; untestable: unknown[]; data: { patterns: number } };
  const tests: Record<string, number> = {};
  for (const c of result.claims) tests[c.test] = (tests[c.test] ?? 0) + 1;
  return {
    case: extra.length ? `${name} ${extra.join(" ")}` : name,
    rows,
    columns: 50,
    categorical,
    claims: result.claims.length,
    untestable: result.untestable.length,
    patterns: result.data.patterns,
    tests,
    io_floor_s: +floor.seconds.toFixed(2),
    io_floor_memchr_s: +floor.memchrSeconds.toFixed(2),
    end_to_end_s: +run.seconds.toFixed(2),
    ratio_to_floor: +(run.seconds / floor.seconds).toFixed(1),
    peak_rss_mb: Math.round(run.peakRssMB),
  };
}

mkdirSync(out, { recursive: true });
if (!existsSync(cli)) throw new Error("build first: npm run build (npm run bench does)");
const results: Record<string, unknown> = {};
results.claims = await benchClaims();
console.log(JSON.stringify(results.claims, null, 2));
results.numeric = await endToEnd("numeric", 0);
console.log(JSON.stringify(results.numeric, null, 2));
results.numericLinear = await endToEnd("numeric", 0, ["--method", "linear"]);
console.log(JSON.stringify(results.numericLinear, null, 2));
results.mixed = await endToEnd("mixed", 30);
console.log(JSON.stringify(results.mixed, null, 2));
results.sparse = await benchSparse(rows, cli);
console.log(JSON.stringify(results.sparse, null, 2));
results.duckdb = await benchDuckdb();
results.sites = await benchSites();
writeFileSync(join(out, "results.json"), JSON.stringify(results, null, 2));
console.log(`results written to ${join(out, "results.json")}`);
