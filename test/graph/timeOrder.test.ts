/**
 * Time order in the graph file: `period:` and `fixed:` lines (arrows format), `period=N` and
 * `fixed=true` node attributes (DOT); arrows against the order are errors at their line and
 * column, and repairs never point backwards in time or into a fixed trait. The rule itself is a
 * fact of the trade (common practice): a later measurement cannot cause an earlier one, and a
 * trait fixed at conception, such as genotype or year of birth, has no cause among the
 * variables of a cohort.
 */
import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { GraphError } from "../../src/errors.js";
import { createGraph } from "../../src/graph/createGraph.js";
import { parseDot } from "../../src/graph/parseDot.js";
import { parseGraph } from "../../src/graph/parseGraph.js";
import { withUnmeasured } from "../../src/graph/withUnmeasured.js";
import { isAncestor, repairArrows, repairTimeNote } from "../../src/audit/repairArrows.js";
import { runAudit } from "../../src/audit/runAudit.js";
import { createTable } from "../../src/data/createTable.js";

const COHORT = `# an invented cohort: baseline, exposure wave, outcome wave
period: sex, age
period: smoking, bmi
period: sbp, stroke
fixed: sex
age -> smoking -> sbp -> stroke
sex -> bmi -> sbp
`;

function thrown(f: () => unknown): Error {
  try {
    f();
  } catch (e) {
    return e as Error;
  }
  throw new Error("expected an error");
}

describe("time order in the arrows format", () => {
  it("reads periods in order and fixed traits", () => {
    const { graph, warnings } = parseGraph(COHORT, { file: "g.txt" });
    expect(warnings).toEqual([]);
    const t = graph.timeOrder!;
    expect(t.periods).toEqual([["sex", "age"], ["smoking", "bmi"], ["sbp", "stroke"]]);
    expect(t.fixed).toEqual(["sex"]);
    expect(t.periodOf("bmi")).toBe(2);
    expect(t.periodOf("nowhere")).toBeUndefined();
    expect(t.isFixed("sex")).toBe(true);
    expect(t.isFixed("age")).toBe(false);
  });

  it("keywords are case-insensitive, and a graph without them has no time order", () => {
    expect(parseGraph("PERIOD: a\nFixed: a\nPeriod: b\na -> b").graph.timeOrder?.periods).toEqual([["a"], ["b"]]);
    expect(parseGraph("a -> b").graph.timeOrder).toBeUndefined();
  });

  it("an arrow from a later period to an earlier one is an error at the arrow, whatever the line order", () => {
    const e = thrown(() => parseGraph("stroke -> age\nperiod: age\nperiod: stroke\n", { file: "g.txt" }));
    expect(e).toBeInstanceOf(GraphError);
    expect(e.message).toBe(
      "g.txt:1:8: arrow stroke -> age runs against the declared time order: stroke (period 2) is later than age (period 1); " +
        "reverse or remove the arrow, or correct the period or fixed declaration\n  stroke -> age\n         ^",
    );
  });

  it("an arrow into a fixed trait, or a shared cause with one, is an error at its line and column", () => {
    const a = thrown(() => parseGraph("fixed: sex\nbmi -> sex\n", { file: "g.txt" }));
    expect(a.message).toMatch(/^g\.txt:2:5: arrow bmi -> sex runs against the declared time order: sex is declared fixed \(nothing can cause it\)/);
    const b = thrown(() => parseGraph("fixed: sex\nbmi <-> sex\n", { file: "g.txt" }));
    expect(b.message).toMatch(/^g\.txt:2:5: shared cause bmi <-> sex gives a fixed variable a cause/);
  });

  it("arrows within one period, or with nodes outside every period, are allowed", () => {
    const { graph } = parseGraph("period: a, b\nperiod: c\nb -> a\nc -> free -> a\n");
    expect(graph.arrows).toEqual([["b", "a"], ["c", "free"], ["free", "a"]]);
  });

  it("a node in two periods is an error naming both; a repeat within one period is a warning", () => {
    const e = thrown(() => parseGraph("period: a, b\nperiod: c, a\n", { file: "g.txt" }));
    expect(e.message).toMatch(/^g\.txt:2:12: a is already in period 1 \(line 1\); a variable belongs to one period/);
    const { warnings } = parseGraph("period: a, a\nfixed: a\nfixed: a\n", { file: "g.txt" });
    expect(warnings).toEqual([
      "g.txt:1: a is listed in period 1 twice (first on line 1); the duplicate is ignored",
      "g.txt:3: a is declared fixed twice (first on line 2); the duplicate is ignored",
    ]);
  });

  it("an empty keyword list says what to write", () => {
    expect(thrown(() => parseGraph("period:\n")).message).toMatch(/expected a node name after "period:"; list the variables of this period, e\.g\. period: age, sex/);
    expect(thrown(() => parseGraph("fixed:\n")).message).toMatch(/e\.g\. fixed: sex, birth_year/);
  });

  it("the time order survives --unmeasured", () => {
    const { graph } = parseGraph(COHORT);
    const g = withUnmeasured(graph, ["bmi"]);
    expect(g.timeOrder?.periods).toEqual(graph.timeOrder?.periods);
    expect(g.timeOrder?.isFixed("sex")).toBe(true);
  });
});

