/**
 * `npm run bench:sparse`: claims whose conditioning set makes thousands of sparse strata, so that
 * the stratified chi-square test takes its permutation branch. Not a timed test.
 *
 * Data (invented, seeded, generated into bench/out/ on first use): `BENCH_ROWS` rows (default
 * 1,000,000) of six nominal text columns: s1, s2, s3 with 15 levels each, drawn with weights
 * 0.7^k (so most of the 3,375 combinations are rare), x with 4 levels and y, w with 3 levels,
 * each depending on the sum of the s levels' indices; w also depends on y. The graph has every
 * arrow among s1, s2, s3, from each of them to x, y and w, and y -> w, so the missing arrows are
 * x–y (x ⫫ y | s1, s2, s3) and x–w (x ⫫ w | s1, s2, s3, y, or another separating set), both true.
 *
 * Measured: `arrowaudit test --json` end to end (wall time and peak RSS from /proc), and a
 * baseline run on the same file with the complete graph (no claims: reading, typing and setup);
 * seconds per claim = (end to end − baseline) / claims. Per claim: the test, p, p_method, the
 * strata, the share of sparse cells and the Monte-Carlo draws used.
 *
 * `BENCH_CLI=/path/to/dist/cli/main.js` runs another build (for a before/after comparison); the
 * default is this checkout's dist/cli/main.js (`npm run bench:sparse` builds it first).
 * Writes bench/out/sparse-results.json.
 */
import { createWriteStream, existsSync, mkdirSync, writeFileSync } from "node:fs";
import { join, resolve } from "node:path";
import { fileURLToPath } from "node:url";
import { mulberry32 } from "../src/stats/mulberry32.js";
import { measure } from "./measure.js";

const here = fileURLToPath(new URL(".", import.meta.url));
const out = join(here, "out");
const root = join(here, "..");

/** Levels of s1, s2, s3, and their weights 0.7^k. */
const S_LEVELS = 15;
const S_WEIGHTS = Array.from({ length: S_LEVELS }, (_, k) => 0.7 ** k);

/** Writes the sparse cohort and its two graphs (with the x–y and x–w arrows missing, and complete). */
export async function generateSparseCohort(csvPath: string, graphPath: string, completePath: string, rows: number, seed = 12): Promise<void> {
  const rand = mulberry32(seed);
  const pick = (w: readonly number[]): number => {
    let u = rand() * w.reduce((a, b) => a + b, 0);
    for (let k = 0; k < w.length; k++) {
      u -= w[k]!;
      if (u < 0) return k;
    }
    return w.length - 1;
  };
  const file = createWriteStream(csvPath, { highWaterMark: 1 << 22 });
  const write = (s: string) => new Promise<void>((res) => (file.write(s) ? res() : file.once("drain", () => res())));
  await write("s1,s2,s3,x,y,w\n");
  let buf: string[] = [];
  for (let r = 0; r < rows; r++) {
    const a = pick(S_WEIGHTS);
    const b = pick(S_WEIGHTS);
    const c = pick(S_WEIGHTS);
    const t = (a + b + c) / (3 * (S_LEVELS - 1)); // 0..1
    const x = pick([1 + t, 1, 1 - 0.5 * t, 0.5 + t]);
    const y = pick([1, 1 + 2 * t, 1.5 - t]);
    const w = pick(y === 0 ? [2, 1, 1 + t] : [1, 2 - t, 1]);
    buf.push(`a${a},b${b},c${c},x${x},y${y},w${w}\n`);
    if (buf.length === 8192) {
      await write(buf.join(""));
      buf = [];
    }
  }
  await write(buf.join(""));
  await new Promise<void>((res) => file.end(() => res()));
  const s = ["s1 -> s2", "s1 -> s3", "s2 -> s3", "s1, s2, s3 -> x, y, w", "y -> w"];
  writeFileSync(graphPath, `# sparse-strata benchmark (invented): x–y and x–w are the missing arrows\n${s.join("\n")}\n`);
  writeFileSync(completePath, `# the same nodes with every arrow: no claims (baseline)\n${[...s, "x -> y", "x -> w"].join("\n")}\n`);
}

interface ClaimJson {
  x: string;
  y: string;
  given: string[];
  test: string;
  p: number;
  p_method?: string;
  B?: number;
  monte_carlo?: { draws: number; cap: number };
  details?: { strata_used?: number; strata_total?: number; sparse_share?: number; sparse_rule?: string[] };
}

/** Runs the benchmark against the CLI at `cli`; returns the figures (see the module comment). */
export async function benchSparse(rows: number, cli: string): Promise<Record<string, unknown>> {
  mkdirSync(out, { recursive: true });
  const csv = join(out, `sparse-${rows}.csv`);
  const graph = join(out, `sparse-${rows}.graph.txt`);
  const complete = join(out, `sparse-${rows}.complete.graph.txt`);
  if (!existsSync(csv) || !existsSync(graph) || !existsSync(complete)) {
    console.error(`generating ${csv} ...`);
    await generateSparseCohort(csv, graph, complete, rows);
  }
  if (!existsSync(cli)) throw new Error(`no CLI at ${cli}: build first (npm run build), or set BENCH_CLI to a built dist/cli/main.js`);
  const base = await measure("node", [cli, "test", complete, csv, "--json"], { cwd: root });
  if (base.code !== 0) throw new Error(`baseline arrowaudit test failed (${base.code}): ${base.stderr}`);
  const run = await measure("node", [cli, "test", graph, csv, "--json"], { cwd: root });
  if (run.code !== 0) throw new Error(`arrowaudit test failed (${run.code}): ${run.stderr}`);
  const result = JSON.parse(run.stdout) as { claims: ClaimJson[]; untestable: unknown[] };
  const claims = result.claims.map((c) => ({
    claim: `${c.x} ⫫ ${c.y} | ${c.given.length ? c.given.join(", ") : "∅"}`,
    test: c.test,
    p: c.p,
    p_method: c.p_method,
    draws: c.monte_carlo?.draws ?? c.B,
    cap: c.monte_carlo?.cap,
    strata_used: c.details?.strata_used,
    strata_total: c.details?.strata_total,
    sparse_share: c.details?.sparse_share,
    sparse_rule: c.details?.sparse_rule,
  }));
  const n = result.claims.length;
  return {
    case: "sparse strata: x (4 levels), y, w (3 levels) given three 15-level nominal variables",
    cli,
    rows,
    claims: n,
    untestable: result.untestable.length,
    end_to_end_s: +run.seconds.toFixed(2),
    baseline_s: +base.seconds.toFixed(2),
    seconds_per_claim: n > 0 ? +((run.seconds - base.seconds) / n).toFixed(2) : null,
    peak_rss_mb: Math.round(run.peakRssMB),
    baseline_peak_rss_mb: Math.round(base.peakRssMB),
    per_claim: claims,
  };
}

if (process.argv[1] !== undefined && resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  const rows = Number(process.env.BENCH_ROWS ?? 1_000_000);
  const cli = resolve(process.env.BENCH_CLI ?? join(root, "dist", "cli", "main.js"));
  const res = await benchSparse(rows, cli);
  console.log(JSON.stringify(res, null, 2));
  writeFileSync(join(out, "sparse-results.json"), JSON.stringify(res, null, 2));
  console.log(`results written to ${join(out, "sparse-results.json")}`);
}
