/**
 * Audits pooled across sites (`summarize`, then `test <graph> site-a.json site-b.json …`): the
 * pooled result of `--method linear` and `chisq` summaries equals our own audit of the stacked rows
 * with a site column added to every conditioning set, and one linear and one categorical claim
 * equal numpy/scipy computed directly on the stacked rows; under `--method auto` claims with a
 * continuous variable get the flexible test from residual sums, and one site pooled alone equals
 * that site's own `test`; summaries of another graph or other settings are refused; the --min-cell
 * rule; determinism. Data and reference values: `scripts/site_pooling_reference.py` (live when
 * python3 with numpy, scipy and pandas is available, else its committed output in
 * test/fixtures/sites).
 */
import { spawnSync } from "node:child_process";
import { copyFileSync, mkdtempSync, readdirSync, readFileSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { beforeAll, describe, expect, it } from "vitest";
import { runCli } from "../helpers/runCli.js";
import type { AuditResult, TestedClaim } from "../../src/audit/types.js";
import type { ResidualsClaimSummary, SiteSummary, TablesClaimSummary } from "../../src/audit/siteSummary.js";
import { expectClaimNumbersClose, relDiff } from "../helpers/claimNumbers.js";

const FIXTURES = join(__dirname, "..", "fixtures", "sites");
const SCRIPT = join(__dirname, "..", "..", "scripts", "site_pooling_reference.py");

let dir = "";
let source = "";

interface Reference {
  linear: { x: string; y: string; n: number; r: number; df: number; t: number; p: number };
  categorical: { x: string; y: string; n: number; g2: number; df: number; p: number };
}
let ref: Reference;

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), "arrowaudit-sites-"));
  const live = spawnSync("python3", ["-c", "import numpy, scipy, pandas"], { encoding: "utf8" }).status === 0 && process.env.ARROWAUDIT_SITES !== "fixtures";
  if (live) {
    const run = spawnSync("python3", [SCRIPT, dir], { encoding: "utf8", timeout: 120_000 });
    if (run.status !== 0) throw new Error(`scripts/site_pooling_reference.py failed: ${run.stderr}`);
    source = `live (${run.stdout.trim()})`;
  } else {
    for (const f of readdirSync(FIXTURES)) if (f.endsWith(".csv") || f === "reference.json") copyFileSync(join(FIXTURES, f), join(dir, f));
    source = "committed fixtures of scripts/site_pooling_reference.py";
  }
  for (const f of ["lin-graph.txt", "lin-graph-site.txt", "cat-graph.txt", "cat-graph-site.txt"]) copyFileSync(join(FIXTURES, f), join(dir, f));
  ref = JSON.parse(readFileSync(join(dir, "reference.json"), "utf8")) as Reference;
});

async function cli(args: string[]): Promise<{ code: number; stdout: string; stderr: string }> {
  return runCli(args, { cwd: dir });
}

async function ok(args: string[]): Promise<string> {
  const r = await cli(args);
  if (r.code !== 0) throw new Error(`arrowaudit ${args.join(" ")}: exit ${r.code}: ${r.stderr}`);
  return r.stdout;
}

async function summarize(graph: string, data: string, out: string, ...more: string[]): Promise<SiteSummary> {
  await ok(["summarize", graph, data, "--out", out, "--quiet", ...more]);
  return JSON.parse(readFileSync(join(dir, out), "utf8")) as SiteSummary;
}

const auditJson = async (args: string[]): Promise<AuditResult> => JSON.parse(await ok(["test", ...args, "--json", "--quiet"])) as AuditResult;
const pair = (c: { x: string; y: string }) => [c.x, c.y].sort().join(" ⫫ ");

/** The pooled claim and the stacked claim (site in its set) agree: test, n, df, and to 1e-9 relative the statistic, p, log p, effect and interval. */
function expectSameClaim(pooled: TestedClaim, stacked: TestedClaim): void {
  expect(stacked.given).toContain("site");
  expect([...stacked.given].filter((g) => g !== "site").sort()).toEqual([...pooled.given].sort());
  expect(pooled.test).toBe(stacked.test);
  expect(pooled.n).toBe(stacked.n);
  expect(pooled.df).toBe(stacked.df);
  expectClaimNumbersClose(pooled, stacked, 1e-9, `${pair(pooled)} (pooled vs stacked)`);
}