describe("time order in DOT", () => {
  it("reads period=N and fixed=true node attributes, keeping the file's period numbers", () => {
    const { graph } = parseDot('digraph { sex [fixed=true, period=1]; sbp [period=3]; bmi [period="3"]; sex -> bmi -> sbp }');
    expect(graph.timeOrder?.periods).toEqual([["sex"], [], ["sbp", "bmi"]]);
    expect(graph.timeOrder?.fixed).toEqual(["sex"]);
  });

  it("an arrow against the order is an error at its line and column; bad values are refused", () => {
    const e = thrown(() => parseDot("digraph {\n a [period=2]; b [period=1]\n a -> b\n}", { file: "g.dot" }));
    expect(e.message).toMatch(/^g\.dot:3:4: arrow a -> b runs against the declared time order: a \(period 2\) is later than b \(period 1\)/);
    expect(thrown(() => parseDot("digraph { a [period=0] }")).message).toMatch(/period=0 is not a period number; write a whole number from 1/);
    expect(thrown(() => parseDot("digraph { a [period=early] }")).message).toMatch(/period=early is not a period number/);
    expect(thrown(() => parseDot("digraph { a [fixed=maybe] }")).message).toMatch(/fixed=maybe is not a yes\/no value/);
  });

  it("node [period=…] as a default is ignored with a warning", () => {
    const { warnings } = parseDot("digraph {\n node [period=2]\n a -> b }", { file: "g.dot" });
    expect(warnings).toEqual(["g.dot:2: node [period=2] is ignored; set it on each node, e.g. age [period=1]"]);
  });
});

describe("createGraph validates the time order without positions", () => {
  it("refuses a backwards arrow, an arrow into a fixed node and a node in two periods", () => {
    expect(() => createGraph({ arrows: [["b", "a"]], periods: [["a"], ["b"]] })).toThrow(/b \(period 2\) is later than a \(period 1\)/);
    expect(() => createGraph({ arrows: [["b", "a"]], fixed: ["a"] })).toThrow(/a is declared fixed/);
    expect(() => createGraph({ nodes: ["a"], periods: [["a"], ["a"]] })).toThrow(/listed in period 1 and in period 2/);
  });
});

