/**
 * The SQL of the per-pattern sufficient statistics (src/data/patternMomentsSql.ts), run by
 * embedded DuckDB, gives the complete-case means and covariances that numpy computes on the
 * same file (numpy.genfromtxt, then numpy.mean and numpy.cov(ddof=1) on the rows complete on the
 * columns), to 1e-9 relative; and uses only standard aggregates.
 */
import { spawnSync } from "node:child_process";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { completeCaseMoments, mergePatternSums, patternMomentsSql, profileOfPatterns, quoteSqlIdentifier, readPatternSums } from "../../src/data/patternMomentsSql.js";
import { mulberry32 } from "../../src/stats/mulberry32.js";
import { duckdbSql } from "../helpers/duckdbSql.js";

const work = mkdtempSync(join(tmpdir(), "arrowaudit-sql-"));
afterAll(() => rmSync(work, { recursive: true, force: true }));

// Seeded data: five columns, one around 10^6 (the shift keeps its digits), one with a quote in
// its name, each cell missing with probability 0.06.
const NAMES = ["age", "sbp", 'chol "total"', "bmi", "income"];
function writeCohort(path: string, rows: number): void {
  const rng = mulberry32(1403);
  const gauss = () => Math.sqrt(-2 * Math.log(1 - rng())) * Math.cos(2 * Math.PI * rng());
  const lines = [NAMES.map((n) => (n.includes('"') ? `"${n.replace(/"/g, '""')}"` : n)).join(",")];
  for (let i = 0; i < rows; i++) {
    const age = 50 + 10 * gauss();
    const values = [age, 110 + 0.6 * age + 9 * gauss(), 5 + 0.03 * age + gauss(), 26 + 4 * gauss(), 1e6 + 2e4 * gauss() + 300 * age];
    lines.push(values.map((v) => (rng() < 0.06 ? "" : v.toPrecision(12))).join(","));
  }
  writeFileSync(path, lines.join("\n") + "\n");
}

/** numpy's complete-case means and covariance (ddof = 1) of the given columns. */
function numpyMoments(path: string, columns: number[]): { n: number; means: number[]; cov: number[][] } {
  const script = [
    "import json, sys, numpy as np",
    "x = np.genfromtxt(sys.argv[1], delimiter=',', skip_header=1)",
    "cols = json.loads(sys.argv[2])",
    "y = x[:, cols]",
    "y = y[~np.isnan(y).any(axis=1)]",
    "print(json.dumps({'n': int(y.shape[0]), 'means': y.mean(axis=0).tolist(), 'cov': np.atleast_2d(np.cov(y, rowvar=False, ddof=1)).tolist()}))",
  ].join("\n");
  const r = spawnSync("python3", ["-c", script, path, JSON.stringify(columns)], { encoding: "utf8" });
  if (r.status !== 0) throw new Error(`python3 with numpy is needed for this reference: ${r.stderr}`);
  return JSON.parse(r.stdout) as { n: number; means: number[]; cov: number[][] };
}


const close = (a: number, b: number, rel: number) => Math.abs(a - b) <= rel * Math.max(Math.abs(a), Math.abs(b));

