/**
 * Flexible claims pooled across sites from residual sums (`summarizeSite` under --method auto,
 * `poolSiteSummaries`): one site alone gives the site's own `gcm` result; three sites give the
 * GCM of the stacked residual products as numpy computes it (`scripts/pooled_gcm_reference.py`,
 * live when python3 with numpy and scipy is available, else its committed output in
 * test/fixtures/pooled-gcm); calibration under true claims with site-specific non-linear
 * relations and power when the claim is false; a nominal side with a binary other side; and
 * disclosure: no number of a residual summary comes from fewer than --min-cell rows.
 */
import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { createTable } from "../../src/data/createTable.js";
import type { CellValue } from "../../src/data/createTable.js";
import type { Table } from "../../src/data/Table.js";
import { parseGraph } from "../../src/graph/parseGraph.js";
import { deriveClaims } from "../../src/graph/deriveClaims.js";
import { runAudit } from "../../src/audit/runAudit.js";
import { flexibleClaimContext, flexibleClaimSummary, flexibleMomentsOptions, siteClaimResiduals, summarizeSite, summarizeSiteWith, type ResidualsClaimSummary, type SiteSummary, type SiteSummarySettings } from "../../src/audit/siteSummary.js";
import { siteClaimHelper } from "../../cli/claimHelper.js";
import { buildPatternMoments } from "../../src/data/buildPatternMoments.js";
import { poolSiteSummaries } from "../../src/audit/poolSiteSummaries.js";
import type { Graph } from "../../src/graph/Graph.js";
import { createRng } from "../../src/stats/rng.js";
import { createHash } from "node:crypto";
import { runCli } from "../helpers/runCli.js";
import { expectClaimNumbersClose, relDiff, TEST_NUMBERS } from "../helpers/claimNumbers.js";

const SHA = "cd".repeat(32);
const SETTINGS: SiteSummarySettings = { sets: "union-parents", method: "auto", listwise: false, min_cell: 5, unmeasured: [] };
const FIXTURES = join(__dirname, "..", "fixtures", "pooled-gcm");
const SCRIPT = join(__dirname, "..", "..", "scripts", "pooled_gcm_reference.py");

function graphOf(text: string): Graph {
  return parseGraph(text, { file: "g.txt" }).graph;
}

function measuredOf(graph: Graph): string[] {
  return graph.nodes.filter((n) => graph.isMeasured(n));
}

function summarize(graph: Graph, table: Table, name: string, settings = SETTINGS): SiteSummary {
  const { claims } = deriveClaims(graph, { sets: settings.sets, cap: 100 });
  return summarizeSite(table, { graphSha256: SHA, site: name, settings, measured: measuredOf(graph), claims });
}

function pool(graph: Graph, summaries: SiteSummary[]) {
  return poolSiteSummaries(graph, SHA, "g.txt", summaries.map((summary) => ({ file: `${summary.site}.json`, summary })));
}

const pair = (c: { x: string; y: string }) => [c.x, c.y].sort().join(" ⫫ ");
const logistic = (t: number) => 1 / (1 + Math.exp(-t));

/** Seeded draws on the project's stream: uniforms and normals (Box–Muller). */
function draws(seed: number, label: string) {
  const rng = createRng(seed, label);
  const u = () => rng.nextFloat();
  const z = () => Math.sqrt(-2 * Math.log(1 - u())) * Math.cos(2 * Math.PI * u());
  return { u, z };
}

/**
 * An invented site k of n rows: skewed s with a site-specific shift; x, y, b and g non-linear in
 * s in site-specific ways; x ⫫ y, b, g | s and so on (every claim of MIXED true).
 */
function mixedSite(k: number, n: number, seed: number): Record<string, CellValue[]> {
  const { u, z } = draws(seed, `mixed site ${k}`);
  const s = Array.from({ length: n }, () => Math.exp(0.5 * z()) + 0.5 * k);
  const x = s.map((v) => Math.sin(2 * v) + 0.3 * k * v + 0.5 * z());
  const y = s.map((v) => (k + 1) * 0.4 * (v - 1.5) ** 2 + z() * (0.5 + 0.2 * v));
  const b = s.map((v) => (u() < logistic(1.5 * Math.sin(2 * v) + 0.3 * k) ? 1 : 0));
  const g = s.map((v) => {
    const w = [1, Math.exp(v - 1.5), Math.exp(1 - v)];
    const t = u() * (w[0]! + w[1]! + w[2]!);
    return t < w[0]! ? "north" : t < w[0]! + w[1]! ? "south" : "east";
  });
  return { s, x, y, b, g };
}

