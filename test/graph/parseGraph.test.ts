import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { CycleError, GraphError, InputError } from "../../src/errors.js";
import {
  createGraphWithSites,
  displayName,
  formatSourceLocation,
  formatSourceSnippet,
  parseGraph,
  sourceError,
  splitSourceLines,
} from "../../src/graph/parseGraph.js";

/** Parse and return the thrown error (fails the test when nothing is thrown). */
function errorOf(text: string, options: { file?: string } = { file: "graph.txt" }): InputError {
  try {
    parseGraph(text, options);
  } catch (e) {
    expect(e).toBeInstanceOf(InputError);
    return e as InputError;
  }
  throw new Error(`expected parseGraph to throw for ${JSON.stringify(text)}`);
}

/** The line:column an error reports, as "line:column". */
const at = (e: InputError) => `${e.line}:${e.column}`;

describe("parseGraph constructs", () => {
  it("parseGraph reads a single arrow, a chain and keeps first-appearance node order", () => {
    const { graph, warnings } = parseGraph("a -> b\nc -> d -> e\n");
    expect(graph.nodes).toEqual(["a", "b", "c", "d", "e"]);
    expect(graph.arrows).toEqual([
      ["a", "b"],
      ["c", "d"],
      ["d", "e"],
    ]);
    expect(graph.parents("e")).toEqual(["d"]);
    expect(graph.parents("c")).toEqual([]);
    expect(warnings).toEqual([]);
  });

  it("parseGraph expands lists: every left name to every right name, along a chain of lists", () => {
    const { graph } = parseGraph("a, b -> c, d -> e");
    expect(graph.arrows).toEqual([
      ["a", "c"],
      ["a", "d"],
      ["b", "c"],
      ["b", "d"],
      ["c", "e"],
      ["d", "e"],
    ]);
    // not an arrow between names of the same list
    expect(graph.parents("b")).toEqual([]);
    expect(graph.children("c")).toEqual(["e"]);
  });

  it("parseGraph reads <-> as a shared unmeasured cause, in chains and lists, without adding arrows", () => {
    const { graph } = parseGraph("x <-> y <-> z\np, q <-> r\nx -> r");
    expect(graph.bidirected).toEqual([
      ["x", "y"],
      ["y", "z"],
      ["p", "r"],
      ["q", "r"],
    ]);
    expect(graph.arrows).toEqual([["x", "r"]]);
    expect(graph.spouses("y")).toEqual(["x", "z"]);
    expect(graph.parents("y")).toEqual([]);
  });

  it("parseGraph mixes -> and <-> in one chain", () => {
    const { graph } = parseGraph("a -> b <-> c");
    expect(graph.arrows).toEqual([["a", "b"]]);
    expect(graph.bidirected).toEqual([["b", "c"]]);
  });

  it("parseGraph marks unmeasured nodes declared before, after, or only in unmeasured:", () => {
    const text = "unmeasured: u, w\nu -> a -> b\nv -> b\nUNMEASURED: v\n";
    const { graph } = parseGraph(text);
    expect(graph.nodes).toEqual(["u", "w", "a", "b", "v"]);
    expect(graph.isMeasured("u")).toBe(false);
    expect(graph.isMeasured("v")).toBe(false);
    expect(graph.isMeasured("w")).toBe(false); // isolated unmeasured node
    expect(graph.hasNode("w")).toBe(true);
    expect(graph.parents("w")).toEqual([]);
    expect(graph.isMeasured("a")).toBe(true);
    expect(graph.isMeasured("b")).toBe(true);
  });

  it("parseGraph reads a lone name as an isolated node and a bare list as several", () => {
    const { graph } = parseGraph("lonely\na -> b\nc, d\n");
    expect(graph.nodes).toEqual(["lonely", "a", "b", "c", "d"]);
    expect(graph.parents("lonely")).toEqual([]);
    expect(graph.children("lonely")).toEqual([]);
    expect(graph.arrows).toEqual([["a", "b"]]);
  });

  it("parseGraph reads double-quoted names with spaces, symbols and the \\\" and \\\\ escapes", () => {
    const { graph } = parseGraph('"systolic bp" -> stroke\n"a \\"b\\" \\\\ c" -> "x-y (mmHg)"\n"#not a comment" -> stroke');
    expect(graph.nodes).toEqual(["systolic bp", "stroke", 'a "b" \\ c', "x-y (mmHg)", "#not a comment"]);
    expect(graph.parents("stroke")).toEqual(["systolic bp", "#not a comment"]);
  });

  it("parseGraph treats a quoted name and the same bare name as one node", () => {
    const { graph } = parseGraph('age -> "age2"\n"age" -> sbp');
    expect(graph.nodes).toEqual(["age", "age2", "sbp"]);
  });

  it("parseGraph accepts names starting with digits, with dots, and Unicode letters", () => {
    const { graph } = parseGraph("2hr_glucose -> hba1c.v2\nâge -> 血压 -> Ψ_1\nnaïve -> café");
    expect(graph.nodes).toEqual(["2hr_glucose", "hba1c.v2", "âge", "血压", "Ψ_1", "naïve", "café"]);
    expect(graph.parents("血压")).toEqual(["âge"]);
  });

  it("parseGraph keeps decomposed (combining-mark) names as written, without normalising", () => {
    const decomposed = "cafe\u0301"; // e + combining acute accent
    const { graph } = parseGraph(`${decomposed} -> x`);
    expect(graph.nodes).toEqual([decomposed, "x"]);
    expect(graph.hasNode("caf\u00e9")).toBe(false);
  });

  it("parseGraph skips comment lines, trailing comments and blank lines; '#' inside quotes is text", () => {
    const text = "# a comment\n\n   \na -> b   # why\n\t# indented comment\n\"c#1\" -> b #\n";
    const { graph } = parseGraph(text);
    expect(graph.arrows).toEqual([
      ["a", "b"],
      ["c#1", "b"],
    ]);
  });

  it("parseGraph tolerates a BOM, CRLF and lone CR line ends, tabs and trailing spaces", () => {
    const text = "\uFEFFa\t->\tb   \r\nb -> c\t\r\n\r\nc ->d\rx";
    const { graph } = parseGraph(text);
    expect(graph.nodes).toEqual(["a", "b", "c", "d", "x"]);
    expect(graph.arrows).toEqual([
      ["a", "b"],
      ["b", "c"],
      ["c", "d"],
    ]);
  });

  it("parseGraph gives the same graph for LF and CRLF versions of a file (property)", () => {
    const name = fc.stringMatching(/^[a-z][a-z0-9_]{0,5}$/u);
    fc.assert(
      fc.property(fc.array(fc.tuple(name, name), { minLength: 1, maxLength: 8 }), (pairs) => {
        const edges = pairs.filter(([a, b]) => a < b); // a < b keeps it acyclic
        fc.pre(edges.length > 0);
        const lf = edges.map(([a, b]) => `${a} -> ${b}`).join("\n");
        const g1 = parseGraph(lf).graph;
        const g2 = parseGraph("\uFEFF" + lf.replace(/\n/gu, "  \r\n") + "\r\n").graph;
        expect(g2.nodes).toEqual(g1.nodes);
        expect(g2.arrows).toEqual(g1.arrows);
      }),
      { numRuns: 100 },
    );
  });

  it("parseGraph reads back any name written with displayName, including spaces, quotes and backslashes (property)", () => {
    const anyName = fc.string({ unit: "grapheme", minLength: 1, maxLength: 8 }).filter((s) => s.trim() !== "" && !/[\r\n]/u.test(s));
    fc.assert(
      fc.property(anyName, anyName, (a, b) => {
        fc.pre(a !== b);
        const { graph } = parseGraph(`${displayName(a)} -> ${displayName(b)} # comment`);
        expect(graph.arrows).toEqual([[a, b]]);
      }),
      { numRuns: 200 },
    );
  });

  it("parseGraph treats a keyword-like name without ':' as a node", () => {
    const { graph } = parseGraph("unmeasured -> b");
    expect(graph.nodes).toEqual(["unmeasured", "b"]);
    expect(graph.isMeasured("unmeasured")).toBe(true);
  });
});