describe("pooled linear claims", () => {
  it("test <graph> A.json B.json C.json of --method linear summaries equals test --method linear on the stacked rows with site in every set (1e-9)", async () => {
    for (const s of ["A", "B", "C"]) await summarize("lin-graph.txt", `lin-${s}.csv`, `linl-${s}.json`, "--site", s, "--method", "linear");
    const pooled = await auditJson(["lin-graph.txt", "linl-A.json", "linl-B.json", "linl-C.json"]);
    const stacked = await auditJson(["lin-graph-site.txt", "lin-stacked.csv", "--method", "linear", "--types", "site=nominal"]);
    const byPair = new Map(stacked.claims.map((c) => [pair(c), c]));
    const linear = pooled.claims.filter((c) => c.test === "pearson-partial");
    expect(linear.map(pair).sort()).toEqual(["a ⫫ c", "a ⫫ d", "b ⫫ d"]);
    for (const c of linear) expectSameClaim(c, byPair.get(pair(c))!);
    expect(pooled.untestable).toEqual([]);
    // the claims with nominal g as a side: --method linear falls back to the automatic choice there, as on rows (gcm)
    expect(pooled.claims.filter((c) => c.test === "gcm").map(pair).sort()).toEqual(["a ⫫ g", "c ⫫ g"]);
    expect(pooled.data.source).toEqual({
      kind: "sites",
      n: 1650,
      sites: [
        { site: "A", file: "linl-A.json", n: 400 },
        { site: "B", file: "linl-B.json", n: 700 },
        { site: "C", file: "linl-C.json", n: 550 },
      ],
    }); // sizes set in scripts/site_pooling_reference.py
  });

  it("under --method auto one site pooled alone equals test on that site's rows for every claim, nominal g as a side included (gcm: statistic, p, effect, interval, 1e-9)", async () => {
    for (const s of ["A", "B", "C"]) await summarize("lin-graph.txt", `lin-${s}.csv`, `lin-${s}.json`, "--site", s);
    for (const s of ["A", "C"]) {
      const alone = await auditJson(["lin-graph.txt", `lin-${s}.json`]);
      const own = await auditJson(["lin-graph.txt", `lin-${s}.csv`]);
      const byPair = new Map(own.claims.map((c) => [pair(c), c]));
      expect(alone.claims.map(pair).sort()).toEqual(["a ⫫ c", "a ⫫ d", "a ⫫ g", "b ⫫ d", "c ⫫ g"]);
      for (const c of alone.claims) {
        const o = byPair.get(pair(c))!;
        expect([c.test, o.test]).toEqual(["gcm", "gcm"]);
        expect([c.n, c.df]).toEqual([o.n, o.df]);
        expectClaimNumbersClose(c, o, 1e-9, `site ${s} ${pair(c)} (pooled vs own)`, ["statistic", "p", "effect", "ci low", "ci high"]);
      }
      expect(alone.claims.filter((c) => c.details?.f !== undefined).map(pair).sort()).toEqual(["a ⫫ g", "c ⫫ g"]); // g's two residual products
    }
    const pooled = await auditJson(["lin-graph.txt", "lin-A.json", "lin-B.json", "lin-C.json"]);
    expect(pooled.claims.every((c) => c.test === "gcm" && c.details?.sites === 3)).toBe(true);
    expect(pooled.untestable).toEqual([]);
    expect(pooled.claims[0]!.details?.site_adjustment).toContain("site-specific");
    expect(pooled.warnings).toContain("5 claims with a continuous variable got the flexible test (gcm) pooled from the sites' residual sums, with the adjustment for the set fitted at each site on its own rows (the set interacted with site)");
  });

  it("b ⫫ d | a, g, c pooled from --method linear summaries equals numpy's residual correlation given S and site indicators and scipy's t (1e-9)", async () => {
    for (const s of ["A", "B", "C"]) await summarize("lin-graph.txt", `lin-${s}.csv`, `linl-${s}.json`, "--site", s, "--method", "linear");
    const pooled = await auditJson(["lin-graph.txt", "linl-A.json", "linl-B.json", "linl-C.json"]);
    const c = pooled.claims.find((k) => pair(k) === "b ⫫ d")!;
    expect(c.n).toBe(ref.linear.n); // numpy: complete cases of the stacked rows
    expect(c.df).toBe(ref.linear.df); // numpy: n − 2 − (columns of S and site)
    expect(relDiff(c.effect, ref.linear.r), source).toBeLessThan(1e-9); // numpy.linalg.lstsq residuals, numpy.corrcoef
    expect(relDiff(c.statistic, ref.linear.t), source).toBeLessThan(1e-9); // t = r·√(df/(1 − r²))
    expect(relDiff(c.p, ref.linear.p), source).toBeLessThan(1e-9); // scipy.stats.t.sf, two-sided
    expect(c.details?.sites).toBe(3);
  });

  it("test prints the sites and their rows, and says claims with a continuous variable get the flexible test with a site-specific adjustment", async () => {
    for (const s of ["A", "B"]) await summarize("lin-graph.txt", `lin-${s}.csv`, `lin-${s}.json`, "--site", s);
    const out = await ok(["test", "lin-graph.txt", "lin-A.json", "lin-B.json"]);
    expect(out).toContain("pooled from 2 site summaries (A: 400 rows, B: 700 rows; 1,100 rows in all)");
    expect(out.replace(/\s+/g, " ")).toContain("5 claims with a continuous variable got the flexible test (gcm) pooled from the sites' residual sums, with the adjustment for the set fitted at each site on its own rows");
    expect(out.replace(/\s+/g, " ")).toContain("type inferred from the values at the sites; declare it with summarize --types at every site if wrong");
  });
});

