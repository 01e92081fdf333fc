/**
 * Reading, checking and auditing a published matrix in the library (no CLI): the file grammar's
 * edge cases, the doc examples, the rounding rule, and one claim against numpy and scipy.
 */
import { describe, expect, it } from "vitest";
import { parseStandardDeviations, parseSummaryMatrix, printedRounding } from "../../src/data/parseSummaryMatrix.js";
import { checkSummaryMatrix } from "../../src/data/checkSummaryMatrix.js";
import { createSummaryData } from "../../src/data/summaryData.js";
import { runAuditOnSummary } from "../../src/audit/runAudit.js";
import { createGraph } from "../../src/graph/createGraph.js";
import { InputError } from "../../src/errors.js";

const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

describe("parseSummaryMatrix", () => {
  it("parseSummaryMatrix(text) runs its doc example: records ending at the diagonal are lower-triangular", () => {
    const m = parseSummaryMatrix(",a,b\na,1\nb,0.3,1\n", { file: "r.csv", kind: "correlations" });
    expect(m.layout).toBe("lower-triangular");
    expect(Array.from(m.values)).toEqual([1, 0.3, 0.3, 1]);
  });

  it("printedRounding(text) is half a unit in the last printed digit", () => {
    expect(printedRounding("0.31")).toBe(0.005); // common practice: round to nearest
    expect(printedRounding("120")).toBe(0.5);
    expect(printedRounding("-.5")).toBeCloseTo(0.05, 15);
    expect(printedRounding("1.25e-3")).toBeCloseTo(5e-6, 20);
  });

  it("parseSummaryMatrix reads semicolons, tabs, CRLF, a byte-order mark, quoted names with commas and a named corner", () => {
    const semi = parseSummaryMatrix("\uFEFFvariable;a;\"b, mmHg\"\r\na;1;0.25\r\n\"b, mmHg\";0.25;1\r\n", { file: "s.csv", kind: "correlations" });
    expect(semi.names).toEqual(["a", "b, mmHg"]);
    expect(semi.layout).toBe("square");
    const tab = parseSummaryMatrix(",a,b\n".replace(/,/g, "\t") + "a\t4\nb\t1.5\t9\n", { file: "t.tsv", kind: "covariance" });
    expect(Array.from(tab.values)).toEqual([4, 1.5, 1.5, 9]);
  });

  it("parseSummaryMatrix matches names written in different Unicode forms (NFC) between header and rows", () => {
    const composed = "\u00e2ge";
    const decomposed = "a\u0302ge";
    const m = parseSummaryMatrix(`,${composed},b\n${decomposed},1\nb,0.2,1\n`, { file: "u.csv", kind: "correlations" });
    expect(m.names).toEqual([composed, "b"]);
  });

  it("parseSummaryMatrix of a 1 × 1 matrix, an empty file and a header without names", () => {
    expect(parseSummaryMatrix(",a\na,1\n", { file: "one.csv", kind: "correlations" }).layout).toBe("square");
    expect(() => parseSummaryMatrix("", { file: "e.csv", kind: "correlations" })).toThrow(/^e\.csv: the correlation matrix file is empty/);
    expect(() => parseSummaryMatrix("corner\n", { file: "h.csv", kind: "covariance" })).toThrow(/^h\.csv:1: the header names no variables/);
  });

  it("parseSummaryMatrix names an upper-triangular matrix as such", () => {
    expect(() => parseSummaryMatrix(",a,b,c\na,1,0.3,0.1\nb,,1,0.2\nc,,,1\n", { file: "up.csv", kind: "correlations" })).toThrow(/^up\.csv:3:2: the matrix is upper-triangular/);
  });

  it("parseSummaryMatrix errors are InputErrors carrying the file, line and column", () => {
    try {
      parseSummaryMatrix(",a,b\na,1\nb,x,1\n", { file: "p.csv", kind: "correlations" });
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(InputError);
      expect(e).toMatchObject({ file: "p.csv", line: 3, column: 2 });
    }
  });
});

