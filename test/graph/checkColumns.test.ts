import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { UnknownNodeError } from "../../src/errors.js";
import { checkColumns, editDistanceIgnoreCase, findClosestNames } from "../../src/graph/checkColumns.js";
import { createGraph } from "../../src/graph/createGraph.js";
import { parseGraph } from "../../src/graph/parseGraph.js";

function errorOf(f: () => unknown): UnknownNodeError {
  try {
    f();
  } catch (e) {
    expect(e).toBeInstanceOf(UnknownNodeError);
    return e as UnknownNodeError;
  }
  throw new Error("expected an UnknownNodeError");
}

describe("editDistanceIgnoreCase", () => {
  it("editDistanceIgnoreCase matches textbook Levenshtein distances", () => {
    expect(editDistanceIgnoreCase("kitten", "sitting")).toBe(3); // from memory: the classic example, k→s, e→i, +g
    expect(editDistanceIgnoreCase("flaw", "lawn")).toBe(2); // from memory: delete f, insert n
    // Jurafsky & Martin, Speech and Language Processing (3rd ed. draft), ch. 2: distance 5 with unit costs
    expect(editDistanceIgnoreCase("intention", "execution")).toBe(5);
    expect(editDistanceIgnoreCase("", "abc")).toBe(3); // common practice: all insertions
    expect(editDistanceIgnoreCase("", "")).toBe(0);
    expect(editDistanceIgnoreCase("SBP", "sbp_0")).toBe(2); // the @example: two insertions after a case-blind match
  });

  it("editDistanceIgnoreCase ignores case and counts code points, not UTF-16 units", () => {
    expect(editDistanceIgnoreCase("SBP", "sbp")).toBe(0);
    expect(editDistanceIgnoreCase("Âge", "âge")).toBe(0);
    expect(editDistanceIgnoreCase("𝑥1", "x1")).toBe(1); // one astral code point substituted
    expect(editDistanceIgnoreCase("血压", "血糖")).toBe(1);
  });

  it("editDistanceIgnoreCase is a metric with the known bounds (property)", () => {
    const s = fc.string({ maxLength: 7 });
    fc.assert(
      fc.property(s, s, s, (a, b, c) => {
        const ab = editDistanceIgnoreCase(a, b);
        const la = Array.from(a.toLowerCase()).length;
        const lb = Array.from(b.toLowerCase()).length;
        expect(ab).toBe(editDistanceIgnoreCase(b, a));
        expect(ab).toBeGreaterThanOrEqual(Math.abs(la - lb));
        expect(ab).toBeLessThanOrEqual(Math.max(la, lb));
        expect(ab === 0).toBe(a.toLowerCase() === b.toLowerCase());
        expect(ab).toBeLessThanOrEqual(editDistanceIgnoreCase(a, c) + editDistanceIgnoreCase(c, b));
        // appending k characters costs exactly k
        expect(editDistanceIgnoreCase(a, a + c)).toBe(Array.from(c.toLowerCase()).length);
      }),
      { numRuns: 300 },
    );
  });
});

describe("findClosestNames", () => {
  it("findClosestNames returns up to 3 near names, nearest first, ties in column order", () => {
    expect(findClosestNames("sbp", ["age", "SBP", "sbp0", "stroke"])).toEqual(["SBP", "sbp0"]);
    expect(findClosestNames("bmi", ["bmi1", "bmi2", "BMI", "bmi3", "bmi4"])).toEqual(["BMI", "bmi1", "bmi2"]);
    expect(findClosestNames("bmi", ["bmi1", "bmi2"], 1)).toEqual(["bmi1"]);
  });

  it("findClosestNames leaves out names too far to be a typo, and the name itself", () => {
    expect(findClosestNames("sbp", ["systolic_blood_pressure", "stroke", "sbp"])).toEqual([]);
    expect(findClosestNames("x", [])).toEqual([]);
  });
});