describe("pooled reports", () => {
  it("report <graph> A.json B.json --out r.md names the sites with their rows and the pooling rule", async () => {
    for (const s of ["A", "B"]) await summarize("lin-graph.txt", `lin-${s}.csv`, `lin-${s}.json`, "--site", s);
    await ok(["report", "lin-graph.txt", "lin-A.json", "lin-B.json", "--out", "pooled.md", "--quiet"]);
    const md = readFileSync(join(dir, "pooled.md"), "utf8");
    expect(md).toContain("2 site summaries pooled (A: 400 rows, B: 700 rows)");
    expect(md).toContain("pooled with site as a stratum");
  });
});

describe("pooled regression claims (--method regression summaries)", () => {
  it("claims with a continuous side, nominal g as the other side included, equal test --method regression on the stacked rows with site in every set (Gaussian LR, 1e-9)", async () => {
    for (const s of ["A", "B", "C"]) await summarize("lin-graph.txt", `lin-${s}.csv`, `linr-${s}.json`, "--site", s, "--method", "regression");
    const pooled = await auditJson(["lin-graph.txt", "linr-A.json", "linr-B.json", "linr-C.json"]);
    const stacked = await auditJson(["lin-graph-site.txt", "lin-stacked.csv", "--method", "regression", "--types", "site=nominal"]);
    const byPair = new Map(stacked.claims.map((c) => [pair(c), c]));
    expect(pooled.claims.map(pair).sort()).toEqual(["a ⫫ c", "a ⫫ d", "a ⫫ g", "b ⫫ d", "c ⫫ g"]);
    for (const c of pooled.claims) {
      expect(c.test).toBe("regression-lr");
      expectSameClaim(c, byPair.get(pair(c))!);
    }
    expect(pooled.untestable).toEqual([]);
  });

  it("binary pairs are pooled by the efficient score test of their logistic model: one site alone is near its own LR, three sites near the stacked additive LR (documented difference), and the record says which statistic", async () => {
    for (const s of ["A", "B", "C"]) await summarize("cat-graph.txt", `cat-${s}.csv`, `catr-${s}.json`, "--site", s, "--method", "regression");
    const summary = JSON.parse(readFileSync(join(dir, "catr-A.json"), "utf8")) as { claims: { kind: string }[] };
    expect(summary.claims.map((c) => c.kind)).toEqual(["score", "score"]); // u ⫫ w | v, z and u ⫫ z: logistic models
    const alone = await auditJson(["cat-graph.txt", "catr-A.json"]);
    const own = await auditJson(["cat-graph.txt", "cat-A.csv", "--method", "regression"]);
    const ownBy = new Map(own.claims.map((c) => [pair(c), c]));
    for (const c of alone.claims) {
      const o = ownBy.get(pair(c))!;
      expect([c.test, c.n, c.df]).toEqual([o.test, o.n, o.df]);
      expect(String(c.details?.statistic_kind)).toContain("efficient score");
      // the score and the LR statistics of one model are asymptotically equal (Rao 1948); on these
      // few hundred rows they differ by a few percent (measured: see the closing note of the pooled score work)
      expect(Math.abs(c.statistic - o.statistic)).toBeLessThan(0.15 * Math.max(1, o.statistic));
    }
    const pooled = await auditJson(["cat-graph.txt", "catr-A.json", "catr-B.json", "catr-C.json"]);
    const stacked = await auditJson(["cat-graph-site.txt", "cat-stacked.csv", "--method", "regression", "--types", "site=nominal"]);
    const byPair = new Map(stacked.claims.map((c) => [pair(c), c]));
    for (const c of pooled.claims) {
      const s = byPair.get(pair(c))!;
      expect([c.test, c.n, c.df]).toEqual([s.test, s.n, s.df]);
      expect(c.details?.sites).toBe(3);
      // site-specific nuisance parameters (score) against one shared set effect with site indicators (LR): the same hypothesis, nearly the same statistic
      expect(Math.abs(c.statistic - s.statistic)).toBeLessThan(0.15 * Math.max(1, s.statistic));
    }
    expect(pooled.untestable).toEqual([]);
  });
});

