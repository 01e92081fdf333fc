/**
 * `--counts COLUMN`: data given as one row per cell with a frequency column give the audit of the
 * same data expanded to one row per unit, exactly, with every test; bad counts are input errors
 * naming the file, the data row and the column. Reference expansion: pandas
 * `DataFrame.loc[DataFrame.index.repeat(n)]` written by `scripts/counts_reference.py` (live when
 * python3 with numpy and pandas is available, else its committed output in test/fixtures/counts).
 */
import { spawnSync } from "node:child_process";
import { copyFileSync, mkdtempSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { beforeAll, describe, expect, it } from "vitest";
import { runCli } from "../helpers/runCli.js";
import type { AuditResult } from "../../src/audit/types.js";
import { expandCounts } from "../../src/data/expandCounts.js";
import type { Table } from "../../src/data/Table.js";

const FIXTURES = join(__dirname, "..", "fixtures", "counts");
const SCRIPT = join(__dirname, "..", "..", "scripts", "counts_reference.py");

let dir = "";
let source = "";

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), "arrowaudit-counts-"));
  const live = spawnSync("python3", ["-c", "import numpy, pandas"], { encoding: "utf8" }).status === 0 && process.env.ARROWAUDIT_COUNTS !== "fixtures";
  if (live) {
    const run = spawnSync("python3", [SCRIPT, dir], { encoding: "utf8", timeout: 60_000 });
    if (run.status !== 0) throw new Error(`scripts/counts_reference.py failed: ${run.stderr}`);
    source = `live pandas (${run.stdout.trim()})`;
  } else {
    for (const f of ["cells.csv", "expanded.csv"]) copyFileSync(join(FIXTURES, f), join(dir, f));
    source = "committed fixtures of scripts/counts_reference.py (python3 with pandas unavailable)";
  }
  copyFileSync(join(FIXTURES, "graph.txt"), join(dir, "graph.txt"));
});

async function auditJson(args: string[]): Promise<AuditResult> {
  const r = await runCli(["test", "graph.txt", ...args, "--json", "--quiet"], { cwd: dir });
  if (r.code !== 0 && r.code !== 3) throw new Error(`exit ${r.code}: ${r.stderr}`);
  return JSON.parse(r.stdout) as AuditResult;
}

/** The audit of cells.csv with --counts equals the one of expanded.csv field for field, but for the line about the counts, which ends with `noteTail`. */
function expectSameAudit(counted: AuditResult, expanded: AuditResult, noteTail: string): void {
  expect(counted.claims).toEqual(expanded.claims);
  expect(counted.untestable).toEqual(expanded.untestable);
  expect(counted.global).toEqual(expanded.global);
  expect(counted.variables).toEqual(expanded.variables);
  expect({ ...counted.data, file: "" }).toEqual({ ...expanded.data, file: "" });
  const note = counted.warnings.find((w) => /stand for/.test(w));
  expect(note).toMatch(new RegExp(`^150 rows of cells\\.csv stand for ${counted.data.rows} units by the counts in "n" \\(\\d+ rows? of count 0 add none\\); ${noteTail}$`));
  expect(counted.warnings.filter((w) => w !== note)).toEqual(expanded.warnings);
}

describe("--counts gives the audit of the data expanded to one row per unit", () => {
  for (const method of ["auto", "linear", "rank", "chisq", "regression"]) {
    it(`test --counts n --method ${method} equals test on pandas' expansion, every claim field for field`, async () => {
      const counted = await auditJson(["cells.csv", "--counts", "n", "--method", method]);
      const expanded = await auditJson(["expanded.csv", "--method", method]);
      expect(source).not.toBe("");
      expect(counted.claims.length + counted.untestable.length).toBeGreaterThan(0);
      // n is the sum of the counts; the expansion is recorded
      expectSameAudit(counted, expanded, "every test sees one row per unit");
    });
  }

  it("the tests used include the moment-based, table-based and row-level methods", async () => {
    const tests = new Set<string>();
    for (const method of ["auto", "linear", "regression"]) for (const c of (await auditJson(["cells.csv", "--counts", "n", "--method", method])).claims) tests.add(c.test);
    expect(tests.has("gcm") && tests.has("stratified-chisq") && tests.has("pearson-partial")).toBe(true);
    // and the counts matter: without them each cell counts once
    const unweighted = await auditJson(["cells.csv"]);
    const weighted = await auditJson(["cells.csv", "--counts", "n"]);
    expect(unweighted.data.rows).toBe(150);
    expect(weighted.data.rows).toBeGreaterThan(150);
    expect(weighted.claims.map((c) => c.p)).not.toEqual(unweighted.claims.map((c) => c.p));
  });
});