describe("parseStandardDeviations", () => {
  it("parseStandardDeviations(text) runs its doc example and reads the wide layout", () => {
    expect(parseStandardDeviations("variable,sd\nage,12.1\nsbp,15\n", { file: "sd.csv" }).byName.get("sbp")).toBe(15);
    const wide = parseStandardDeviations("age,sbp\n12.1,15\n", { file: "sd.csv" });
    expect([...wide.byName]).toEqual([["age", 12.1], ["sbp", 15]]);
  });

  it("parseStandardDeviations refuses a repeated name and a line with three fields", () => {
    expect(() => parseStandardDeviations("a,1\na,2\n", { file: "d.csv" })).toThrow(/^d\.csv:2:1: "a" has a second standard deviation/);
    expect(() => parseStandardDeviations("a,1\nb,2,3\n", { file: "d.csv" })).toThrow(/^d\.csv:2: a line of the standard deviations holds 3 fields/);
  });
});

describe("checkSummaryMatrix", () => {
  it("checkSummaryMatrix(matrix) runs its doc example and averages a pair that differs within rounding", () => {
    const ok = checkSummaryMatrix(parseSummaryMatrix(",a,b\na,1\nb,0.3,1\n", { file: "r.csv", kind: "correlations" }));
    expect(Array.from(ok.values)).toEqual([1, 0.3, 0.3, 1]);
    const avg = checkSummaryMatrix(parseSummaryMatrix(",a,b\na,1,0.30\nb,0.31,1\n", { file: "r.csv", kind: "correlations" }));
    expect(avg.values[1]).toBeCloseTo(0.305, 15);
  });

  it("checkSummaryMatrix: a covariance of variance 0 is listed, not an error, and a singular correlation matrix is accepted (semi-definite)", () => {
    const z = checkSummaryMatrix(parseSummaryMatrix(",a,b\na,4\nb,0,0\n", { file: "z.csv", kind: "covariance" }));
    expect(z.zeroVariance).toEqual([1]);
    const singular = checkSummaryMatrix(parseSummaryMatrix(",a,b\na,1\nb,1,1\n", { file: "s.csv", kind: "correlations" }));
    expect(Math.abs(singular.smallestEigenvalue)).toBeLessThan(1e-15); // eigenvalues 0 and 2, by hand
  });

  it("checkSummaryMatrix leaves the parsed matrix unchanged", () => {
    const m = parseSummaryMatrix(",a,b\na,1,0.30\nb,0.31,1\n", { file: "r.csv", kind: "correlations" });
    const before = Array.from(m.values);
    checkSummaryMatrix(m);
    expect(Array.from(m.values)).toEqual(before);
  });
});

describe("createSummaryData and runAuditOnSummary", () => {
  it("createSummaryData runs its doc example: moments in the order asked, one complete pattern of n rows", () => {
    const d = createSummaryData(["a", "b"], [1, 0.3, 0.3, 1], 100, {}, "r.csv");
    expect(Array.from(d.moments.momentsFor(["b", "a"]).cov)).toEqual([1, 0.3, 0.3, 1]);
    expect(d.moments.patternList()).toEqual([{ observed: ["a", "b"], rows: 100 }]);
    expect(d.table.rows).toBe(100);
    expect(() => createSummaryData(["a"], [1, 2], 10, {})).toThrow(/1 names need 1 matrix cells/);
  });

  it("runAuditOnSummary tests a ⫫ c | b as numpy's inverse-matrix partial correlation and scipy's t test give it", () => {
    const graph = createGraph({ arrows: [["a", "b"], ["b", "c"]] });
    const cov = [1, 0.3, 0.1, 0.3, 1, 0.2, 0.1, 0.2, 1];
    const r = runAuditOnSummary(graph, { ...createSummaryData(["a", "b", "c"], cov, 50, {}, "r.csv"), source: { kind: "correlations", n: 50 } });
    expect(r.claims).toHaveLength(1);
    const c = r.claims[0]!;
    expect(c).toMatchObject({ x: "a", y: "c", given: ["b"], test: "pearson-partial", n: 50, df: 47 });
    expect(rel(c.effect, 0.0427960492510913)).toBeLessThan(1e-12); // numpy.linalg.inv: −P_ac/√(P_aa·P_cc)
    expect(rel(c.statistic, 0.29366397823037776)).toBeLessThan(1e-12); // r·√(47/(1 − r²)), numpy
    expect(rel(c.p, 0.7703075896745993)).toBeLessThan(1e-9); // 2·scipy.stats.t.sf(t, 47), scipy 1.17.1
    expect(r.data.source).toEqual({ kind: "correlations", n: 50 });
  });
});