const MIXED = "s -> x\ns -> y\ns -> b\ns -> g\n";

describe("one site pooled alone", () => {
  it("poolSiteSummaries of one site's residual sums equals runAudit's gcm at that site: statistic, p, effect, interval (1e-9)", () => {
    const g = graphOf(MIXED);
    const table = createTable(mixedSite(0, 400, 11), { file: "A.csv" });
    const own = runAudit(g, table);
    const pooled = pool(g, [summarize(g, table, "A")]);
    const ownBy = new Map(own.claims.map((c) => [pair(c), c]));
    expect(pooled.claims.map(pair).sort()).toEqual(own.claims.map(pair).sort());
    expect(pooled.claims.length).toBe(6); // the pairs of x, y, b, g given s
    for (const c of pooled.claims) {
      const o = ownBy.get(pair(c))!;
      expect(o.test).toBe("gcm");
      expect(c.test).toBe("gcm");
      expect(c.n).toBe(o.n);
      expect(c.df).toBe(o.df);
      expectClaimNumbersClose(c, o, 1e-9, `${pair(c)} (pooled vs own)`, [...TEST_NUMBERS, "linear check p"]);
      const flex = c.details?.flexibility as { parameters: number; sites: { level: number }[] };
      expect(flex.sites[0]!.level).toBe((o.details?.flexibility as { level: number }).level);
      expect(c.warnings?.join(" ")).toContain("adjustment for the set fitted at each site on its own rows");
    }
    // the nominal side's claims have several products (F reference); the others one
    expect(pooled.claims.filter((c) => c.details?.f !== undefined).map(pair).sort()).toEqual(["b ⫫ g", "g ⫫ x", "g ⫫ y"]);
  });
});

describe("one site above the row-path size", () => {
  it("a site of 25,000 rows is summarized on gcm's moment path, as its own test runs: pooled alone it equals runAudit's gcm there (1e-9), variance sums scaled from the 20,000 sampled rows", () => {
    // pins: summaries of large sites were fitted on all rows (the row path) and cost 20× the site's own test
    const g = graphOf(MIXED);
    const table = createTable(mixedSite(2, 25_000, 19), { file: "A.csv" });
    const own = runAudit(g, table);
    const summary = summarize(g, table, "A");
    const pooled = pool(g, [summary]);
    const ownBy = new Map(own.claims.map((c) => [pair(c), c]));
    expect(pooled.claims.length).toBe(own.claims.length);
    for (const c of pooled.claims) {
      const o = ownBy.get(pair(c))!;
      expect(o.test).toBe("gcm");
      expect(o.details?.path).toBe("moments");
      expect(o.details?.variance_sample).toBe(true);
      expect(c.n).toBe(o.n);
      expectClaimNumbersClose(c, o, 1e-9, `${pair(c)} (pooled vs own)`, ["statistic", "p", "effect", "ci low", "ci high"]);
      expect((c.details?.flexibility as { sites: { level: number }[] }).sites[0]!.level).toBe((o.details?.flexibility as { level: number }).level);
    }
  }, 60_000);
});