describe("checkColumns", () => {
  const graph = parseGraph("unmeasured: u\nage -> sbp -> stroke\nu -> sbp\nu -> stroke\n").graph;

  it("checkColumns passes when every measured node is a column and lists the unused columns in order", () => {
    const r = checkColumns(graph, ["id", "stroke", "sbp", "site", "age"]);
    expect(r.ignoredColumns).toEqual(["id", "site"]);
    expect(r.unmeasuredColumns).toEqual([]);
  });

  it("checkColumns reports columns that name an unmeasured node separately from ignored ones", () => {
    const r = checkColumns(graph, ["age", "sbp", "stroke", "u"]);
    expect(r.ignoredColumns).toEqual([]);
    expect(r.unmeasuredColumns).toEqual(["u"]);
  });

  it("checkColumns does not require unmeasured nodes, from the graph or from options, to be columns", () => {
    expect(() => checkColumns(graph, ["age", "sbp", "stroke"])).not.toThrow();
    const r = checkColumns(graph, ["age", "stroke", "sbp"], { unmeasured: ["sbp"] });
    expect(r.unmeasuredColumns).toEqual(["sbp"]);
    expect(() => checkColumns(graph, ["age", "stroke"], { unmeasured: ["sbp"] })).not.toThrow();
    expect(() => checkColumns(graph, ["age", "stroke"])).toThrow(UnknownNodeError);
  });

  it("checkColumns throws UnknownNodeError naming each missing node with close columns", () => {
    const e = errorOf(() => checkColumns(graph, ["Age", "age_0", "SBP", "stroke_yn", "id"], { file: "cohort.csv" }));
    expect(e.names).toEqual(["age", "sbp", "stroke"]);
    expect(e.file).toBe("cohort.csv");
    expect(e.message).toBe(
      "cohort.csv: 3 graph nodes are not columns of the data; rename the column or the node so they match exactly (case matters), " +
        "or declare the node unmeasured in the graph file (unmeasured: age) or with --unmeasured age\n" +
        "  age (did you mean Age, age_0?)\n" +
        "  sbp (did you mean SBP?)\n" +
        "  stroke (did you mean stroke_yn?)",
    );
  });

  it("checkColumns golden message for one missing node without suggestions, and quotes names with spaces", () => {
    const g = createGraph({ arrows: [["systolic bp", "stroke"]] });
    const e = errorOf(() => checkColumns(g, ["stroke", "zzz"]));
    expect(e.names).toEqual(["systolic bp"]);
    expect(e.message).toBe(
      "a graph node is not a column of the data; rename the column or the node so they match exactly (case matters), " +
        'or declare the node unmeasured in the graph file (unmeasured: "systolic bp") or with --unmeasured "systolic bp"\n' +
        '  "systolic bp"',
    );
  });

  it("checkColumns throws when the extra unmeasured list names a node the graph does not have", () => {
    const e = errorOf(() => checkColumns(graph, ["age", "sbp", "stroke"], { unmeasured: ["U", "nothing_like_it"] }));
    expect(e.names).toEqual(["U", "nothing_like_it"]);
    expect(e.message).toBe(
      "--unmeasured names nodes the graph does not have; use the node names as written in the graph file\n" +
        "  U (did you mean u?)\n" +
        "  nothing_like_it",
    );
  });

  it("checkColumns with no columns reports every measured node; with Unicode names it matches exactly", () => {
    expect(errorOf(() => checkColumns(graph, [])).names).toEqual(["age", "sbp", "stroke"]);
    const g = parseGraph("âge -> 血压").graph;
    expect(checkColumns(g, ["血压", "âge"]).ignoredColumns).toEqual([]);
    const e = errorOf(() => checkColumns(g, ["血压", "age"]));
    expect(e.names).toEqual(["âge"]);
    expect(e.message).toContain("âge (did you mean age?)");
  });

  it("checkColumns matches a node to a column written in another Unicode form (NFC against NFD, UAX #15) and lists the pair", () => {
    // regression: the graph's "âge" (U+00E2, NFC) against the file's "âge" (a + U+0302, NFD) gave "âge (did you mean âge?)"
    const nfc = "\u00e2ge";
    const nfd = "a\u0302ge";
    expect(nfc.normalize("NFC")).toBe(nfd.normalize("NFC")); // one name in Unicode's canonical equivalence
    const g = createGraph({ arrows: [[nfc, "sbp"]] });
    const r = checkColumns(g, [nfd, "sbp", "id"]);
    expect(r.ignoredColumns).toEqual(["id"]);
    expect(r.normalised).toEqual([{ node: nfc, column: nfd }]);
    const back = checkColumns(createGraph({ arrows: [[nfd, "sbp"]] }), [nfc, "sbp"]);
    expect(back.normalised).toEqual([{ node: nfd, column: nfc }]);
    expect(checkColumns(g, [nfc, "sbp"]).normalised).toEqual([]);
    // a real typo still gets its suggestion, and a name never suggests its own other form
    expect(errorOf(() => checkColumns(g, ["age", "sbp"])).message).toContain(`${nfc} (did you mean age?)`);
    expect(findClosestNames(nfc, [nfd, "age"])).toEqual(["age"]);
  });

  it("checkColumns does not modify frozen inputs", () => {
    const columns = Object.freeze(["id", "age", "sbp", "stroke"]);
    const unmeasured = Object.freeze(["sbp"]);
    const r = checkColumns(graph, columns, Object.freeze({ unmeasured }));
    expect(columns).toEqual(["id", "age", "sbp", "stroke"]);
    expect(unmeasured).toEqual(["sbp"]);
    expect(r.ignoredColumns).toEqual(["id"]);
  });

  it("checkColumns @example from its doc comment", () => {
    const g = createGraph({ arrows: [["age", "sbp"]] });
    expect(checkColumns(g, ["id", "age", "sbp"]).ignoredColumns).toEqual(["id"]);
  });
});