describe("parseGraph warnings", () => {
  it("parseGraph warns about a duplicate arrow, naming both lines, and keeps one copy", () => {
    const { graph, warnings } = parseGraph("a -> b\nc -> d\nx\ny\na, c -> b", { file: "graph.txt" });
    expect(graph.arrows).toEqual([
      ["a", "b"],
      ["c", "d"],
      ["c", "b"],
    ]);
    expect(warnings).toEqual(["graph.txt:5: arrow a -> b is declared twice (first on line 1); the duplicate is ignored"]);
  });

  it("parseGraph warns about a shared cause declared twice in either order and about repeated unmeasured names", () => {
    const { graph, warnings } = parseGraph("a <-> b\nb <-> a\nunmeasured: u\nunmeasured: u\nu -> a");
    expect(graph.bidirected).toEqual([["a", "b"]]);
    expect(warnings).toEqual([
      "line 2: shared cause b <-> a is declared twice (first on line 1); the duplicate is ignored",
      "line 4: u is declared unmeasured twice (first on line 3); the duplicate is ignored",
    ]);
  });

  it("parseGraph gives one warning per repeated declaration, with a count, however often it repeats", () => {
    // 2,000 copies of one arrow on one line once printed 1,999 warnings
    const { graph, warnings } = parseGraph(`c -> d\na -> ${Array(2000).fill("b").join(", ")}\nc -> d\nc -> d\nx <-> y\ny <-> x\nx <-> y`, { file: "g.txt" });
    expect(graph.arrows).toEqual([["c", "d"], ["a", "b"]]);
    expect(warnings).toEqual([
      "g.txt:2: arrow a -> b is declared 2,000 times (first on line 2, again on line 2); the duplicates are ignored",
      "g.txt:3: arrow c -> d is declared 3 times (first on line 1, again on lines 3 and 4); the duplicates are ignored",
      "g.txt:6: shared cause y <-> x is declared 3 times (first on line 5, again on lines 6 and 7); the duplicates are ignored",
    ]);
    const many = parseGraph(Array(9).fill("a -> b").join("\n")).warnings;
    expect(many).toEqual(["line 2: arrow a -> b is declared 9 times (first on line 1, again on lines 2, 3, 4, 5, 6 and 3 more); the duplicates are ignored"]);
  });

  it("parseGraph: a node named like a placeholder is printed as written in a collapsed warning", () => {
    const { warnings } = parseGraph('"{n}" -> b\n"{n}" -> b\n"{n}" -> b');
    expect(warnings).toEqual(['line 2: arrow "{n}" -> b is declared 3 times (first on line 1, again on lines 2 and 3); the duplicates are ignored']);
  });

  it("parseGraph gives no warning for an arrow and a shared cause between the same pair", () => {
    const { graph, warnings } = parseGraph("a -> b\na <-> b");
    expect(warnings).toEqual([]);
    expect(graph.arrows).toEqual([["a", "b"]]);
    expect(graph.bidirected).toEqual([["a", "b"]]);
  });
});

