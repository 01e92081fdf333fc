import { spawnSync } from "node:child_process";
import Papa from "papaparse";
import { describe, expect, it } from "vitest";
import { csvCell, renderCsv } from "../../src/report/csv.js";
import { sampleResult } from "../fixtures/report/sampleResult.js";

describe("csvCell", () => {
  it("csvCell neutralises cells a spreadsheet would run as formulas (CWE-1236; OWASP CSV injection advice)", () => {
    expect(csvCell("=HYPERLINK(\"x\")")).toBe(`"'=HYPERLINK(""x"")"`);
    expect(csvCell("+1+1")).toBe("'+1+1");
    expect(csvCell("-cmd")).toBe("'-cmd");
    expect(csvCell("@SUM(A1)")).toBe("'@SUM(A1)");
    expect(csvCell("\tx")).toBe("'\tx");
  });
  it("csvCell keeps plain and negative numbers numeric and quotes delimiters, quotes and newlines (RFC 4180)", () => {
    expect(csvCell(-0.25)).toBe("-0.25");
    expect(csvCell(1e-300)).toBe("1e-300");
    expect(csvCell("a,b")).toBe('"a,b"');
    expect(csvCell('say "hi"')).toBe('"say ""hi"""');
    expect(csvCell("two\nlines")).toBe('"two\nlines"');
    expect(csvCell(undefined)).toBe("");
  });
});

describe("renderCsv", () => {
  it("renderCsv writes a header and one row per claim, then one per untestable pair", () => {
    const r = sampleResult();
    const lines = renderCsv(r).trimEnd().split("\r\n");
    // the Monte-Carlo columns come last, so the earlier ones keep their positions
    expect(lines[0]).toBe("rank,x,y,given,n,test,statistic,df,p,log_p,p_adjusted,p_method,effect,ci_low,ci_high,verdict,arrows,reason,p_draws,p_se,p_ci99_low,p_ci99_high,p_undecided,p_proposed_B,detectable,equivalence,equivalence_ci_low,equivalence_ci_high");
    expect(lines).toHaveLength(1 + r.claims.length + r.untestable.length);
  });
});

describe("renderCsv name lists", () => {
  /** The sample result with names holding spaces, commas, semicolons, quotes and a formula start. */
  function awkward() {
    const r = sampleResult();
    const rename: Record<string, string> = { age: "age at entry", sleep_h: "sleep; hours", active: 'active, "self-rated"', bmi: "=bmi" };
    const rn = (s: string) => rename[s] ?? s;
    r.claims = r.claims.map((c) => ({ ...c, x: rn(c.x), y: rn(c.y), given: c.given.map(rn), arrows: c.arrows.map((a) => a.split(" ").map(rn).join(" ")) }));
    return r;
  }

  it("renderCsv writes the given set and the arrows as JSON arrays, so names with spaces or separators stay unambiguous", () => {
    // regression: the given cell joined names with spaces, so "age at entry, bmi" could not be told from four names
    const r = awkward();
    const rows = Papa.parse<Record<string, string>>(renderCsv(r), { header: true, skipEmptyLines: true }).data;
    expect(rows).toHaveLength(r.claims.length + r.untestable.length);
    r.claims.forEach((c, i) => {
      expect(JSON.parse(rows[i]!.given!)).toEqual(c.given);
      expect(JSON.parse(rows[i]!.arrows!)).toEqual(c.arrows);
    });
    const empty = r.claims.findIndex((c) => c.given.length === 0);
    expect(rows[empty]!.given).toBe("[]");
    // untestable pairs without a separating set have an empty cell, not an empty set
    expect(rows[r.claims.length]!.given).toBe("");
  });

  it("renderCsv's name lists read back with pandas and json (reference reader outside the project)", () => {
    const r = awkward();
    const script = "import sys, json, pandas as pd\nd = pd.read_csv(sys.stdin, keep_default_na=False)\nprint(json.dumps([json.loads(g) if g else None for g in d['given']]))";
    const run = spawnSync("python3", ["-c", script], { input: renderCsv(r), encoding: "utf8", timeout: 60_000 });
    if (run.status !== 0 && /No module named/.test(run.stderr)) {
      console.warn("pandas not available; the papaparse check above covers the format");
      return;
    }
    expect(run.status, run.stderr).toBe(0);
    const given = JSON.parse(run.stdout) as (string[] | null)[];
    expect(given.slice(0, r.claims.length)).toEqual(r.claims.map((c) => c.given));
  });
});
