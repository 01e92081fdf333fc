/**
 * Summary-statistics input (`--correlations` / `--covariance` with `--n`, `--sd`): the audit of a
 * data file's complete-case matrix reproduces the rows' `--method linear --listwise` audit, and
 * every way a matrix can be wrong is an input error naming the file, line, field and the cell's
 * variables. Reference matrices: pandas `DataFrame.dropna().corr()` / `.cov()` written by
 * `scripts/summary_matrix_reference.py` (live when python3 with numpy and pandas is available,
 * else its committed output in test/fixtures/summary).
 */
import { spawnSync } from "node:child_process";
import { copyFileSync, mkdtempSync, readFileSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { Readable } from "node:stream";
import { beforeAll, describe, expect, it } from "vitest";
import { runCli } from "../helpers/runCli.js";
import type { AuditResult, TestedClaim } from "../../src/audit/types.js";
import { expectClaimNumbersClose, relDiff, TEST_NUMBERS } from "../helpers/claimNumbers.js";

const FIXTURES = join(__dirname, "..", "fixtures", "summary");
const SCRIPT = join(__dirname, "..", "..", "scripts", "summary_matrix_reference.py");

let dir = "";
let source = "";
let n = 0;

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), "arrowaudit-summary-"));
  const live = spawnSync("python3", ["-c", "import numpy, pandas"], { encoding: "utf8" }).status === 0 && process.env.ARROWAUDIT_SUMMARY !== "fixtures";
  if (live) {
    const run = spawnSync("python3", [SCRIPT, dir], { encoding: "utf8", timeout: 60_000 });
    if (run.status !== 0) throw new Error(`scripts/summary_matrix_reference.py failed: ${run.stderr}`);
    source = `live pandas (${run.stdout.trim()})`;
  } else {
    for (const f of ["data.csv", "corr.csv", "cov.csv", "corr-lower.csv", "sd.csv", "n.txt"]) copyFileSync(join(FIXTURES, f), join(dir, f));
    source = "committed fixtures of scripts/summary_matrix_reference.py (python3 with pandas unavailable)";
  }
  copyFileSync(join(FIXTURES, "graph.txt"), join(dir, "graph.txt"));
  n = Number(readFileSync(join(dir, "n.txt"), "utf8").trim());
});

async function auditJson(args: string[]): Promise<AuditResult> {
  const r = await runCli(["test", "graph.txt", ...args, "--json", "--quiet"], { cwd: dir });
  if (r.code !== 0) throw new Error(`exit ${r.code}: ${r.stderr}`);
  return JSON.parse(r.stdout) as AuditResult;
}

const key = (c: { x: string; y: string; given?: readonly string[] }) => `${c.x} ⫫ ${c.y} | ${(c.given ?? []).join(",")}`;

/** Every number of two tested claims agrees to `tol` relative: n, df, statistic, p, log p, effect, interval, detectable effect, equivalence interval. */
function expectSameClaim(a: TestedClaim, b: TestedClaim, tol: number): void {
  expect(b.test).toBe(a.test);
  expect(b.n).toBe(a.n);
  expect(b.df).toBe(a.df);
  expectClaimNumbersClose(a, b, tol, key(a), [...TEST_NUMBERS, "detectable"], true);
  expect(b.equivalence).toBe(a.equivalence);
}

const TYPES = ["--types", "grade=ordinal,smoker=binary"];