describe("summarize with a helper thread", () => {
  it("summarize on a site of the row path shares its flexible claims with a helper thread and writes the summary the library makes alone, byte for byte", async () => {
    // 12 flexible claims (at least the 8 that start a helper); values written in full so the CSV reads back exactly
    const graphText = "s -> x\ns -> y\ns -> b\nx -> u\ny -> w\nb -> v\n";
    const g = graphOf(graphText);
    const { u, z } = draws(77, "helper site");
    const n = 900;
    const s = Array.from({ length: n }, () => z());
    const cols: Record<string, number[]> = { s, x: s.map((v) => Math.sin(v) + z()), y: s.map((v) => v * v + z()), b: s.map((v) => (u() < logistic(v) ? 1 : 0)) };
    cols.u = cols.x!.map((v) => v + z());
    cols.w = cols.y!.map((v) => 0.5 * v + z());
    cols.v = cols.b!.map((v) => v + z());
    const names = Object.keys(cols);
    const dir = mkdtempSync(join(tmpdir(), "arrowaudit-helper-"));
    writeFileSync(join(dir, "g.txt"), graphText);
    writeFileSync(join(dir, "A.csv"), [names.join(","), ...Array.from({ length: n }, (_, r) => names.map((k) => String(cols[k]![r])).join(","))].join("\n") + "\n");
    const r = await runCli(["summarize", "g.txt", "A.csv", "--out", "A.json", "--site", "A", "--quiet"], { cwd: dir });
    expect(r.code, r.stderr).toBe(0);
    const written = readFileSync(join(dir, "A.json"), "utf8");
    const { claims } = deriveClaims(g, { sets: "union-parents", cap: 100 });
    const flexible = (JSON.parse(written) as SiteSummary).claims.filter((c) => c.kind === "residuals").length;
    expect(flexible).toBeGreaterThanOrEqual(8);
    const table = createTable(cols, { file: "A.csv" });
    const alone = summarizeSite(table, { graphSha256: createHash("sha256").update(graphText).digest("hex"), site: "A", settings: SETTINGS, measured: measuredOf(g), claims });
    expect(written).toBe(JSON.stringify(alone, null, 1) + "\n");
    // the worker alone (nothing competes for the counter): every claim's summary equals the one made on this thread
    const flex = claims.filter((c) => alone.claims.find((k) => k.x === c.x && k.y === c.y && JSON.stringify(k.given) === JSON.stringify(c.given))?.kind === "residuals");
    const fromWorker = await siteClaimHelper({ table, claims: flex, k: 5, test: "gcm", counter: new Int32Array(new SharedArrayBuffer(8)) });
    expect(fromWorker.size).toBe(flex.length);
    flex.forEach((c, j) => expect(fromWorker.get(j)).toEqual(flexibleClaimSummary(flexibleClaimContext(table), c, 5, "gcm")));
  }, 60_000);
});

describe("summarize with a helper thread on the moment path", () => {
  it("a site of 25,000 rows with 70 flexible claims: summarizeSiteWith and the helper thread (which builds the pattern moments again) give summarizeSite's summary", async () => {
    // a chain of 13 continuous nodes and a binary one: 13·14/2 − 13 = 78 claims, all flexible
    const names = Array.from({ length: 14 }, (_, i) => `v${i}`);
    const graphText = names.slice(1).map((v, i) => `${names[i]} -> ${v}`).join("\n") + "\n";
    const g = graphOf(graphText);
    const { u, z } = draws(91, "moment-path helper site");
    const n = 25_000;
    const cols: Record<string, number[]> = {};
    let prev = Array.from({ length: n }, () => z());
    cols.v0 = prev;
    for (let i = 1; i < 14; i++) {
      const next = i === 13 ? prev.map((v) => (u() < logistic(v) ? 1 : 0)) : prev.map((v) => Math.tanh(v) + 0.8 * z());
      cols[`v${i}`] = next;
      prev = next;
    }
    const table = createTable(cols, { file: "big.csv" });
    const { claims } = deriveClaims(g, { sets: "union-parents", cap: 100 });
    const options = { graphSha256: SHA, site: "big", settings: SETTINGS, measured: measuredOf(g), claims };
    const alone = summarizeSite(table, options);
    expect(alone.claims.filter((c) => c.kind === "residuals").length).toBeGreaterThanOrEqual(64);
    const shared = await summarizeSiteWith(table, options, async (t, o) => buildPatternMoments(t, o), siteClaimHelper);
    expect(shared).toEqual(alone);
    // the worker alone (nothing competes for the counter), building the moments for itself: every claim's summary equals the library's
    const moments = flexibleMomentsOptions(table, measuredOf(g), claims, SETTINGS);
    const at = alone.claims.flatMap((c, i) => (c.kind === "residuals" ? [i] : []));
    const fromWorker = await siteClaimHelper({ table, claims: at.map((i) => claims[i]!), k: 5, test: "gcm", counter: new Int32Array(new SharedArrayBuffer(8)), moments });
    expect(fromWorker.size).toBe(at.length);
    at.forEach((i, j) => expect(fromWorker.get(j)).toEqual(alone.claims[i]));
  }, 120_000);
});

