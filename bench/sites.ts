/**
 * Pooling site summaries (`node --import tsx bench/sites.ts` after `npm run build`; also a step
 * of `npm run bench`). Not a timed test.
 * Data: one invented cohort of the mixed benchmark's shape (bench/generateMixedCsv.ts: 50 nodes,
 * 30 categorical, 4% missing in 10 columns, seed 37, so the graph of bench/run.ts's mixed case)
 * with BENCH_SITES × BENCH_SITE_ROWS rows (default 20 × 5,000), cut into consecutive blocks of
 * BENCH_SITE_ROWS rows, one per site; site s (0-based) has its continuous values shifted by
 * +0.1·s (site-specific means, which pooling with site as a stratum absorbs). Each site is
 * summarized by the built command (`summarize --site sNN`); summaries newer than the build
 * and the site's CSV are reused. Then:
 * 1. `arrowaudit test graph s01.json … s20.json --json` end to end, seven runs (every wall time,
 *    the median, the peak RSS), beside node's start-up (`--version`, which loads no command);
 * 2. the library part alone, in this process on the build in dist/, on the command's path: each
 *    file read (bytes to text), `parseSiteSummary` and added to a `SitePoolBuilder`, the graph,
 *    and `poolSitePool` (split at the audit's last progress call into the claims' pooled tests and
 *    the audit's finishing steps); JSON.parse alone timed apart; the first (cold) run and the best
 *    of three;
 * 3. `summarize` against `test` on one site of BENCH_LARGE_SITE_ROWS rows (default 100,000: the
 *    cohort's first rows, unshifted), each end to end with peak RSS.
 * Writes bench/out/sites-results.json and one JSON line per case.
 */