describe("summary input reproduces the rows' partial correlations", () => {
  it(`test --correlations (pandas complete-case matrix) equals test --method linear --listwise on the rows to 1e-9`, async () => {
    // --adjust none: the detectable effect is taken at alpha/k under Holm, and the matrix tests fewer claims (k) than the rows
    const rows = await auditJson(["data.csv", "--method", "linear", "--listwise", "--adjust", "none", ...TYPES]);
    const summary = await auditJson(["--correlations", "corr.csv", "--n", String(n), "--adjust", "none", ...TYPES]);
    expect(source).not.toBe("");
    // the data record says where the numbers came from
    expect(summary.data).toMatchObject({ file: "corr.csv", rows: n, rows_used: n, patterns: 1, source: { kind: "correlations", n } });
    expect(summary.settings.method).toBe("linear");
    const fromRows = new Map(rows.claims.map((c) => [key(c), c]));
    const fromSummary = new Map(summary.claims.map((c) => [key(c), c]));
    // claims with the ordinal grade in the conditioning set need its level indicators: untestable from a matrix
    const needLevels = rows.claims.filter((c) => c.given.includes("grade"));
    expect(needLevels.length).toBeGreaterThan(0);
    for (const c of needLevels) {
      expect(fromSummary.has(key(c))).toBe(false);
      const u = summary.untestable.find((v) => key(v) === key(c));
      expect(u?.reason).toMatch(/^untestable from summary statistics: the test needs the levels of "grade" \(declared ordinal\)/);
    }
    const both = rows.claims.filter((c) => !c.given.includes("grade"));
    expect(both.length).toBe(4); // of the 7 claims of graph.txt, 3 have grade in their set
    expect(both.some((c) => c.x === "grade" || c.y === "grade")).toBe(true); // an ordinal side enters as its score, as on rows
    expect(both.some((c) => c.given.includes("smoker"))).toBe(true); // a binary member: its score is its indicator
    expect(summary.claims.length).toBe(both.length);
    for (const c of both) {
      expect(c.n).toBe(n);
      expectSameClaim(c, fromSummary.get(key(c))!, 1e-9);
    }
  });

  it("test --covariance and test --correlations --sd give the same claims as --correlations (1e-9)", async () => {
    const corr = await auditJson(["--correlations", "corr.csv", "--n", String(n), ...TYPES]);
    const cov = await auditJson(["--covariance", "cov.csv", "--n", String(n), ...TYPES]);
    const sd = await auditJson(["--correlations", "corr.csv", "--sd", "sd.csv", "--n", String(n), ...TYPES]);
    expect(cov.data.source).toEqual({ kind: "covariance", n });
    expect(sd.data.source).toEqual({ kind: "correlations", n, sd_file: "sd.csv" });
    for (const other of [cov, sd]) {
      expect(other.claims.map(key)).toEqual(corr.claims.map(key));
      other.claims.forEach((c, i) => expectSameClaim(corr.claims[i]!, c, 1e-9));
      expect(relDiff(other.global.statistic, corr.global.statistic)).toBeLessThan(1e-9);
      expect(other.untestable.map((u) => u.reason)).toEqual(corr.untestable.map((u) => u.reason));
    }
  });

  it("a covariance matrix in extreme units (variables scaled by 1e-150 … 1e150, cells from 1e-300 to 1e300) gives the correlations' claims (1e-9)", async () => {
    const lines = readFileSync(join(dir, "cov.csv"), "utf8").trim().split("\n");
    const scale = (i: number) => 10 ** (150 * ((i % 3) - 1)); // 1e-150, 1, 1e150
    const scaled = [lines[0]!, ...lines.slice(1).map((line, i) => {
      const [name, ...cells] = line.split(",");
      return [name, ...cells.map((c, j) => (Number(c) * scale(i) * scale(j)).toPrecision(17))].join(",");
    })].join("\n") + "\n";
    writeFileSync(join(dir, "cov-extreme.csv"), scaled);
    const corr = await auditJson(["--correlations", "corr.csv", "--n", String(n), ...TYPES]);
    const extreme = await auditJson(["--covariance", "cov-extreme.csv", "--n", String(n), ...TYPES]);
    expect(extreme.claims.map(key)).toEqual(corr.claims.map(key));
    extreme.claims.forEach((c, i) => expectSameClaim(corr.claims[i]!, c, 1e-9));
  });

  it("a lower-triangular matrix (records ending at the diagonal) gives the square matrix's result exactly", async () => {
    const square = await auditJson(["--correlations", "corr.csv", "--n", String(n), ...TYPES]);
    const lower = await auditJson(["--correlations", "corr-lower.csv", "--n", String(n), ...TYPES]);
    expect(lower.claims.map((c) => [key(c), c.p, c.effect])).toEqual(square.claims.map((c) => [key(c), c.p, c.effect]));
  });

  it("without declared types every claim is tested, and the global test, adjustment and equivalence are those of the claims", async () => {
    const r = await auditJson(["--correlations", "corr.csv", "--n", String(n)]);
    expect(r.untestable.filter((u) => /summary statistics/.test(u.reason))).toEqual([]);
    expect(r.global.k).toBe(r.claims.length);
    expect(r.claims.every((c) => c.test === "pearson-partial" && typeof c.p_adjusted === "number" && c.equivalence !== undefined)).toBe(true);
  });

  it("the terminal text and the methods text say the claims came from a matrix and its n", async () => {
    const t = await runCli(["test", "graph.txt", "--correlations", "corr.csv", "--n", String(n)], { cwd: dir, env: { COLUMNS: "200" } });
    expect(t.code).toBe(0);
    expect(t.stdout.split("\n")[0]).toBe(`corr.csv: correlation matrix of ${n} complete cases (summary statistics: every claim gets the partial-correlation test)`);
    const r = await runCli(["report", "graph.txt", "--covariance", "cov.csv", "--n", String(n), "--out", "methods.txt", "--quiet"], { cwd: dir });
    expect(r.code).toBe(0);
    expect(readFileSync(join(dir, "methods.txt"), "utf8")).toContain(`The claims were tested from summary statistics: the covariance matrix of ${n} complete cases in cov.csv`);
  });

  it("the matrix may come from standard input (-), named so in messages; not together with the graph", async () => {
    const fromFile = await auditJson(["--correlations", "corr.csv", "--n", String(n)]);
    const r = await runCli(["test", "graph.txt", "--correlations", "-", "--n", String(n), "--json", "--quiet"], { cwd: dir, stdin: Readable.from([readFileSync(join(dir, "corr.csv"))]) });
    expect(r.code).toBe(0);
    const fromStdin = JSON.parse(r.stdout) as AuditResult;
    expect(fromStdin.data.file).toBe("standard input");
    expect(fromStdin.claims).toEqual(fromFile.claims);
    const both = await runCli(["test", "-", "--correlations", "-", "--n", String(n)], { cwd: dir, stdin: Readable.from([Buffer.from("")]) });
    expect(both.code).toBe(1);
    expect(both.stderr).toMatch(/the graph and the correlation matrix cannot both be read from standard input/);
  });

  it("report --correlations writes a Markdown report that records the matrix as an input", async () => {
    const r = await runCli(["report", "graph.txt", "--correlations", "corr.csv", "--n", String(n), "--out", "summary.md", "--quiet"], { cwd: dir });
    expect(r.stderr).toBe("");
    expect(r.code).toBe(0);
    const md = readFileSync(join(dir, "summary.md"), "utf8");
    expect(md).toContain("corr.csv");
  });
});