describe("repairs respect the time order", () => {
  it("a contradicted pair in different periods gets only the forward arrow and the shared cause", () => {
    const { graph } = parseGraph(COHORT);
    expect(repairArrows(graph, "stroke", "age")).toEqual(["age -> stroke", "stroke <-> age"]);
    expect(repairTimeNote(graph, "stroke", "age")).toBe("the time order rules out stroke -> age (stroke (period 3) is later than age (period 1)); left: age -> stroke, stroke <-> age");
  });

  it("a fixed trait gets no cause and shares none", () => {
    const { graph } = parseGraph("period: a\nperiod: b\nfixed: s\nb -> c\ns -> c\n");
    expect(repairArrows(graph, "b", "s")).toEqual(["s -> b"]);
    expect(repairTimeNote(graph, "b", "s")).toBe(
      "the time order rules out b -> s (s is declared fixed (nothing can cause it)) and b <-> s (s is declared fixed (nothing can cause it)); left: s -> b",
    );
    // nodes outside every period and not fixed: nothing is ruled out, no note
    const free = parseGraph("period: a\nperiod: b\nb -> c\na -> d\n").graph;
    expect(repairArrows(free, "c", "d")).toEqual(["c -> d", "d -> c", "c <-> d"]);
    expect(repairTimeNote(free, "c", "d")).toBeUndefined();
  });

  it("two fixed traits: nothing can explain their dependence, and the note says what to check", () => {
    const { graph } = parseGraph("fixed: sex, genotype\nsex -> y\ngenotype -> y\n");
    expect(repairArrows(graph, "sex", "genotype")).toEqual([]);
    expect(repairTimeNote(graph, "sex", "genotype")).toMatch(/no arrow or shared cause can explain this dependence, so look at selection, measurement/);
  });

  it("only the shared cause is left when one direction runs backwards and the other closes a cycle", () => {
    // x (period 2) -> m (no period) -> y (period 1): y -> x would close a cycle, x -> y runs backwards
    const { graph } = parseGraph("period: y\nperiod: x\nx -> m -> y\n");
    expect(repairArrows(graph, "x", "y")).toEqual(["x <-> y"]);
    expect(repairTimeNote(graph, "x", "y")).toBe(
      "the time order rules out x -> y (x (period 2) is later than y (period 1)); only an unmeasured common cause, x <-> y, fits the time order",
    );
  });

  it("property: every offered directed repair keeps the order and the graph acyclic (random orders over a random DAG)", () => {
    fc.assert(
      fc.property(fc.integer({ min: 3, max: 9 }), fc.integer({ min: 0, max: 2 ** 31 - 1 }), (n, seed) => {
        let s = seed || 1;
        const u = () => ((s = (s * 48271) % 2147483647) / 2147483647);
        const names = Array.from({ length: n }, (_, i) => `v${i}`);
        const period = names.map(() => 1 + Math.floor(u() * 3));
        const arrows: [string, string][] = [];
        for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) if (u() < 0.3 && period[i]! <= period[j]!) arrows.push([names[i]!, names[j]!]);
        const periods = [1, 2, 3].map((k) => names.filter((_, i) => period[i] === k));
        const fixed = names.filter((nm) => arrows.every(([, b]) => b !== nm) && u() < 0.3);
        const graph = createGraph({ nodes: names, arrows, periods, fixed });
        for (let i = 0; i < n; i++)
          for (let j = 0; j < n; j++) {
            if (i === j) continue;
            const [x, y] = [names[i]!, names[j]!];
            const offered = repairArrows(graph, x, y);
            for (const r of offered) {
              if (r.includes("<->")) {
                if (fixed.includes(x) || fixed.includes(y)) return false;
                continue;
              }
              const [a, b] = r.split(" -> ") as [string, string];
              if (isAncestor(graph, b, a)) return false;
              if (fixed.includes(b)) return false;
              if (period[names.indexOf(a)]! > period[names.indexOf(b)]!) return false;
              createGraph({ nodes: names, arrows: [...arrows, [a, b]], periods, fixed }); // throws if not allowed
            }
          }
        return true;
      }),
    );
  });
});

describe("the audit says when the time order narrows a contradicted claim's repairs", () => {
  it("a dependence between an outcome and a baseline variable gets the forward arrow and a note", () => {
    // invented data: stroke depends on age directly, an arrow the graph omits
    let s = 20261203;
    const u = () => ((s = (s * 16807) % 2147483647) / 2147483647);
    const norm = () => Math.sqrt(-2 * Math.log(u() || 1e-12)) * Math.cos(2 * Math.PI * u());
    const n = 400;
    const age: number[] = [];
    const sbp: number[] = [];
    const stroke: number[] = [];
    for (let i = 0; i < n; i++) {
      const a = norm();
      const b = norm();
      age.push(a);
      sbp.push(b);
      stroke.push(b + 0.8 * a + norm());
    }
    const { graph } = parseGraph("period: age\nperiod: sbp\nperiod: stroke\nsbp -> stroke\nage\n");
    const result = runAudit(graph, createTable({ age, sbp, stroke }));
    const claim = result.claims.find((c) => [c.x, c.y].sort().join() === "age,stroke")!;
    expect(claim.verdict).toBe("contradicted");
    expect(claim.arrows).not.toContain("stroke -> age");
    expect(claim.arrows.some((a) => a.includes("age -> stroke"))).toBe(true);
    expect(claim.warnings?.some((w) => w.startsWith("the time order rules out stroke -> age (stroke (period 3) is later than age (period 1))"))).toBe(true);
  });
});