describe("pooled categorical claims", () => {
  it("test <graph> A.json B.json C.json equals test --method chisq on the stacked rows with site in every set (1e-9)", async () => {
    for (const s of ["A", "B", "C"]) await summarize("cat-graph.txt", `cat-${s}.csv`, `cat-${s}.json`, "--site", s, "--method", "chisq");
    const pooled = await auditJson(["cat-graph.txt", "cat-A.json", "cat-B.json", "cat-C.json"]);
    const stacked = await auditJson(["cat-graph-site.txt", "cat-stacked.csv", "--method", "chisq", "--types", "site=nominal"]);
    const byPair = new Map(stacked.claims.map((c) => [pair(c), c]));
    expect(pooled.claims.map(pair).sort()).toEqual(["u ⫫ w", "u ⫫ z"]);
    for (const c of pooled.claims) {
      expect(c.p_method).toBe("asymptotic");
      expectSameClaim(c, byPair.get(pair(c))!);
      const s = byPair.get(pair(c))!;
      expect(c.details?.strata_used).toBe(s.details?.strata_used);
    }
  });

  it("with --method linear, claims with an ordinal member of S (its level indicators) equal test --method linear on the stacked rows (1e-9)", async () => {
    for (const s of ["A", "B", "C"]) await summarize("cat-graph.txt", `cat-${s}.csv`, `catlin-${s}.json`, "--site", s, "--method", "linear");
    const pooled = await auditJson(["cat-graph.txt", "catlin-A.json", "catlin-B.json", "catlin-C.json"]);
    const stacked = await auditJson(["cat-graph-site.txt", "cat-stacked.csv", "--method", "linear", "--types", "site=nominal"]);
    const byPair = new Map(stacked.claims.map((c) => [pair(c), c]));
    expect(pooled.claims.map(pair).sort()).toEqual(["u ⫫ w", "u ⫫ z"]);
    for (const c of pooled.claims) expectSameClaim(c, byPair.get(pair(c))!);
    const uw = pooled.claims.find((c) => pair(c) === "u ⫫ w")!;
    expect(uw.test).toBe("pearson-partial");
    expect(uw.details?.c).toBe(2 + 1 + 2); // v's levels 2 and 3, z, and sites B and C
  });

  it("u ⫫ w | v, z pooled equals scipy's G² summed over the (v, z, site) strata (1e-9)", async () => {
    for (const s of ["A", "B", "C"]) await summarize("cat-graph.txt", `cat-${s}.csv`, `cat-${s}.json`, "--site", s);
    const pooled = await auditJson(["cat-graph.txt", "cat-A.json", "cat-B.json", "cat-C.json"]);
    const c = pooled.claims.find((k) => pair(k) === "u ⫫ w")!;
    expect(c.test).toBe("stratified-chisq");
    expect(c.n).toBe(ref.categorical.n);
    expect(c.df).toBe(ref.categorical.df); // scipy.stats.chi2_contingency dof, summed
    expect(relDiff(c.statistic, ref.categorical.g2), source).toBeLessThan(1e-9); // scipy.stats.chi2_contingency(lambda_="log-likelihood", correction=False), summed
    expect(relDiff(c.p, ref.categorical.p), source).toBeLessThan(1e-9); // scipy.stats.chi2.sf
  });
});