describe("patternMomentsSql", () => {
  const csv = join(work, "cohort.csv");
  writeCohort(csv, 2000);
  const shifts = [50, 137, 6.5, 26, 1e6];
  const from = `read_csv('${csv.replace(/'/g, "''")}', header = true)`;

  it("patternMomentsSql run by DuckDB gives numpy's complete-case means and covariances (ddof=1) of every tested set of columns to 1e-9", async () => {
    const rows = await duckdbSql(patternMomentsSql(from, NAMES.map((name, j) => ({ name, shift: shifts[j]! }))));
    const patterns = readPatternSums(rows, NAMES.length);
    expect(patterns.reduce((n, p) => n + p.rows, 0)).toBe(2000);
    expect(patterns.length).toBeGreaterThan(10); // many missing-data patterns, as intended
    for (const set of [[0, 1], [0, 1, 2], [1, 4], [0, 1, 2, 3, 4], [4]]) {
      const ours = completeCaseMoments(patterns, set, shifts);
      const ref = numpyMoments(csv, set); // numpy.cov(ddof=1) on complete rows
      expect(ours.n).toBe(ref.n);
      set.forEach((_, a) => {
        expect(close(ours.means[a]!, ref.means[a]!, 1e-12), `mean ${a}`).toBe(true);
        set.forEach((_, b) => expect(close(ours.cov[a * set.length + b]!, ref.cov[a]![b]!, 1e-9), `cov ${set} [${a},${b}]`).toBe(true));
      });
    }
  });

  it("patternMomentsSql without shifts agrees with the shifted query (shifts change only the rounding)", async () => {
    const shifted = readPatternSums(await duckdbSql(patternMomentsSql(from, NAMES.map((name, j) => ({ name, shift: shifts[j]! })))), NAMES.length);
    const plain = readPatternSums(await duckdbSql(patternMomentsSql(from, NAMES.map((name) => ({ name })))), NAMES.length);
    const a = completeCaseMoments(shifted, [0, 1, 2], shifts);
    const b = completeCaseMoments(plain, [0, 1, 2]);
    a.cov.forEach((v, i) => expect(close(v, b.cov[i]!, 1e-9)).toBe(true));
  });

  it("the profile columns give numpy's per-column observed count, min, max and count of values that are not whole (profileOfPatterns)", async () => {
    const rows = await duckdbSql(patternMomentsSql(from, NAMES.map((name, j) => ({ name, shift: shifts[j]! })), { profile: true }));
    const profile = profileOfPatterns(readPatternSums(rows, NAMES.length, { profile: true }), NAMES.length);
    const script = [
      "import json, sys, numpy as np",
      "x = np.genfromtxt(sys.argv[1], delimiter=',', skip_header=1)",
      "out = []",
      "for j in range(x.shape[1]):",
      "    v = x[:, j][~np.isnan(x[:, j])]",
      "    out.append({'observed': int(v.size), 'min': float(v.min()), 'max': float(v.max()), 'fractional': int(np.sum(v != np.floor(v)))})",
      "print(json.dumps(out))",
    ].join("\n");
    const r = spawnSync("python3", ["-c", script, csv], { encoding: "utf8" });
    if (r.status !== 0) throw new Error(`python3 with numpy is needed for this reference: ${r.stderr}`);
    const ref = JSON.parse(r.stdout) as { observed: number; min: number; max: number; fractional: number }[]; // numpy on the CSV's columns
    expect(profile).toEqual(ref);
    const plain = readPatternSums(await duckdbSql(patternMomentsSql(from, NAMES.map((name, j) => ({ name, shift: shifts[j]! })))), NAMES.length);
    expect(() => profileOfPatterns(plain, NAMES.length)).toThrow(/profile/);
  });

  it("mergePatternSums of two parts of the rows gives the whole query's patterns (rows, sums to 1e-12, products to 1e-12, profile exactly), whatever the order of the halves' patterns", async () => {
    const cols = NAMES.map((name, j) => ({ name, shift: shifts[j]! }));
    // two disjoint parts that cover every row, whatever order DuckDB scans them in
    const inFirst = "(age < 50 OR age IS NULL)";
    const whole = readPatternSums(await duckdbSql(patternMomentsSql(from, cols, { profile: true })), NAMES.length, { profile: true });
    const first = readPatternSums(await duckdbSql(patternMomentsSql(`(SELECT * FROM ${from} WHERE ${inFirst})`, cols, { profile: true })), NAMES.length, { profile: true });
    const second = readPatternSums(await duckdbSql(patternMomentsSql(`(SELECT * FROM ${from} WHERE NOT ${inFirst})`, cols, { profile: true })), NAMES.length, { profile: true });
    expect(first.reduce((n, p) => n + p.rows, 0)).toBeGreaterThan(500);
    expect(second.reduce((n, p) => n + p.rows, 0)).toBeGreaterThan(500);
    const merged = mergePatternSums([first, [...second].reverse()]);
    expect(merged.map((p) => p.observed)).toEqual(whole.map((p) => p.observed));
    merged.forEach((p, i) => {
      const w = whole[i]!;
      expect(p.rows).toBe(w.rows);
      p.sums.forEach((v, j) => expect(close(v, w.sums[j]!, 1e-12) || Math.abs(v - w.sums[j]!) < 1e-9, `sum ${i}.${j}`).toBe(true));
      p.products.forEach((v, j) => expect(close(v, w.products[j]!, 1e-12) || Math.abs(v - w.products[j]!) < 1e-9, `product ${i}.${j}`).toBe(true));
      expect([p.min, p.max, p.fractional]).toEqual([w.min, w.max, w.fractional]);
    });
    // the order of the parts is the order of the additions: swapping them may change the last bits, never the patterns
    expect(mergePatternSums([second, first]).map((p) => p.rows)).toEqual(whole.map((p) => p.rows));
  });

  it("patternMomentsSql uses only count, sum, CASE, CAST and GROUP BY (standard aggregates)", () => {
    const sql = patternMomentsSql("t", [{ name: "a" }, { name: "b", shift: -2.5 }]);
    // every "name(" in the text, but "FROM (", which opens the subquery of patterns
    const calls = new Set([...sql.matchAll(/([A-Za-z_]+)\s*\(/g)].map((m) => m[1]!.toLowerCase()).filter((w) => w !== "from"));
    expect([...calls].sort()).toEqual(["cast", "count", "sum"]);
    expect(sql).toContain("GROUP BY o_0, o_1");
    expect(sql).toContain('("b" AS DOUBLE PRECISION) - -2.5)');
  });

  it("quoteSqlIdentifier doubles a quote (SQL-92 delimited identifiers) and patternMomentsSql refuses no columns or a non-finite shift", () => {
    expect(quoteSqlIdentifier('chol "total"')).toBe('"chol ""total"""');
    expect(() => patternMomentsSql("t", [])).toThrow(RangeError);
    expect(() => patternMomentsSql("t", [{ name: "a", shift: Infinity }])).toThrow(/finite/);
  });
});