import { createHash } from "node:crypto";
import { existsSync, mkdirSync, readFileSync, statSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import { generateMixedCohort } from "./generateMixedCsv.js";
import { measure } from "./measure.js";

const here = fileURLToPath(new URL(".", import.meta.url));
const out = join(here, "out", "sites");
const root = join(here, "..");
const cli = join(root, "dist", "cli", "main.js");
const SPEC = { nodes: 50, categorical: 30, density: 2, missing: 0.04, seed: 37 };
/** Runs of the whole pooling command (the median and every time are reported: one run on 2 shared cores varies by 10%). */
const POOL_RUNS = 7;

const env = (name: string, fallback: number): number => {
  const v = Number(process.env[name] ?? fallback);
  if (!Number.isInteger(v) || v < 1) throw new Error(`${name} must be a whole number above 0`);
  return v;
};

const newer = (path: string, ...than: string[]) => existsSync(path) && than.every((t) => statSync(path).mtimeMs > statSync(t).mtimeMs);

/** The cohort's data lines (without header), its header and the continuous columns' indexes. */
async function cohort(rows: number): Promise<{ csv: string; graph: string; types: string; header: string; lines: string[]; continuous: number[] }> {
  const csv = join(out, `cohort-${rows}.csv`);
  const graph = join(out, `cohort-${rows}.graph.txt`);
  if (!existsSync(csv) || !existsSync(graph) || !existsSync(graph + ".types")) {
    console.error(`generating ${csv} ...`);
    await generateMixedCohort(csv, graph, { rows, ...SPEC });
  }
  const types = readFileSync(graph + ".types", "utf8").trim();
  const [header, ...lines] = readFileSync(csv, "utf8").trimEnd().split("\n");
  const typeOf = new Map(types.split(",").map((t) => t.split("=") as [string, string]));
  const continuous = header!.split(",").flatMap((name, j) => (typeOf.get(name) === "continuous" ? [j] : []));
  return { csv, graph, types, header: header!, lines, continuous };
}

/** Write a CSV of some rows (continuous cells shifted by `shift`) unless it is there. */
function writeRows(path: string, header: string, lines: string[], continuous: number[], shift: number): void {
  if (existsSync(path)) return;
  const shifted = shift === 0 ? lines : lines.map((line) => {
    const cells = line.split(",");
    for (const j of continuous) if (cells[j] !== "") cells[j] = (Number(cells[j]) + shift).toFixed(4);
    return cells.join(",");
  });
  writeFileSync(path, header + "\n" + shifted.join("\n") + "\n");
}

async function run(args: string[]) {
  const r = await measure("node", [cli, ...args], { cwd: root });
  if (r.code !== 0) throw new Error(`arrowaudit ${args[0]} failed (${r.code}): ${r.stderr}`);
  return r;
}

const seconds = (t0: bigint) => Number(process.hrtime.bigint() - t0) / 1e9;
const round = (s: number, digits = 3) => +s.toFixed(digits);

/** The library part of pooling in this process (the build in dist/), phase by phase, on the command's path: each file read, parsed and checked, and added to the site pool before the next. */
export async function libraryPart(graphPath: string, files: string[]) {
  const lib = (await import(pathToFileURL(join(root, "dist", "src", "index.js")).href)) as typeof import("../src/index.js");
  const once = () => {
    const t: Record<string, number> = { read_s: 0, parse_and_check_s: 0, pool_add_s: 0 };
    const builder = new lib.SitePoolBuilder();
    for (const f of files) {
      let t0 = process.hrtime.bigint();
      const text = readFileSync(f, "latin1"); // the summaries here are ASCII, which the command takes as they are
      t.read_s! += seconds(t0);
      t0 = process.hrtime.bigint();
      const summary = lib.parseSiteSummary(text, f);
      t.parse_and_check_s! += seconds(t0);
      t0 = process.hrtime.bigint();
      builder.add({ file: f, summary });
      t.pool_add_s! += seconds(t0);
    }
    let t0 = process.hrtime.bigint();
    const bytes = readFileSync(graphPath);
    const graph = lib.readGraphSource(bytes, { file: graphPath }).graph;
    const sha = createHash("sha256").update(bytes).digest("hex");
    t.graph_s = seconds(t0);
    // the audit calls onProgress after each claim: up to the last call, checks, plan and the pooled
    // tests of the claims; after it, the audit's finishing steps (adjustment, detectable effects,
    // equivalence, global test, ranking) and the pooled warnings
    let lastClaim = 0n;
    t0 = process.hrtime.bigint();
    const result = lib.poolSitePool(graph, sha, graphPath, builder.pool, { onProgress: (done, total) => { if (done === total) lastClaim = process.hrtime.bigint(); } });
    const end = process.hrtime.bigint();
    t.pool_s = Number(end - t0) / 1e9;
    t.pool_claims_s = Number(lastClaim - t0) / 1e9;
    t.pool_finishing_s = Number(end - lastClaim) / 1e9;
    t.total_s = t.read_s! + t.parse_and_check_s! + t.pool_add_s! + t.graph_s! + t.pool_s!;
    t0 = process.hrtime.bigint();
    for (const f of files) JSON.parse(readFileSync(f, "latin1"));
    t.json_parse_alone_with_read_s = seconds(t0);
    return { t, claims: result.claims.length };
  };
  const cold = once();
  const warm = [once(), once(), once()].sort((a, b) => a.t.total_s! - b.t.total_s!)[0]!;
  const fix = (t: Record<string, number>) => Object.fromEntries(Object.entries(t).map(([k, v]) => [k, round(v)]));
  return { cold: fix(cold.t), best_of_3: fix(warm.t), claims: cold.claims };
}

/** Run the benchmark; returns the figures it prints. */
export async function benchSites(): Promise<Record<string, unknown>> {
  if (!existsSync(cli)) throw new Error("build first: npm run build (npm run bench does)");
  mkdirSync(out, { recursive: true });
  const siteCount = env("BENCH_SITES", 20);
  const siteRows = env("BENCH_SITE_ROWS", 5_000);
  const largeRows = env("BENCH_LARGE_SITE_ROWS", 100_000);
  const data = await cohort(Math.max(siteCount * siteRows, largeRows));
  const built = join(root, "dist", "src", "audit", "siteSummary.js");

  // the sites' summaries
  const files: string[] = [];
  const summarizeSeconds: number[] = [];
  for (let s = 0; s < siteCount; s++) {
    const name = `s${String(s + 1).padStart(2, "0")}`;
    const csv = join(out, `site-${siteRows}-${name}.csv`);
    writeRows(csv, data.header, data.lines.slice(s * siteRows, (s + 1) * siteRows), data.continuous, 0.1 * s);
    const json = join(out, `site-${siteRows}-${name}.json`);
    if (!newer(json, built, csv, data.graph)) {
      const r = await run(["summarize", data.graph, csv, "--out", json, "--site", name, "--types", data.types, "--quiet"]);
      summarizeSeconds.push(r.seconds);
    }
    files.push(json);
  }
  const bytes = files.map((f) => statSync(f).size);
  const first = JSON.parse(readFileSync(files[0]!, "utf8")) as { claims: { kind: string }[] };
  const kinds: Record<string, number> = {};
  for (const c of first.claims) kinds[c.kind] = (kinds[c.kind] ?? 0) + 1;

  // 1. the whole command
  const startup = await run(["--version"]);
  const runs = [];
  for (let k = 0; k < POOL_RUNS; k++) runs.push(await run(["test", data.graph, ...files, "--json"]));
  const times = runs.map((r) => r.seconds).sort((a, b) => a - b);
  const pooled = runs[0]!;
  const result = JSON.parse(pooled.stdout) as { claims: unknown[]; untestable: unknown[] };
  const whole = {
    case: `pooling ${siteCount} site summaries (test … --json)`,
    sites: siteCount,
    rows_per_site: siteRows,
    claims: first.claims.length,
    summary_kinds: kinds,
    summary_mb_each: round(bytes.reduce((a, b) => a + b, 0) / siteCount / 2 ** 20, 2),
    summaries_made_now: summarizeSeconds.length,
    summarize_s_per_site: summarizeSeconds.length ? round(summarizeSeconds.reduce((a, b) => a + b, 0) / summarizeSeconds.length, 2) : null,
    pooled_claims: result.claims.length,
    pooled_untestable: result.untestable.length,
    node_startup_version_s: round(startup.seconds, 2),
    end_to_end_runs_s: times.map((x) => round(x, 2)),
    end_to_end_median_s: round(times[Math.floor(times.length / 2)]!, 2),
    peak_rss_mb: Math.round(Math.max(...runs.map((r) => r.peakRssMB))),
  };
  console.log(JSON.stringify(whole));

  // 2. the library part alone
  const library = { case: `pooling ${siteCount} site summaries, library part in-process (read, parse and check, pool)`, ...(await libraryPart(data.graph, files)) };
  console.log(JSON.stringify(library));

  // 3. summarize against test on one large site
  const bigCsv = join(out, `site-large-${largeRows}.csv`);
  writeRows(bigCsv, data.header, data.lines.slice(0, largeRows), data.continuous, 0);
  const bigJson = join(out, `site-large-${largeRows}.json`);
  const summarize = await run(["summarize", data.graph, bigCsv, "--out", bigJson, "--site", "large", "--types", data.types, "--quiet"]);
  const test = await run(["test", data.graph, bigCsv, "--json", "--types", data.types]);
  const large = {
    case: `summarize against test, one site of ${largeRows} rows`,
    rows: largeRows,
    summarize_s: round(summarize.seconds, 2),
    summarize_peak_rss_mb: Math.round(summarize.peakRssMB),
    test_s: round(test.seconds, 2),
    test_peak_rss_mb: Math.round(test.peakRssMB),
    summarize_over_test: round(summarize.seconds / test.seconds, 2),
    summary_mb: round(statSync(bigJson).size / 2 ** 20, 2),
  };
  console.log(JSON.stringify(large));
  const results = { pooling: whole, library, large_site: large };
  writeFileSync(join(out, "..", "sites-results.json"), JSON.stringify(results, null, 2));
  return results;
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) await benchSites();