describe("parseGraph errors and their positions", () => {
  // Each row: input, expected class, line:column, and a fragment of the message.
  const cases: Array<[string, string, typeof InputError, string, string]> = [
    ["unterminated quote", 'a -> b\n"systolic bp -> c', InputError, "2:1", "unterminated quoted name"],
    ["dangling arrow", "a -> b\nb ->", InputError, "2:5", "expected a node name after '->'"],
    ["dangling arrow before a comment", "a -> # todo", InputError, "1:5", "expected a node name after '->'"],
    ["dangling shared-cause arrow", "a <->", InputError, "1:6", "expected a node name after '<->'"],
    ["arrow with no cause", "-> b", InputError, "1:1", "expected a node name before '->'"],
    ["trailing comma", "a, -> b", InputError, "1:4", "expected a node name after ','"],
    ["double arrow", "a -> -> b", InputError, "1:6", "expected a node name after '->'"],
    ["=> arrow", "a => b", InputError, "1:3", "unknown arrow '=>'; write '->'"],
    ["-- arrow", "x\n  a -- b", InputError, "2:5", "unknown arrow '--'; write '->'"],
    ["--> arrow", "a --> b", InputError, "1:3", "unknown arrow '-->'"],
    ["<=> arrow", "a <=> b", InputError, "1:3", "write '<->'"],
    ["unicode arrow", "a → b", InputError, "1:3", "write '->' with plain keyboard characters"],
    ["typographic quote", "\u201Csbp\u201D -> b", InputError, "1:1", "typographic quote"],
    ["hyphen in a bare name", "sbp-0 -> b", InputError, "1:4", 'put the name in double quotes: "sbp-0"'],
    ["semicolon", "a -> b;", InputError, "1:7", "unexpected ';'"],
    ["unknown character", "a -> b@c", InputError, "1:7", "unexpected character '@'"],
    ["reversed arrow", "b <- a", InputError, "1:3", "reversed arrow '<-' is not supported; write the cause first with '->': a -> b"],
    ["two names without an operator", "blood pressure -> stroke", InputError, "1:7", 'e.g. "blood pressure"'],
    ["unknown keyword", "a -> b\nlatent: u", InputError, "2:1", 'unknown keyword "latent:"; the keywords are "unmeasured:", "period:" and "fixed:"'],
    ["empty unmeasured list", "unmeasured:   ", InputError, "1:12", 'expected a node name after "unmeasured:"'],
    ["arrow in the unmeasured list", "unmeasured: u -> a", InputError, "1:15", "separate names with commas"],
    ["stray colon", "a -> b: c", InputError, "1:7", "unexpected ':'"],
    ["bad escape", '"a\\n" -> b', InputError, "1:3", "unknown escape '\\n'"],
    ["empty quoted name", 'a -> ""', InputError, "1:6", "empty quoted name"],
    ["self-arrow", "a -> b\nb -> b", GraphError, "2:3", "self-arrow b -> b"],
    ["self-arrow through lists", "a, b -> c, a", GraphError, "1:6", "self-arrow a -> a"],
    ["self shared cause", "a <-> a", GraphError, "1:3", "a <-> a joins a variable to itself"],
  ];
  for (const [title, text, Kind, where, fragment] of cases) {
    it(`parseGraph reports ${title} at ${where}`, () => {
      const e = errorOf(text);
      expect(e).toBeInstanceOf(Kind);
      expect(at(e)).toBe(where);
      expect(e.file).toBe("graph.txt");
      expect(e.message.startsWith(`graph.txt:${where}: `)).toBe(true);
      expect(e.message).toContain(fragment);
    });
  }

  it("parseGraph counts columns in code points and after tabs and a BOM", () => {
    expect(at(errorOf("\uFEFFa -> "))).toBe("1:5");
    expect(at(errorOf("血压 => b"))).toBe("1:4");
    expect(at(errorOf("\ta\t->"))).toBe("1:6");
  });

  it("parseGraph counts lines across CRLF and CR line ends", () => {
    expect(at(errorOf("a -> b\r\nb -> c\r\nc =>"))).toBe("3:3");
    expect(at(errorOf("a -> b\rb -> c\rc =>"))).toBe("3:3");
  });

  it("parseGraph throws GraphError for a file with only comments and blank lines, and for an empty string", () => {
    for (const text of ["", "\n\n", "# nothing here\n   # still nothing\n", "\uFEFF"]) {
      const e = errorOf(text);
      expect(e).toBeInstanceOf(GraphError);
      expect(e.message).toMatch(/^graph\.txt: the graph is empty/u);
    }
  });

  it("parseGraph throws CycleError listing the cycle and pointing at the arrow that closes it", () => {
    const e = errorOf("# demo\nage -> sbp\nsbp -> stroke\nx -> y\nstroke -> age\n");
    expect(e).toBeInstanceOf(CycleError);
    const c = e as CycleError;
    expect(c.cycle).toEqual(["age", "sbp", "stroke", "age"]);
    expect(at(c)).toBe("5:8");
    expect(c.message).toContain("cycle: age -> sbp -> stroke -> age");
  });

  it("parseGraph finds a two-node cycle declared on one line", () => {
    const e = errorOf("a -> b -> a");
    expect(e).toBeInstanceOf(CycleError);
    expect((e as CycleError).cycle).toEqual(["a", "b", "a"]);
    expect(at(e)).toBe("1:8");
  });

  it("parseGraph says line and column without a file name", () => {
    const e = errorOf("a =>", {});
    expect(e.file).toBeUndefined();
    expect(e.message.split("\n")[0]).toBe("line 1, column 3: unknown arrow '=>'; write '->' for a direct cause (or '<->' for a shared unmeasured cause)");
  });

  it("parseGraph error messages start lower case, have no final period, and end with the line and a caret", () => {
    const texts = ['"a', "a ->", "a => b", "latent: u", "a -> a", "b <- a", "a -> b\nb -> a"];
    for (const t of texts) {
      const e = errorOf(t);
      const [head, source, caret] = e.message.split("\n");
      const what = head!.slice(head!.indexOf(": ") + 2);
      expect(what[0]).toBe(what[0]!.toLowerCase());
      expect(head!.endsWith(".")).toBe(false);
      expect(source).toBe("  " + t.split("\n")[e.line! - 1]!.trimEnd());
      expect(caret).toBe("  " + " ".repeat(e.column! - 1) + "^");
    }
  });
});