describe("--counts on categorical variables only: tested from tables of counts, without one row per unit", () => {
  for (const method of ["auto", "chisq"]) {
    it(`test --counts n --method ${method} with the continuous nodes unmeasured equals test on pandas' expansion, but for the line about the counts`, async () => {
      const args = ["--method", method, "--unmeasured", "score,y"];
      const counted = await auditJson(["cells.csv", "--counts", "n", ...args]);
      const expanded = await auditJson(["expanded.csv", ...args]);
      expect(counted.claims.length).toBeGreaterThan(0);
      expect(counted.claims.every((c) => c.test === "stratified-chisq" || c.test === "linear-by-linear")).toBe(true);
      expectSameAudit(counted, expanded, "every claim was tested from tables of counts, each row counted as its units");
    });
  }

  it("counts adding up to more units than the expansion takes (3·10^9) are audited from their cells", async () => {
    const rows = ["sex,edu,region,n"];
    let units = 0;
    for (const [i, sex] of ["female", "male"].entries()) {
      for (const edu of [1, 2, 3]) {
        for (const [k, region] of ["east", "north", "west"].entries()) {
          const n = 150_000_000 + 1_000_003 * (i + 2 * edu + 5 * k) + (sex === "male" && region === "west" ? 20_000_000 : 0);
          rows.push(`${sex},${edu},${region},${n}`);
          units += n;
        }
      }
    }
    writeFileSync(join(dir, "big.csv"), rows.join("\n") + "\n");
    const r = await auditJson(["big.csv", "--counts", "n", "--unmeasured", "score,y"]);
    expect(r.data.rows).toBe(units);
    expect(units * 3).toBeGreaterThan(1e8);
    expect(r.claims.length).toBeGreaterThan(0);
    expect(r.claims.every((c) => c.n === units)).toBe(true);
  });
});

describe("--counts errors", () => {
  const cells = (counts: string[]) => ["a,b,n", ...counts.map((c, i) => `${i % 3},${(i * 7) % 5}.5,${c}`)].join("\n") + "\n";
  const graph = "a -> b\n";
  async function onCounts(counts: string[], args: string[] = ["--counts", "n"]) {
    writeFileSync(join(dir, "c.csv"), cells(counts));
    writeFileSync(join(dir, "g2.txt"), graph);
    return runCli(["test", "g2.txt", "c.csv", ...args, "--quiet"], { cwd: dir });
  }

  it("a negative count, a count that is not a whole number, text, an empty count: exit 2 naming the data row and the column", async () => {
    const base = ["3", "4", "5", "6", "7", "8", "9", "10", "11", "12", "13", "14"];
    let r = await onCounts([...base.slice(0, 4), "-2", ...base.slice(5)]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^arrowaudit: c\.csv, field 3: the count column "n" holds -2 in data row 5; a count must be a whole number ≥ 0/);
    r = await onCounts([...base.slice(0, 2), "2.5", ...base.slice(3)]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^arrowaudit: c\.csv, field 3: the count column "n" holds 2\.5 in data row 3; a count must be a whole number ≥ 0/);
    r = await onCounts([...base.slice(0, 6), "", ...base.slice(7)]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^arrowaudit: c\.csv, field 3: the count column "n" is empty or missing in data row 7/);
    r = await onCounts(["many", "few", "some", ...base.slice(3)]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/count column "n" holds "many" in data row 1; every count must be a whole number/);
  });

  it("an unknown count column (with the closest names), a count column that is a graph node, --counts with a matrix", async () => {
    const base = ["3", "4", "5", "6", "7", "8"];
    let r = await onCounts(base, ["--counts", "nn"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^arrowaudit: c\.csv: --counts "nn" is not a column of the data \(did you mean "n"/);
    r = await onCounts(base, ["--counts", "b"]);
    expect(r.code).toBe(1);
    expect(r.stderr).toMatch(/--counts "b" is a measured node of the graph/);
    writeFileSync(join(dir, "m.csv"), ",a,b\na,1\nb,0.3,1\n");
    r = await runCli(["test", "g2.txt", "--correlations", "m.csv", "--n", "50", "--counts", "n"], { cwd: dir });
    expect(r.code).toBe(1);
    expect(r.stderr).toMatch(/--counts reads rows/);
  });
});

describe("expandCounts", () => {
  const table = (values: number[][], counts: number[]): Table => {
    const columns = [
      ...values.map((v, j) => ({ name: `v${j}`, type: "continuous" as const, typeSource: "inferred" as const, values: Float64Array.from(v), missing: v.filter(Number.isNaN).length })),
      { name: "n", type: "continuous" as const, typeSource: "inferred" as const, values: Float64Array.from(counts), missing: 0 },
    ];
    return { rows: counts.length, columns, warnings: [], column: (name: string) => columns.find((c) => c.name === name) };
  };

  it("expandCounts(table, column) repeats each row by its count, drops count-0 rows and the count column, counts missing values per unit", () => {
    const t = expandCounts(table([[1, NaN, 3]], [2, 3, 0]), "n", { file: "x.csv" });
    expect(t.rows).toBe(5); // 2 + 3 + 0, by hand
    expect(Array.from(t.column("v0")!.values)).toEqual([1, 1, NaN, NaN, NaN]);
    expect(t.column("v0")!.missing).toBe(3);
    expect(t.column("n")).toBeUndefined();
  });

  it("expandCounts refuses more cells than MAX_EXPANDED_CELLS, and leaves its input unchanged", () => {
    const input = table([[1, 2]], [60_000_000, 50_000_000]);
    const before = Array.from(input.column("v0")!.values);
    expect(() => expandCounts(input, "n", { file: "x.csv" })).toThrow(/add up to 110,000,000 units/);
    expect(Array.from(input.column("v0")!.values)).toEqual(before);
  });
});