/** Run `test` on a matrix text written to a file, and return the run. */
async function onMatrix(text: string, args: string[] = [], graph = "a -> b\nb -> c\n", file = "m.csv") {
  writeFileSync(join(dir, file), text);
  writeFileSync(join(dir, "g3.txt"), graph);
  return runCli(["test", "g3.txt", ...(args.includes("--covariance") ? [] : ["--correlations", file]), ...args, "--quiet"], { cwd: dir });
}

describe("matrix validation: each failure exits 2 and names the file, line, field, the cell's row and column", () => {
  it("an asymmetric pair beyond the rounding of two printed decimals (0.30 vs 0.32; tolerance 0.005 + 0.005)", async () => {
    const r = await onMatrix(",a,b,c\na,1,0.30,0.1\nb,0.32,1,0.2\nc,0.1,0.2,1\n", ["--n", "50"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^arrowaudit: m\.csv:3:2: the cell of row "b", column "a" is 0\.32 but its mirror image \(row "a", column "b"\) is 0\.3; the matrix must be symmetric within the rounding of its printed digits \(here ±0\.01\)/);
  });

  it("an asymmetric pair within rounding (0.30 vs 0.31) is accepted and averaged", async () => {
    const r = await onMatrix(",a,b,c\na,1,0.30,0.1\nb,0.31,1,0.2\nc,0.1,0.2,1\n", ["--n", "50", "--json"]);
    expect(r.code).toBe(0);
  });

  it("a correlation diagonal that is not 1", async () => {
    const r = await onMatrix(",a,b,c\na,1,0.3,0.1\nb,0.3,0.98,0.2\nc,0.1,0.2,1\n", ["--n", "50"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^arrowaudit: m\.csv:3:3: the cell of row "b", column "b" is 0\.98, but a correlation matrix has 1 on its diagonal/);
  });

  it("a correlation beyond ±1", async () => {
    const r = await onMatrix(",a,b,c\na,1\nb,1.2,1\nc,0.1,0.2,1\n", ["--n", "50"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^arrowaudit: m\.csv:3:2: the cell of row "b", column "a" is 1\.2, outside −1 … 1/);
  });

  it("a matrix that is not positive semi-definite: the smallest eigenvalue as numpy gives it, and the heaviest variables", async () => {
    const r = await onMatrix(",a,b,c\na,1,0.9,0.9\nb,0.9,1,-0.9\nc,0.9,-0.9,1\n", ["--n", "50"]);
    expect(r.code).toBe(2);
    // -0.8000000000000003: numpy.linalg.eigvalsh (numpy 2.4.6); tolerance ‖H‖_F = √6 · 0.05 = 0.122 (one decimal off the diagonal; a correlation diagonal is exact)
    expect(r.stderr).toMatch(/^arrowaudit: m\.csv:\d+: the correlation matrix is not positive semi-definite: the smallest eigenvalue of the matrix scaled to unit diagonal is -0\.8000, beyond the −0\.122 that rounding/);
    expect(r.stderr).toMatch(/its eigenvector weighs most on "[abc]" \(-?0\.58\), "[abc]" \(-?0\.58\), "[abc]" \(-?0\.58\)/);
  });

  it("names that do not match the graph, with the same did-you-mean help as a CSV header", async () => {
    const r = await onMatrix(",a,bb,c\na,1\nbb,0.3,1\nc,0.1,0.2,1\n", ["--n", "50"], "a -> b\nb -> c\n");
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^arrowaudit: m\.csv: a graph node is not a column of the data; rename the column or the node/);
    expect(r.stderr).toContain("  b (did you mean a, bb, c?)"); // findClosestNames: edit distance ≤ 2 for short names
  });

  it("a non-numeric cell", async () => {
    const r = await onMatrix(",a,b,c\na,1\nb,0.3*,1\nc,0.1,0.2,1\n", ["--n", "50"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^arrowaudit: m\.csv:3:2: the cell of row "b", column "a" holds "0\.3\*", not a number; write a plain number/);
  });

  it("a lower triangle with a gap", async () => {
    const r = await onMatrix(",a,b,c\na,1\nb,0.3,1\nc,,0.2,1\n", ["--n", "50"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^arrowaudit: m\.csv:4:2: the cell of row "c", column "a" is empty, a gap in the lower triangle/);
  });

  it("an upper triangle only partly filled", async () => {
    const r = await onMatrix(",a,b,c\na,1,0.3\nb,0.3,1,0.2\nc,0.1,0.2,1\n", ["--n", "50"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^arrowaudit: m\.csv:2:4: the cell of row "a", column "c" is empty while other cells above the diagonal are filled/);
  });

  it("rows out of the header's order, a missing row, an extra value, a repeated name", async () => {
    let r = await onMatrix(",a,b,c\na,1\nc,0.3,1\nb,0.1,0.2,1\n", ["--n", "50"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^arrowaudit: m\.csv:3:1: row 2 is named "c" but column 2 of the header is "b"/);
    r = await onMatrix(",a,b,c\na,1\nb,0.3,1\n", ["--n", "50"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^arrowaudit: m\.csv:4: the matrix has 2 rows for 3 variables; the row of "c" is missing/);
    r = await onMatrix(",a,b,c\na,1\nb,0.3,1\nc,0.1,0.2,1,0.5\n", ["--n", "50"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^arrowaudit: m\.csv:4:5: row "c" has a value in field 5/);
    r = await onMatrix(",a,b,a\na,1\nb,0.3,1\na,0.1,0.2,1\n", ["--n", "50"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^arrowaudit: m\.csv:1:4: the variable "a" appears twice in the header \(columns 2 and 4\)/);
  });

  it("a covariance matrix: a negative variance, a covariance beyond the Cauchy–Schwarz bound", async () => {
    let r = await onMatrix(",a,b,c\na,4\nb,1,-9\nc,0.5,1,2\n", ["--covariance", "m.csv", "--n", "50"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^arrowaudit: m\.csv:3:3: the cell of row "b", column "b" is the variance -9, which cannot be negative/);
    r = await onMatrix(",a,b,c\na,4.0\nb,7.0,9.0\nc,0.5,1.0,2.0\n", ["--covariance", "m.csv", "--n", "50"]);
    expect(r.code).toBe(2);
    // 7/√(4·9) = 1.1667, by hand
    expect(r.stderr).toMatch(/^arrowaudit: m\.csv:3:2: the cell of row "b", column "a" is 7, which implies a correlation of 1\.17 between "b" and "a"/);
  });

  it("n must exceed the number of variables + 2", async () => {
    const r = await onMatrix(",a,b,c\na,1\nb,0.3,1\nc,0.1,0.2,1\n", ["--n", "5"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^arrowaudit: --n 5: the matrix's 3 variables of the graph need more than 5 complete cases/);
    expect((await onMatrix(",a,b,c\na,1\nb,0.3,1\nc,0.1,0.2,1\n", ["--n", "6"])).code).toBe(0);
    expect((await onMatrix(",a,b,c\na,1\nb,0.3,1\nc,0.1,0.2,1\n", ["--n", "6.5"])).code).toBe(1); // not a whole number: a usage error
  });

  it("standard deviations: a missing variable, a non-positive value, a name the matrix lacks", async () => {
    const m = ",a,b,c\na,1\nb,0.3,1\nc,0.1,0.2,1\n";
    writeFileSync(join(dir, "s1.csv"), "a,2\nb,3\n");
    let r = await onMatrix(m, ["--n", "50", "--sd", "s1.csv"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^arrowaudit: s1\.csv: no standard deviation for "c"/);
    writeFileSync(join(dir, "s2.csv"), "a,b,c\n2,0,1\n");
    r = await onMatrix(m, ["--n", "50", "--sd", "s2.csv"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^arrowaudit: s2\.csv:2:2: the standard deviation of "b" is "0"; write a positive number/);
    writeFileSync(join(dir, "s3.csv"), "variable,sd\na,2\nbb,3\nc,1\n");
    r = await onMatrix(m, ["--n", "50", "--sd", "s3.csv"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^arrowaudit: s3\.csv:3:1: "bb" is not a variable of the matrix m\.csv \(did you mean "b"/);
  });

  it("usage errors (exit 1): a data file as well, no --n, --sd with --covariance, a method that needs rows, an option that reads rows", async () => {
    const m = ",a,b,c\na,1\nb,0.3,1\nc,0.1,0.2,1\n";
    writeFileSync(join(dir, "m.csv"), m);
    writeFileSync(join(dir, "g3.txt"), "a -> b\nb -> c\n");
    const cases: [string[], RegExp][] = [
      [["m.csv", "--correlations", "m.csv", "--n", "50"], /--correlations replaces the data file/],
      [["--correlations", "m.csv"], /--correlations needs --n/],
      [["--covariance", "m.csv", "--n", "50", "--sd", "m.csv"], /drop --sd/],
      [["--correlations", "m.csv", "--n", "50", "--method", "chisq"], /--method chisq needs rows/],
      [["--correlations", "m.csv", "--n", "50", "--listwise"], /--listwise selects rows/],
      [["--correlations", "m.csv", "--n", "50", "--missing", "-9"], /--missing reads rows/],
      [["--correlations", "m.csv", "--covariance", "m.csv", "--n", "50"], /choose one of --correlations and --covariance/],
      [[], /missing the data file/],
    ];
    for (const [args, message] of cases) {
      const r = await runCli(["test", "g3.txt", ...args], { cwd: dir });
      expect(r.code, args.join(" ")).toBe(1);
      expect(r.stderr).toMatch(message);
    }
  });

  it("a nominal variable makes its claims untestable from summary statistics, with the reason", async () => {
    const r = await onMatrix(",a,b,c\na,1\nb,0.3,1\nc,0.1,0.2,1\n", ["--n", "50", "--types", "b=nominal", "--json"]);
    expect(r.code).toBe(0);
    const res = JSON.parse(r.stdout) as AuditResult;
    expect(res.claims).toEqual([]);
    expect(res.untestable.map((u) => u.reason)).toEqual([expect.stringMatching(/^untestable from summary statistics: the test needs the levels of "b" \(declared nominal\)/)]);
  });
});