describe("rank summaries", () => {
  it("under method rank one site pooled alone equals runAudit --method rank at that site (gcm-rank on the site's mid-ranks, 1e-9), and three sites pool every claim", () => {
    const g = graphOf(MIXED);
    const table = createTable(mixedSite(1, 380, 51), { file: "A.csv" });
    const rank: SiteSummarySettings = { ...SETTINGS, method: "rank" };
    const own = runAudit(g, table, { settings: { method: "rank" } });
    const alone = pool(g, [summarize(g, table, "A", rank)]);
    const ownBy = new Map(own.claims.map((c) => [pair(c), c]));
    expect(alone.claims.length).toBe(own.claims.length);
    for (const c of alone.claims) {
      const o = ownBy.get(pair(c))!;
      expect([c.test, o.test]).toEqual(["gcm-rank", "gcm-rank"]);
      expect([c.n, c.df]).toEqual([o.n, o.df]);
      expectClaimNumbersClose(c, o, 1e-9, `${pair(c)} (pooled vs own)`, ["statistic", "p", "effect", "ci low", "ci high"]);
    }
    const three = pool(g, [0, 1, 2].map((k) => summarize(g, createTable(mixedSite(k, 300, 52), { file: `r${k}.csv` }), `r${k}`, rank)));
    expect(three.claims.map((c) => c.test)).toEqual(new Array(6).fill("gcm-rank"));
    expect(three.untestable).toEqual([]);
    expect(three.warnings.join(" ")).toContain("6 claims got the rank test (gcm-rank) pooled from the sites' residual sums");
  });
});

describe("three sites against numpy", () => {
  it("the pooled statistic and p equal the GCM of the stacked residual products computed by numpy and scipy (1e-6: gcm's own Σ R accuracy)", () => {
    const g = graphOf(MIXED);
    const sizes = [300, 450, 380];
    const tables = sizes.map((n, k) => createTable(mixedSite(k, n, 21), { file: `s${k}.csv` }));
    const pooled = pool(g, tables.map((t, k) => summarize(g, t, `s${k}`)));
    const wanted = ["x ⫫ y", "b ⫫ x", "g ⫫ x"];
    const { claims } = deriveClaims(g, { sets: "union-parents", cap: 100 });
    const input: { claims: Record<string, { sites: unknown[] }> } = { claims: {} };
    for (const w of wanted) {
      const claim = claims.find((c) => pair(c) === w)!;
      input.claims[w] = {
        sites: tables.map((t) => {
          const r = siteClaimResiduals(t, claim, { measured: measuredOf(g), settings: SETTINGS });
          if (!r.ok) throw new Error(r.reason);
          const qq = r.qx * (r.residuals.length - r.qx);
          // gcm's variance is the rows' R² for two scored sides (numpy takes R.std), and model-based for a binary or nominal side (passed per row)
          const modelBased = [claim.x, claim.y].some((v) => t.column(v)!.type !== "continuous");
          return {
            qx: r.qx,
            params: r.params,
            residuals: r.residuals.map((e) => Array.from(e)),
            ...(modelBased ? { variance: Array.from({ length: r.n }, (_, t) => Array.from(r.variance.subarray(t * qq * qq, (t + 1) * qq * qq))) } : {}),
          };
        }),
      };
    }
    const dir = mkdtempSync(join(tmpdir(), "arrowaudit-pooled-gcm-"));
    writeFileSync(join(dir, "input.json"), JSON.stringify(input));
    const live = spawnSync("python3", ["-c", "import numpy, scipy"], { encoding: "utf8" }).status === 0 && process.env.ARROWAUDIT_POOLED_GCM !== "fixtures";
    let ref: Record<string, { n: number; df: number; statistic: number; p: number }>;
    if (live) {
      const args = process.env.ARROWAUDIT_POOLED_GCM === "update" ? [SCRIPT, join(dir, "input.json"), FIXTURES] : [SCRIPT, join(dir, "input.json"), "--print"];
      const run = spawnSync("python3", args, { encoding: "utf8", timeout: 120_000 });
      if (run.status !== 0) throw new Error(`scripts/pooled_gcm_reference.py failed: ${run.stderr}`);
      ref = process.env.ARROWAUDIT_POOLED_GCM === "update" ? JSON.parse(readFileSync(join(FIXTURES, "reference.json"), "utf8")) : JSON.parse(run.stdout);
    } else ref = JSON.parse(readFileSync(join(FIXTURES, "reference.json"), "utf8"));
    for (const w of wanted) {
      const c = pooled.claims.find((k) => pair(k) === w)!;
      expect(c.test).toBe("gcm");
      expect(c.details?.sites).toBe(3);
      expect(c.n).toBe(ref[w]!.n); // numpy: rows of the stacked residual products
      expect(c.df).toBe(ref[w]!.df); // N − 2 − P (one product) or the number of products
      // 1e-6, not 1e-9: gcm (and so each site's sums) takes Σ R and Σ e² from the nested adjustment's
      // residual covariances, which at the higher flexibility levels agree with the direct sums of the
      // rows' residual products that numpy adds to about 1e-8 relative (measured: 9e-9 for Σ e_x e_y at one
      // site here), and a statistic built on a small Σ R carries that error over a smaller mean (measured: 1.1e-7)
      expect(relDiff(c.statistic, ref[w]!.statistic), w).toBeLessThan(1e-6); // numpy: √N·mean(R)/sd(R) scaled, or the scaled Wald form (numpy.linalg.solve)
      expect(relDiff(c.p, ref[w]!.p), w).toBeLessThan(1e-6); // scipy.stats.t.sf two-sided, or scipy.stats.f.sf
    }
  });
});