describe("refusals", () => {
  it("a summary made with another graph is refused with exit 2, naming the file", async () => {
    await summarize("lin-graph.txt", "lin-A.csv", "lin-A.json", "--site", "A");
    writeFileSync(join(dir, "lin-graph-2.txt"), readFileSync(join(dir, "lin-graph.txt"), "utf8") + "# edited\n");
    await summarize("lin-graph-2.txt", "lin-B.csv", "lin-B2.json", "--site", "B");
    const r = await cli(["test", "lin-graph.txt", "lin-A.json", "lin-B2.json"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain("lin-B2.json: was made with a different graph");
    expect(r.stderr).toContain("same graph file");
  });

  it("summaries made with other settings are refused with exit 2, naming the setting", async () => {
    await summarize("lin-graph.txt", "lin-A.csv", "lin-A.json", "--site", "A");
    await summarize("lin-graph.txt", "lin-B.csv", "lin-B10.json", "--site", "B", "--min-cell", "10");
    const r = await cli(["test", "lin-graph.txt", "lin-A.json", "lin-B10.json"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain("lin-B10.json: was made with different settings from lin-A.json (min_cell: 10 against 5)");
    await summarize("lin-graph.txt", "lin-B.csv", "lin-Bsets.json", "--site", "B", "--sets", "minimal");
    const s = await cli(["test", "lin-graph.txt", "lin-A.json", "lin-Bsets.json"]);
    expect(s.code).toBe(2);
    expect(s.stderr).toContain('sets: "minimal" against "union-parents"');
  });

  it("two summaries of one site name, a data file among summaries, and options that read rows are refused", async () => {
    await summarize("lin-graph.txt", "lin-A.csv", "lin-A.json", "--site", "A");
    await summarize("lin-graph.txt", "lin-B.csv", "lin-Bsame.json", "--site", "A");
    const dup = await cli(["test", "lin-graph.txt", "lin-A.json", "lin-Bsame.json"]);
    expect(dup.code).toBe(2);
    expect(dup.stderr).toContain('has the site name "A", as lin-A.json has');
    const mixed = await cli(["test", "lin-graph.txt", "lin-A.json", "lin-B.csv"]);
    expect(mixed.code).toBe(2);
    expect(mixed.stderr).toContain("lin-B.csv: is a data table among site summaries");
    const rows = await cli(["test", "lin-graph.txt", "lin-A.json", "--missing", "-9"]);
    expect(rows.code).toBe(1);
    expect(rows.stderr).toContain("--missing reads rows");
    const sug = await cli(["suggest", "lin-graph.txt", "lin-A.json"]);
    expect(sug.code).toBe(1);
    expect(sug.stderr).toContain("lin-A.json is a site summary; suggest re-audits candidate graphs");
    const low = await cli(["summarize", "lin-graph.txt", "lin-A.csv", "--out", "x.json", "--min-cell", "2"]);
    expect(low.code).toBe(1);
    expect(low.stderr).toContain("--min-cell must be a whole number from 3");
  });

  it("a claim whose design columns differ between sites (an edited file) is untestable with the reason, not pooled", async () => {
    await summarize("lin-graph.txt", "lin-A.csv", "linl-A.json", "--site", "A", "--method", "linear");
    const b = await summarize("lin-graph.txt", "lin-B.csv", "linl-B.json", "--site", "B", "--method", "linear");
    const k = b.claims.findIndex((c) => c.kind === "moments");
    const edited = structuredClone(b);
    (edited.claims[k] as { columns: string[] }).columns[0] = "renamed";
    writeFileSync(join(dir, "lin-Bedit.json"), JSON.stringify(edited));
    const pooled = await auditJson(["lin-graph.txt", "linl-A.json", "lin-Bedit.json"]);
    const u = pooled.untestable.find((c) => pair(c) === pair(b.claims[k]!))!;
    expect(u.reason).toContain("the sites' summaries of this claim have different design columns");
    const other = structuredClone(b);
    const c = other.claims[k]!;
    other.claims[k] = { x: c.x, y: c.y, given: c.given, kind: "tables", n: 10, strata: [], dropped: { strata: 0, rows: 0 } };
    writeFileSync(join(dir, "lin-Bkind.json"), JSON.stringify(other));
    const mixed = await auditJson(["lin-graph.txt", "linl-A.json", "lin-Bkind.json"]);
    expect(mixed.untestable.find((t) => pair(t) === pair(c))!.reason).toContain("are of different kinds (moments and tables)");
    // residual sums whose side columns differ (a level of g absent at one site) are not stacked
    await summarize("lin-graph.txt", "lin-A.csv", "lin-A.json", "--site", "A");
    const r = await summarize("lin-graph.txt", "lin-B.csv", "lin-B.json", "--site", "B");
    const j = r.claims.findIndex((c) => pair(c) === "c ⫫ g");
    const sides = structuredClone(r);
    const rc = sides.claims[j] as ResidualsClaimSummary;
    expect(rc.sides).toEqual([["g=north", "g=south"], ["c"]]); // g's levels but the first ("east")
    rc.sides = [["g=east", "g=south"], ["c"]];
    writeFileSync(join(dir, "lin-Bsides.json"), JSON.stringify(sides));
    const odd = await auditJson(["lin-graph.txt", "lin-A.json", "lin-Bsides.json"]);
    expect(odd.untestable.find((t) => pair(t) === "c ⫫ g")!.reason).toContain("the sites' residuals of this claim are of different side columns");
  });

  it("a summary that is not one, or of another version, is an input error naming the file", async () => {
    writeFileSync(join(dir, "bad.json"), '{"format": "something-else"}\n');
    const r = await cli(["test", "lin-graph.txt", "bad.json"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain("bad.json: is not a site summary");
    const s = await summarize("lin-graph.txt", "lin-A.csv", "lin-A.json", "--site", "A");
    writeFileSync(join(dir, "v3.json"), JSON.stringify({ ...s, version: 3 }));
    const v = await cli(["test", "lin-graph.txt", "v3.json"]);
    expect(v.code).toBe(2);
    expect(v.stderr).toContain("v3.json: is a site summary of version 3, and this arrowaudit reads version 2");
    // a summary of the previous format among current ones: refused by name, with what changed
    writeFileSync(join(dir, "v1.json"), JSON.stringify({ ...s, version: 1 }));
    const old = await cli(["test", "lin-graph.txt", "lin-A.json", "v1.json"]);
    expect(old.code).toBe(2);
    expect(old.stderr).toContain("v1.json: is a site summary of version 1, and this arrowaudit reads version 2 (version 1 held the linear test's moments for claims with a continuous variable, which are now pooled by the flexible test from residual sums); summarize every site again with this version");
    writeFileSync(join(dir, "cut.json"), JSON.stringify(s).slice(0, 200));
    const cut = await cli(["test", "lin-graph.txt", "cut.json"]);
    expect(cut.code).toBe(2);
    expect(cut.stderr).toContain("cut.json: is not valid JSON");
  });
});

describe("disclosure control (--min-cell)", () => {
  it("a row alone in its missing-data pattern is left out of every statistic: the summary equals that of the file without it", async () => {
    const text = readFileSync(join(dir, "lin-A.csv"), "utf8");
    // one row with a and d missing: the only row of its pattern
    writeFileSync(join(dir, "lone.csv"), text.trimEnd() + "\n,1.25,2.5,,north\n");
    const withRow = await summarize("lin-graph.txt", "lone.csv", "lone.json", "--site", "A");
    const without = await summarize("lin-graph.txt", "lin-A.csv", "lin-A.json", "--site", "A");
    expect(withRow.suppressed).toEqual({ rows: 1, patterns: 1 });
    expect(withRow.claims).toEqual(without.claims); // every number identical: nothing of the row is in the file
    expect(withRow.n).toBe(without.n + 1);
  });

  it("a claim whose complete cases are a pattern of fewer than --min-cell rows is untestable at the site and carries no number", async () => {
    // 4 rows complete on every variable (a pattern of 4 < 5 rows, left out), 7 rows missing c
    const lines = ["a,b,c,d,g"];
    for (let i = 0; i < 4; i++) lines.push(`${i},${i * 0.5 + 1},${(i * 7) % 5},${i % 3},${["north", "south", "east"][i % 3]}`);
    for (let i = 0; i < 7; i++) lines.push(`${i * 0.3},${i},,${i * 1.1},${["north", "south", "east"][i % 3]}`);
    writeFileSync(join(dir, "small.csv"), lines.join("\n") + "\n");
    const cont = ["--types", "a=continuous,b=continuous,c=continuous,d=continuous"];
    const s = await summarize("lin-graph.txt", "small.csv", "small.json", "--site", "S", ...cont);
    expect(s.suppressed).toEqual({ rows: 4, patterns: 1 });
    const ac = s.claims.find((c) => pair(c) === "a ⫫ c")!;
    expect(ac.kind).toBe("untestable");
    expect(ac).not.toHaveProperty("means");
    expect((ac as { reason: string }).reason).toContain("0 complete cases at this site, fewer than --min-cell 5");
    // no claim's numbers come from 1 … 4 rows; the claims without c use the 7 rows
    for (const c of s.claims) if (c.kind !== "untestable") expect(c.n).toBeGreaterThanOrEqual(5);
    expect(s.claims.filter((c) => c.kind === "moments" || c.kind === "residuals").map((c) => (c as { n: number }).n)).toEqual([]);
    // every number in the file is the same as for the file without the 4 rows
    writeFileSync(join(dir, "small7.csv"), [lines[0], ...lines.slice(5)].join("\n") + "\n");
    const s7 = await summarize("lin-graph.txt", "small7.csv", "small7.json", "--site", "S", ...cont);
    expect(s.claims).toEqual(s7.claims);
    // pooled with a site that has it: the claim uses that site alone and says so
    await summarize("lin-graph.txt", "lin-B.csv", "lin-B.json", "--site", "B");
    const pooled = await auditJson(["lin-graph.txt", "small.json", "lin-B.json"]);
    const claim = pooled.claims.find((c) => pair(c) === "a ⫫ c")!;
    expect(claim.details?.sites).toBe(1);
    expect(claim.warnings?.join(" ")).toContain('1 of 2 sites left out of this claim (site "S": 0 complete cases');
    expect(pooled.warnings.join(" ")).toContain("rows in missing-data patterns of fewer than --min-cell 5 rows were left out at 1 site (S: 4)");
  });

  it("a variable typed differently at two sites is refused with exit 2 and the --types to give", async () => {
    // c takes few integer values at this site, so its type is inferred ordinal there
    const lines = ["a,b,c,d,g", ...Array.from({ length: 12 }, (_, i) => `${i * 0.3},${i},${i % 3},${i * 1.1},${["north", "south", "east"][i % 3]}`)];
    writeFileSync(join(dir, "ordc.csv"), lines.join("\n") + "\n");
    await summarize("lin-graph.txt", "ordc.csv", "ordc.json", "--site", "O");
    await summarize("lin-graph.txt", "lin-B.csv", "lin-B.json", "--site", "B");
    const r = await cli(["test", "lin-graph.txt", "ordc.json", "lin-B.json"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('lin-B.json: has "c" as continuous, while ordc.json has it as ordinal; declare its type at every site (summarize --types "c=ordinal")');
  });

  it("a linear claim with a level of a categorical variable held by fewer than --min-cell rows is untestable at the site (its indicator's moments would tell that row's values)", async () => {
    const lines = readFileSync(join(dir, "lin-A.csv"), "utf8").trimEnd().split("\n");
    lines[1] = lines[1]!.replace(/,[a-z]+$/, ",west"); // one row of a level no other row has
    writeFileSync(join(dir, "west.csv"), lines.join("\n") + "\n");
    const s = await summarize("lin-graph.txt", "west.csv", "west.json", "--site", "W");
    const bd = s.claims.find((c) => pair(c) === "b ⫫ d")!;
    expect(bd.kind).toBe("untestable");
    expect((bd as { reason: string }).reason).toContain('the level "west" of "g" has 1 row among its complete cases at this site, fewer than --min-cell 5');
    expect(s.claims.find((c) => pair(c) === "a ⫫ c")!.kind).toBe("residuals"); // no g in it
    expect(readFileSync(join(dir, "west.json"), "utf8")).not.toContain("g=west");
  });

  it("strata with a cell of 1 … k − 1 rows are dropped and counted; no written cell is below k", async () => {
    const text = readFileSync(join(dir, "cat-A.csv"), "utf8").trimEnd();
    // a new stratum of v (= 9) with 2 rows, one in each of two cells
    writeFileSync(join(dir, "cat-small.csv"), text + "\n1,9,1,0\n0,9,0,0\n");
    const s = await summarize("cat-graph.txt", "cat-small.csv", "cat-small.json", "--site", "A");
    const uw = s.claims.find((c) => pair(c) === "u ⫫ w") as TablesClaimSummary;
    expect(uw.kind).toBe("tables");
    expect(uw.dropped.strata).toBeGreaterThanOrEqual(1);
    expect(uw.dropped.rows).toBeGreaterThanOrEqual(2);
    expect(uw.strata.some((t) => t.given.includes("9"))).toBe(false);
    for (const c of s.claims) {
      if (c.kind !== "tables") continue;
      for (const t of c.strata) for (const row of t.counts) for (const v of row) expect(v === 0 || v >= 5).toBe(true);
    }
    expect(uw.n + uw.dropped.rows).toBe(1202);
  });
});

describe("determinism", () => {
  it("summarize writes the same bytes twice, and pooling gives the same JSON twice and the same numbers in any site order", async () => {
    await summarize("lin-graph.txt", "lin-A.csv", "d1.json", "--site", "A");
    await summarize("lin-graph.txt", "lin-A.csv", "d2.json", "--site", "A");
    expect(readFileSync(join(dir, "d1.json"), "utf8")).toBe(readFileSync(join(dir, "d2.json"), "utf8"));
    for (const s of ["B", "C"]) await summarize("lin-graph.txt", `lin-${s}.csv`, `lin-${s}.json`, "--site", s);
    const a = await ok(["test", "lin-graph.txt", "d1.json", "lin-B.json", "lin-C.json", "--json"]);
    const b = await ok(["test", "lin-graph.txt", "d1.json", "lin-B.json", "lin-C.json", "--json"]);
    expect(a).toBe(b);
    const swapped = JSON.parse(await ok(["test", "lin-graph.txt", "lin-C.json", "d1.json", "lin-B.json", "--json"])) as AuditResult;
    const first = JSON.parse(a) as AuditResult;
    for (const c of first.claims) {
      const d = swapped.claims.find((k) => pair(k) === pair(c))!;
      expect(relDiff(c.p, d.p)).toBeLessThan(1e-12); // the same sums in another order
    }
  });
});