describe("parseGraph golden messages (one per message shape)", () => {
  // Regenerate by hand if the wording changes on purpose; these pin the exact shape users see.
  const golden: Array<[string, string]> = [
    [
      "a -> b\n  a -> ",
      "graph.txt:2:7: expected a node name after '->'; write the name of the caused variable, or remove the arrow\n    a ->\n        ^",
    ],
    ['"sbp -> a', `graph.txt:1:1: unterminated quoted name; add the closing '"' on the same line\n  "sbp -> a\n  ^`],
    ["a => b", "graph.txt:1:3: unknown arrow '=>'; write '->' for a direct cause (or '<->' for a shared unmeasured cause)\n  a => b\n    ^"],
    [
      "Latent: u",
      'graph.txt:1:1: unknown keyword "Latent:"; the keywords are "unmeasured:", "period:" and "fixed:" (put a node name that contains \':\' in double quotes)\n  Latent: u\n  ^',
    ],
    ["x -> x", "graph.txt:1:3: self-arrow x -> x: a variable cannot cause itself; remove x from one side of the arrow\n  x -> x\n    ^"],
    ["y <- x", "graph.txt:1:3: reversed arrow '<-' is not supported; write the cause first with '->': x -> y\n  y <- x\n    ^"],
    [
      "a -> b\nb -> a",
      "graph.txt:2:3: cycle: a -> b -> a; a variable cannot precede itself in time, so remove or reverse one of these arrows (the arrow b -> a here closes the cycle)\n  b -> a\n    ^",
    ],
    ["# only a comment", 'graph.txt: the graph is empty (no statements, only blank lines or comments); write at least one arrow such as "exposure -> outcome" or one node name'],
  ];
  for (const [text, message] of golden) {
    it(`parseGraph message for ${JSON.stringify(text.split("\n").pop())}`, () => {
      expect(errorOf(text).message).toBe(message);
    });
  }

  it("parseGraph warning golden shape", () => {
    expect(parseGraph("a -> b\n\n\n\na -> b", { file: "graph.txt" }).warnings).toEqual([
      "graph.txt:5: arrow a -> b is declared twice (first on line 1); the duplicate is ignored",
    ]);
  });
});