/**
 * Three sites whose s differ in distribution and whose x and binary b depend on s non-linearly
 * in site-specific ways; with `effect` 0, x ⫫ b | s holds at every site.
 */
function calibrationSites(rep: number, effect: number): Table[] {
  return [0, 1, 2].map((k) => {
    const { u, z } = draws(1000 + rep, `calibration site ${k}`);
    const n = [200, 260, 230][k]!;
    const s = Array.from({ length: n }, () => (k === 0 ? 3 * u() : k === 1 ? Math.exp(0.6 * z()) : 2 + z()));
    const noise = s.map(() => z());
    const x = s.map((v, i) => (k === 0 ? Math.sin(2 * v) : k === 1 ? (v - 1) ** 2 : Math.exp(v / 2)) + noise[i]!);
    const b = s.map((v, i) => {
      const lin = k === 0 ? 2 * Math.cos(2 * v) : k === 1 ? 3 * (v - 1) : v > 2 ? 1.5 : -1.5;
      return u() < logistic(lin + effect * noise[i]!) ? 1 : 0;
    });
    return createTable({ s, x, b }, { file: `c${k}.csv` });
  });
}

function pooledP(g: Graph, tables: Table[]): number {
  const r = pool(g, tables.map((t, k) => summarize(g, t, `c${k}`)));
  const c = r.claims.find((k) => pair(k) === "b ⫫ x");
  if (!c) throw new Error(`b ⫫ x untestable: ${r.untestable.map((u) => u.reason).join("; ")}`);
  expect(c.test).toBe("gcm");
  return c.p;
}

describe("calibration of the pooled flexible test", () => {
  it("under x ⫫ b | s with site-specific non-linear relations the pooled rejection rate at 0.05 stays inside the 99% binomial band (300 replications)", () => {
    const g = graphOf("s -> x\ns -> b\n");
    let rejected = 0;
    const R = 300;
    for (let rep = 0; rep < R; rep++) if (pooledP(g, calibrationSites(rep, 0)) < 0.05) rejected++;
    // scipy.stats.binom.ppf(0.005, 300, 0.05) = 6 and binom.ppf(0.995, 300, 0.05) = 25
    expect(rejected).toBeGreaterThanOrEqual(6);
    expect(rejected).toBeLessThanOrEqual(25);
  }, 120_000);

  it("when x affects b the pooled test rejects most replications (power check, loose bound)", () => {
    const g = graphOf("s -> x\ns -> b\n");
    let rejected = 0;
    const R = 60;
    for (let rep = 0; rep < R; rep++) if (pooledP(g, calibrationSites(5000 + rep, 1)) < 0.05) rejected++;
    expect(rejected / R).toBeGreaterThan(0.7); // loose: a log-odds of 1 per SD of x's noise at 690 rows
  }, 60_000);
});

