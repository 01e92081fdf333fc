/**
 * Data-guided revisions (`arrowaudit suggest`): on data simulated with one arrow the graph omits,
 * the omitted arrow in its true direction comes first; repairs respect the time order; the
 * revised graph reads back; the bundled demo's one omitted arrow explains both its contradicted
 * claims. The BIC is checked in test/stats/gaussianSem.test.ts (scipy); recovery here is judged
 * against the simulated truth (the data-generating graph), which is outside the search.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { suggestRevisions } from "../../src/audit/suggestRevisions.js";
import { runAudit } from "../../src/audit/runAudit.js";
import { createSummaryData } from "../../src/data/summaryData.js";
import { sampleCorrelation } from "simple-statistics";
import { createTable } from "../../src/data/createTable.js";
import { simulateFromGraph } from "../../src/data/simulateFromGraph.js";
import { parseGraph } from "../../src/graph/parseGraph.js";
import { writeGraphText } from "../../src/graph/writeGraphText.js";
import { runCli } from "../helpers/runCli.js";

const work = mkdtempSync(join(tmpdir(), "arrowaudit-suggest-"));
afterAll(() => rmSync(work, { recursive: true, force: true }));

function tableOf(text: string, n: number, seed: number, effects: number) {
  const data = simulateFromGraph(parseGraph(text).graph, { n, seed, effects });
  return createTable(Object.fromEntries(data.columns.map((c) => [c.name, c.values])));
}

describe("suggestRevisions", () => {
  it("recovers the omitted arrow x -> y (effect 0.2), in its true direction, first in at least 90% of 200 replications (n = 2,000)", () => {
    // truth: a -> y <- x, b -> y, y -> z, with a -> y and b -> y at 0.5 and the omitted x -> y at
    // 0.2. The colliders at y identify the direction: y -> x would make a and b independent of x
    // given y, while the truth makes them independent of x marginally. The analyst's graph omits x -> y.
    const truthGraph = parseGraph("a -> y\nb -> y\nx -> y\ny -> z\n").graph;
    const drawn = parseGraph("a -> y\nb -> y\ny -> z\nx\n").graph;
    let first = 0;
    for (let rep = 0; rep < 200; rep++) {
      const data = simulateFromGraph(truthGraph, { n: 2000, seed: 500 + rep, effects: 0.5, coefficients: { "x -> y": 0.2 } });
      const table = createTable(Object.fromEntries(data.columns.map((c) => [c.name, c.values])));
      const s = suggestRevisions(drawn, table, { maxAdditions: 1 });
      if (s.steps[0]?.chosen.change === "x -> y") first++;
    }
    expect(first).toBeGreaterThanOrEqual(180);
  }, 240_000);

  it("a step says what it explained and what is still contradicted; the search stops when nothing is", () => {
    const truth = "a -> y\nx -> y\ny -> z\n";
    const s = suggestRevisions(parseGraph("a -> y\ny -> z\nx\n").graph, tableOf(truth, 3000, 7, 0.3), { maxAdditions: 3 });
    expect(s.start.contradicted).toBeGreaterThan(0);
    expect(s.steps).toHaveLength(1);
    const step = s.steps[0]!;
    expect(step.chosen.change).toBe("x -> y");
    expect(step.chosen.explains).toContain("x ⫫ y | a");
    expect(step.chosen.still_contradicted).toEqual([]);
    expect(s.stopped).toBe("no claim is contradicted any more");
    expect(step.candidates.map((c) => c.change).sort()).toEqual(["x -> y", "x <-> y", "y -> x"].sort());
    // all continuous, nothing unmeasured: every candidate has a BIC and its change
    for (const c of step.candidates) expect(typeof c.delta_bic).toBe("number");
    expect(s.graph.parents("y")).toContain("x");
    expect(s.caution).toMatch(/subject-matter knowledge/);
  });

  it("never proposes an arrow backwards in time or into a fixed variable", () => {
    // truth: x -> y; the analyst puts y in an earlier period than x, so only y -> x… is backwards? no:
    // period 1 holds x, period 2 holds y: y -> x is ruled out, x -> y and x <-> y remain
    const truth = "x -> y\n";
    const drawn = parseGraph("period: x\nperiod: y\nx\ny\n").graph;
    const s = suggestRevisions(drawn, tableOf(truth, 1000, 3, 0.4), { maxAdditions: 1 });
    const changes = s.steps[0]!.candidates.map((c) => c.change);
    expect(changes).not.toContain("y -> x");
    expect(changes).toContain("x -> y");
    const fixed = parseGraph("fixed: y\nx\ny\n").graph;
    const f = suggestRevisions(fixed, tableOf(truth, 1000, 3, 0.4), { maxAdditions: 1 });
    expect(f.steps[0]!.candidates.map((c) => c.change)).toEqual(["y -> x"]);
  });

  it("no BIC, with the reason, when a variable is not continuous or a node is unmeasured", () => {
    const data = simulateFromGraph(parseGraph("x -> y\n").graph, { n: 800, seed: 2, effects: 0.5, types: { y: "binary" } });
    const t = createTable(Object.fromEntries(data.columns.map((c) => [c.name, c.values])));
    const s = suggestRevisions(parseGraph("x\ny\n").graph, t, { maxAdditions: 1 });
    expect(s.bic_note).toMatch(/not every variable is continuous/);
    expect(s.steps[0]!.chosen.score.bic).toBeUndefined();
  });

  it("the bundled demo: one added arrow explains both contradicted claims", () => {
    // the demo cohort is invented (data/generate-demo.ts); read it as `arrowaudit demo` does
    return (async () => {
      const r = await runCli(
        ["suggest", "data/demo/graph.txt", "data/demo/cohort.csv", "--missing", "-9,999", "--levels", "education=primary|secondary|tertiary", "--max-additions", "2", "--json", "--quiet"],
        { cwd: join(import.meta.dirname, "..", "..") },
      );
      expect(r.code, r.stderr).toBe(0);
      const j = JSON.parse(r.stdout);
      expect(j.start.contradicted).toBe(2);
      expect(j.steps[0].chosen.explains).toHaveLength(2);
      expect(j.steps[0].chosen.score.contradicted).toBe(0);
      expect(j.revised_graph).toContain(j.steps[0].chosen.change);
      expect(j.caution).toMatch(/confirm it in other data/);
    })();
  }, 60_000);
});

describe("suggestRevisions from a correlation matrix", () => {
  // The matrix is the rows' Pearson correlation matrix computed by simple-statistics (a
  // general-purpose library, not our moments), with n the rows; a matrix audit is the
  // partial-correlation test of complete cases, so it must agree with the rows' audit under
  // --method linear --listwise claim for claim, and its BIC differences with the rows' (the
  // matrix's unit scale shifts every graph's BIC by one constant).
  it("ranks the same candidates, with the same counts, Fisher's C p (1e-9) and BIC changes (1e-6), as the rows under --method linear", () => {
    const truth = "a -> y\nb -> y\nx -> y\ny -> z\n";
    const drawn = parseGraph("a -> y\nb -> y\ny -> z\nx\n").graph;
    const data = simulateFromGraph(parseGraph(truth).graph, { n: 1500, seed: 31, effects: 0.4, coefficients: { "x -> y": 0.25 } });
    const names = data.columns.map((c) => c.name);
    const values = data.columns.map((c) => Array.from(c.values as ArrayLike<number>));
    const m = names.length;
    const cor = new Float64Array(m * m);
    for (let a = 0; a < m; a++) for (let b = 0; b < m; b++) cor[a * m + b] = a === b ? 1 : sampleCorrelation(values[a]!, values[b]!);
    const summary = { ...createSummaryData(names, cor, 1500, {}, "r.csv"), source: { kind: "correlations" as const, n: 1500 } };
    const table = createTable(Object.fromEntries(data.columns.map((c) => [c.name, c.values])));
    const fromRows = suggestRevisions(drawn, table, { maxAdditions: 2, settings: { method: "linear", listwise: true } });
    const fromMatrix = suggestRevisions(drawn, summary, { maxAdditions: 2 });
    expect(fromMatrix.start.contradicted).toBe(fromRows.start.contradicted);
    expect(fromMatrix.start.contradicted).toBeGreaterThan(0);
    expect(fromMatrix.steps.map((s) => s.chosen.change)).toEqual(fromRows.steps.map((s) => s.chosen.change));
    expect(fromMatrix.steps[0]!.chosen.change).toBe("x -> y");
    expect(fromMatrix.stopped).toBe(fromRows.stopped);
    fromMatrix.steps.forEach((step, i) => {
      const rowStep = fromRows.steps[i]!;
      expect(step.candidates.map((c) => c.change)).toEqual(rowStep.candidates.map((c) => c.change));
      step.candidates.forEach((c, k) => {
        const r = rowStep.candidates[k]!;
        expect(c.score.contradicted).toBe(r.score.contradicted);
        expect(c.score.fisher_c_p).toBeCloseTo(r.score.fisher_c_p, 9);
        expect(c.delta_bic!).toBeCloseTo(r.delta_bic!, 6);
        expect(c.explains).toEqual(r.explains);
      });
    });
  });

  it("no BIC, with the reason, when the matrix declares a variable binary", () => {
    const cor = Float64Array.from([1, 0.3, 0.3, 1]);
    const summary = { ...createSummaryData(["x", "y"], cor, 400, { y: "binary" }, "r.csv"), source: { kind: "correlations" as const, n: 400 } };
    const s = suggestRevisions(parseGraph("x\ny\n").graph, summary, { maxAdditions: 1 });
    expect(s.start.contradicted).toBe(1);
    expect(s.bic_note).toMatch(/not every variable is continuous/);
  });
});

describe("the claim cache that suggest uses", () => {
  it("an audit with results cached from another graph equals the audit without them, field by field", () => {
    const t = tableOf("a -> y\nx -> y\ny -> z\nw -> z\n", 1500, 21, 0.3);
    const first = parseGraph("a -> y\ny -> z\nw -> z\nx\n").graph;
    const second = parseGraph("a -> y\nx -> y\ny -> z\nw -> z\n").graph;
    const claimCache = new Map();
    runAudit(first, t, { claimCache });
    const filled = claimCache.size;
    expect(filled).toBeGreaterThan(0);
    const cached = runAudit(second, t, { claimCache });
    expect(cached).toEqual(runAudit(second, t));
    // the second graph shares claims with the first: not every claim was tested again
    expect(claimCache.size).toBeLessThan(filled + cached.claims.length);
  });

  it("pattern moments cached by what they cover give the same audit (a table above the row-path size, so the moments are used)", () => {
    const t = tableOf("a -> y\nx -> y\ny -> z\n", 25_000, 22, 0.3);
    const g = parseGraph("a -> y\ny -> z\nx\n").graph;
    const momentsCache = new Map();
    const first = runAudit(g, t, { momentsCache });
    expect(momentsCache.size).toBe(1);
    expect(runAudit(g, t, { momentsCache })).toEqual(first);
    expect(momentsCache.size).toBe(1);
    expect(runAudit(g, t, { momentsCache, settings: { listwise: true } }).claims.length).toBe(first.claims.length);
    expect(momentsCache.size).toBe(2); // a row filter is part of the key
  });
});

describe("arrowaudit suggest", () => {
  it("writes the revised graph with a comment per change; it parses back with the addition", async () => {
    const truth = "a -> y\nx -> y\ny -> z\n";
    const data = simulateFromGraph(parseGraph(truth).graph, { n: 2000, seed: 9, effects: 0.3 });
    writeFileSync(join(work, "d.csv"), data.columns.map((c) => c.name).join(",") + "\n" + Array.from({ length: 2000 }, (_, i) => data.columns.map((c) => (c.values[i] as number).toFixed(6)).join(",")).join("\n") + "\n");
    writeFileSync(join(work, "g.txt"), "# drawn before the data\na -> y\ny -> z\nx\n");
    const r = await runCli(["suggest", "g.txt", "d.csv", "--out", "revised.txt"], { cwd: work });
    expect(r.code, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/^The graph as drawn: 1 of 4 claims contradicted/);
    expect(r.stdout).toMatch(/added x -> y: it explains x ⫫ y \| a/);
    expect(r.stdout).toMatch(/Caution: These revisions are suggested by the same data/);
    const text = readFileSync(join(work, "revised.txt"), "utf8");
    expect(text.startsWith("# drawn before the data\na -> y\ny -> z\nx\n# revisions suggested by arrowaudit suggest from d.csv")).toBe(true);
    expect(text).toMatch(/# step 1: x -> y explains 1 contradicted claim \(x ⫫ y \| a\); contradicted 1 -> 0/);
    expect(parseGraph(text).graph.parents("y")).toEqual(["a", "x"]);
    expect(readFileSync(join(work, "g.txt"), "utf8")).toBe("# drawn before the data\na -> y\ny -> z\nx\n");
  });

  it("a DOT graph is written out in arrowaudit's format", async () => {
    writeFileSync(join(work, "g.dot"), "digraph { a -> y; y -> z; x }\n");
    const r = await runCli(["suggest", "g.dot", "d.csv", "--json", "--quiet"], { cwd: work });
    expect(r.code, r.stderr).toBe(0);
    const j = JSON.parse(r.stdout);
    expect(j.revised_graph).toMatch(/^# g\.dot, written in arrowaudit's graph format\na -> y\ny -> z\nx\n# revisions suggested/);
    expect(parseGraph(j.revised_graph).graph.arrows).toContainEqual(["x", "y"]);
  });

  it("refuses --out onto an input (exit 2) and --max-additions 0 (exit 1)", async () => {
    expect((await runCli(["suggest", "g.txt", "d.csv", "--out", "g.txt"], { cwd: work })).code).toBe(2);
    expect((await runCli(["suggest", "g.txt", "d.csv", "--max-additions", "0"], { cwd: work })).code).toBe(1);
  });
});

describe("arrowaudit suggest from a correlation matrix", () => {
  it("suggest g.txt --correlations m.csv --n N finds the omitted x -> y of the simulated truth; the JSON names the matrix", async () => {
    const truth = "a -> y\nx -> y\ny -> z\n";
    const data = simulateFromGraph(parseGraph(truth).graph, { n: 2000, seed: 9, effects: 0.3 });
    const names = data.columns.map((c) => c.name);
    const values = data.columns.map((c) => Array.from(c.values as ArrayLike<number>));
    // the matrix a paper would print: correlations by simple-statistics, rounded to 6 decimals
    const lines = [["", ...names].join(","), ...names.map((v, a) => [v, ...names.map((_, b) => (a === b ? "1" : sampleCorrelation(values[a]!, values[b]!).toFixed(6)))].join(","))];
    writeFileSync(join(work, "m.csv"), lines.join("\n") + "\n");
    writeFileSync(join(work, "gm.txt"), "a -> y\ny -> z\nx\n");
    const r = await runCli(["suggest", "gm.txt", "--correlations", "m.csv", "--n", "2000", "--json", "--quiet"], { cwd: work });
    expect(r.code, r.stderr).toBe(0);
    const j = JSON.parse(r.stdout);
    expect(j.data).toBe("m.csv");
    expect(j.data_source).toEqual({ kind: "correlations", n: 2000 });
    expect(j.settings.method).toBe("linear");
    expect(j.steps[0].chosen.change).toBe("x -> y");
    expect(j.revised_graph).toContain("from m.csv (data-guided)");
  });

  it("usage errors: no data at all, a data file with --correlations, and an option that reads rows (exit 1)", async () => {
    const none = await runCli(["suggest", "gm.txt"], { cwd: work });
    expect(none.code).toBe(1);
    expect(none.stderr).toContain("missing the data file");
    const both = await runCli(["suggest", "gm.txt", "d.csv", "--correlations", "m.csv", "--n", "2000"], { cwd: work });
    expect(both.code).toBe(1);
    expect(both.stderr).toContain("--correlations replaces the data file");
    const rows = await runCli(["suggest", "gm.txt", "--correlations", "m.csv", "--n", "2000", "--listwise"], { cwd: work });
    expect(rows.code).toBe(1);
    expect(rows.stderr).toContain("--listwise selects rows");
  });
});

describe("writeGraphText", () => {
  it("writes a graph that parses back to the same arrows, shared causes, unmeasured nodes and time order", () => {
    const g = parseGraph('unmeasured: u\nperiod: a, "b c"\nperiod: d\nfixed: a\nu -> d\na -> d\n"b c" <-> d\nlone\n').graph;
    const back = parseGraph(writeGraphText(g)).graph;
    expect(back.arrows).toEqual(g.arrows);
    expect(back.bidirected).toEqual(g.bidirected);
    expect(back.nodes.filter((n) => !back.isMeasured(n))).toEqual(["u"]);
    expect(back.timeOrder?.periods).toEqual([["a", "b c"], ["d"]]);
    expect(back.timeOrder?.fixed).toEqual(["a"]);
    expect(new Set(back.nodes)).toEqual(new Set(g.nodes));
  });
});