describe("formatSourceSnippet", () => {
  it("formatSourceSnippet copies tabs before the caret so both lines line up", () => {
    expect(formatSourceSnippet("\ta\t-> ", 5)).toBe("  \ta\t->\n  \t \t ^");
  });
});

describe("parseGraph input handling", () => {
  it("parseGraph does not change a frozen options object and returns a fresh warnings array", () => {
    const options = Object.freeze({ file: "g.txt" });
    const a = parseGraph("a -> b\na -> b", options);
    const b = parseGraph("a -> b\na -> b", options);
    expect(options).toEqual({ file: "g.txt" });
    expect(a.warnings).not.toBe(b.warnings);
    expect(a.warnings).toEqual(b.warnings);
  });

  it("parseGraph @example from its doc comment", () => {
    const { graph, warnings } = parseGraph("age -> sbp -> stroke\nage -> stroke\n", { file: "g.txt" });
    expect(graph.parents("stroke")).toEqual(["sbp", "age"]);
    expect(warnings).toEqual([]);
  });
});

describe("parseGraph helper examples", () => {
  it("formatSourceLocation, formatSourceSnippet, displayName, splitSourceLines, sourceError and createGraphWithSites @examples", () => {
    expect(formatSourceLocation("g.txt", 3, 7)).toBe("g.txt:3:7");
    expect(formatSourceLocation("g.txt", 3)).toBe("g.txt:3");
    expect(formatSourceLocation(undefined, 3)).toBe("line 3");
    expect(formatSourceSnippet("a => b", 3)).toBe("  a => b\n    ^");
    expect(displayName("systolic bp")).toBe('"systolic bp"');
    expect(displayName("2hr_glucose")).toBe("2hr_glucose");
    expect(splitSourceLines("\uFEFFa\r\nb")).toEqual(["a", "b"]);
    expect(sourceError(InputError, "g.txt", ["a => b"], 1, 3, "unknown arrow '=>'; write '->'").message).toBe(
      "g.txt:1:3: unknown arrow '=>'; write '->'\n  a => b\n    ^",
    );
    expect(createGraphWithSites({ arrows: [["a", "b"]] }, [{ from: "a", to: "b", line: 1, column: 3 }], "g.txt", ["a -> b"]).arrows).toEqual([["a", "b"]]);
  });
});