describe("claims pooled only since residual sums", () => {
  it("a nominal side with a binary other side and continuous s (once untestable when pooled) is pooled by the flexible test", () => {
    const g = graphOf(MIXED);
    const tables = [0, 1, 2].map((k) => createTable(mixedSite(k, 350, 31), { file: `s${k}.csv` }));
    const summaries = tables.map((t, k) => summarize(g, t, `s${k}`));
    for (const s of summaries) expect(s.claims.find((c) => pair(c) === "b ⫫ g")!.kind).toBe("residuals");
    const bg = summaries[0]!.claims.find((c) => pair(c) === "b ⫫ g") as ResidualsClaimSummary;
    expect(bg.sides).toEqual([["b"], ["g=north", "g=south"]]); // b's score, and g's levels but the first ("east", levels in sorted order)
    expect(bg.product_variance.length).toBe(2);
    const pooled = pool(g, summaries);
    const c = pooled.claims.find((k) => pair(k) === "b ⫫ g")!;
    expect(c.test).toBe("gcm");
    expect(c.n).toBe(1050);
    expect(c.df).toBe(2); // two residual products
    expect(Number.isFinite(c.p) && c.p > 0 && c.p <= 1).toBe(true);
    expect(c.ci[0]).toBeLessThanOrEqual(c.effect);
    expect(pooled.untestable).toEqual([]);
    expect(pooled.warnings.join(" ")).toContain("6 claims with a continuous variable got the flexible test (gcm) pooled from the sites' residual sums");
  });
});

describe("disclosure of residual sums", () => {
  it("a residual summary holds no number computed from fewer than --min-cell rows: rare levels and pairs make the claim untestable, and every written claim has n ≥ k and no level or pair of levels with 1 … k − 1 of its complete cases", () => {
    const g = graphOf("s -> x\ns -> y\nh -> x\nh -> y\nb -> y\n");
    const n = 120;
    const { z } = draws(77, "disclosure");
    const s = Array.from({ length: n }, () => z());
    const h = s.map((_, i) => (i < 3 ? "rare" : i % 2 ? "p" : "q")); // a level of 3 rows
    const b = s.map((_, i) => (i < 60 ? 0 : 1));
    const x = s.map((v) => v * v + z());
    const y = s.map((v) => Math.sin(v) + z());
    const t = { s, h, b, x, y: y.map((v, i) => (i === 5 ? null : v)) } as Record<string, CellValue[]>;
    const k = 5;
    const summary = summarize(g, createTable(t, { file: "d.csv" }), "D");
    const table = createTable(t, { file: "d.csv" });
    const xy = summary.claims.find((c) => pair(c) === "x ⫫ y")!;
    expect(xy.kind).toBe("untestable");
    expect((xy as { reason: string }).reason).toContain('the level "rare" of "h" has 3 rows among its complete cases at this site, fewer than --min-cell 5: its residual sums would tell those rows\' values');
    expect(xy).not.toHaveProperty("residual_cross_products");
    expect(summary.suppressed).toEqual({ rows: 1, patterns: 1 });
    let written = 0;
    for (const c of summary.claims) {
      if (c.kind !== "residuals") continue;
      written++;
      expect(c.n).toBeGreaterThanOrEqual(k);
      // recount here: each categorical variable's levels and each pair's combinations among the claim's complete cases
      const vars = [c.x, c.y, ...c.given];
      // the kept rows: row 5, alone in its missing-data pattern, is left out of every claim (rule 1)
      const rows = Array.from({ length: n }, (_, i) => i).filter((i) => i !== 5 && vars.every((v) => t[v]![i] !== null));
      expect(rows.length).toBe(c.n);
      const cats = vars.filter((v) => v === "h" || v === "b");
      for (const a of cats) for (const bb of cats) {
        const counts = new Map<string, number>();
        for (const i of rows) counts.set(`${t[a]![i]}|${t[bb]![i]}`, (counts.get(`${t[a]![i]}|${t[bb]![i]}`) ?? 0) + 1);
        for (const v of counts.values()) expect(v).toBeGreaterThanOrEqual(k);
      }
    }
    expect(written).toBeGreaterThan(0); // b ⫫ s-side claims without h are written
    expect(table.rows).toBe(n);
  });

  it("rows of a missing-data pattern of fewer than --min-cell rows leave a residual summary exactly as if they were absent", () => {
    const g = graphOf(MIXED);
    const data = mixedSite(0, 200, 41);
    const withRows = Object.fromEntries(Object.entries(data).map(([k, v]) => [k, [...v, ...(k === "y" ? [null, null] : k === "g" ? ["north", "south"] : [1.5, 0.5].map((w) => (k === "b" ? 1 : w)))]]));
    const a = summarize(g, createTable(withRows, { file: "A.csv" }), "A");
    const b = summarize(g, createTable(data, { file: "A.csv" }), "A");
    expect(a.suppressed).toEqual({ rows: 2, patterns: 1 });
    expect(a.claims.every((c) => c.kind === "residuals")).toBe(true);
    expect(a.claims).toEqual(b.claims); // every number identical, knots included (they come from the kept rows)
  });
});
