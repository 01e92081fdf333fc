import { readFileSync } from "node:fs";
import { fileURLToPath } from "node:url";
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { CycleError, GraphError, InputError } from "../../src/errors.js";
import { parseDot } from "../../src/graph/parseDot.js";
import { parseGraph } from "../../src/graph/parseGraph.js";

// Expected arrow lists below are worked by hand from the DOT language definition
// (Graphviz documentation, "The DOT Language", https://graphviz.org/doc/info/lang.html):
// an edge between subgraphs joins every node of one to every node of the other.

function errorOf(text: string, options: { file?: string } = { file: "g.dot" }): InputError {
  try {
    parseDot(text, options);
  } catch (e) {
    expect(e).toBeInstanceOf(InputError);
    return e as InputError;
  }
  throw new Error(`expected parseDot to throw for ${JSON.stringify(text)}`);
}
const at = (e: InputError) => `${e.line}:${e.column}`;

describe("parseDot accepted subset", () => {
  it("parseDot reads a digraph with chains, optional semicolons and a name", () => {
    const { graph, warnings } = parseDot("digraph cohort {\n  age -> sbp -> stroke;\n  age -> stroke\n}\n");
    expect(graph.nodes).toEqual(["age", "sbp", "stroke"]);
    expect(graph.arrows).toEqual([
      ["age", "sbp"],
      ["sbp", "stroke"],
      ["age", "stroke"],
    ]);
    expect(graph.isMeasured("age")).toBe(true);
    expect(warnings).toEqual([]);
  });

  it("parseDot accepts 'strict', keywords in any case, and a quoted graph name", () => {
    const { graph } = parseDot('STRICT DiGraph "my graph" { a -> b }');
    expect(graph.arrows).toEqual([["a", "b"]]);
  });

  it("parseDot expands subgraph operands on either side and along a chain", () => {
    const { graph } = parseDot("digraph { a -> {b c} -> d; {e; f} -> g }");
    expect(graph.arrows).toEqual([
      ["a", "b"],
      ["a", "c"],
      ["b", "d"],
      ["c", "d"],
      ["e", "g"],
      ["f", "g"],
    ]);
    expect(graph.parents("d")).toEqual(["b", "c"]);
    expect(graph.parents("b")).toEqual(["a"]); // not joined to its neighbour c
  });

  it("parseDot keeps arrows inside a named subgraph and uses all its nodes as an operand", () => {
    const { graph } = parseDot("digraph { subgraph cluster_1 { x -> y; z } -> w; subgraph { p } }");
    expect(graph.nodes).toEqual(["x", "y", "z", "w", "p"]);
    expect(graph.arrows).toEqual([
      ["x", "y"],
      ["x", "w"],
      ["y", "w"],
      ["z", "w"],
    ]);
  });

  it("parseDot uses nested subgraph nodes in the enclosing operand", () => {
    const { graph } = parseDot("digraph { { a { b } } -> c }");
    expect(graph.parents("c")).toEqual(["a", "b"]);
  });

  it("parseDot reads quoted IDs with \\\" escapes, '+' concatenation and line continuation", () => {
    const { graph } = parseDot('digraph { "systolic bp" -> "say \\"hi\\"" ; "ab" + "cd" -> "x\\\ny"; "c:\\\\dir" -> z }');
    // per the DOT definition only \" is an escape; "\\" stays two backslashes
    expect(graph.nodes).toEqual(["systolic bp", 'say "hi"', "abcd", "xy", "c:\\\\dir", "z"]);
  });

  it("parseDot reads numerals as IDs, and keeps them as written", () => {
    const { graph } = parseDot("digraph { 1 -> 2.5 -> -3 -> .5 }");
    expect(graph.nodes).toEqual(["1", "2.5", "-3", ".5"]);
    expect(graph.arrows).toHaveLength(3);
  });

  it("parseDot reads Unicode names bare and quoted", () => {
    const { graph } = parseDot('digraph { âge -> 血压 -> "naïve café" }');
    expect(graph.nodes).toEqual(["âge", "血压", "naïve café"]);
  });

  it("parseDot skips //, /* */ and #-line comments, a BOM and CRLF", () => {
    const text = "\uFEFF# produced by a script\r\n// note\r\ndigraph { /* block\r\n comment */ a -> b // trailing\r\n  # a preprocessor line\r\n b -> c }\r\n";
    const { graph } = parseDot(text);
    expect(graph.arrows).toEqual([
      ["a", "b"],
      ["b", "c"],
    ]);
  });

  it("parseDot ignores attribute statements, graph a=b statements, ports and edge attributes", () => {
    const text = `digraph {
      graph [rankdir=LR]; node [shape=box, color="red"]; edge [color=grey]
      rankdir = TB
      a [label="Age (years)"; shape=ellipse] [color=blue]
      a:n -> b:s:e [weight=2, label="x"]
    }`;
    const { graph, warnings } = parseDot(text);
    expect(graph.nodes).toEqual(["a", "b"]);
    expect(graph.arrows).toEqual([["a", "b"]]);
    expect(warnings).toEqual([]);
  });

  it("parseDot marks nodes with unmeasured=true (bare or quoted) and leaves unmeasured=false measured", () => {
    const text = 'digraph { u [unmeasured=true]; v [unmeasured="true"]; w [unmeasured=false]; u -> a; v -> a; w -> a; lone [unmeasured=TRUE] }';
    const { graph } = parseDot(text);
    expect(graph.isMeasured("u")).toBe(false);
    expect(graph.isMeasured("v")).toBe(false);
    expect(graph.isMeasured("lone")).toBe(false);
    expect(graph.isMeasured("w")).toBe(true);
    expect(graph.isMeasured("a")).toBe(true);
  });

  it("parseDot lets a later unmeasured=false undo an earlier unmeasured=true", () => {
    const { graph } = parseDot("digraph { u [unmeasured=true]; u [unmeasured=false]; u -> a }");
    expect(graph.isMeasured("u")).toBe(true);
  });

  it("parseDot warns instead of silently ignoring meaning-changing attributes", () => {
    const { graph, warnings } = parseDot("digraph {\n node [unmeasured=true]\n a -> b [dir=back]\n b -> c [unmeasured=true]\n c -> d [dir=forward]\n}", { file: "g.dot" });
    expect(graph.arrows).toEqual([
      ["a", "b"],
      ["b", "c"],
      ["c", "d"],
    ]);
    expect(graph.nodes.every((n) => graph.isMeasured(n))).toBe(true);
    expect(warnings).toEqual([
      "g.dot:2: node [unmeasured=true] is ignored; set it on each unmeasured node, e.g. u [unmeasured=true]",
      "g.dot:3: dir=back is ignored; every edge is read as cause -> effect in the order written, so write the arrow that way round",
      "g.dot:4: unmeasured=true on an edge is ignored; set it on each unmeasured node, e.g. u [unmeasured=true]",
    ]);
  });

  it("parseDot warns about a duplicate arrow, but not in a strict digraph", () => {
    expect(parseDot("digraph {\n a -> b\n a -> b }", { file: "g.dot" }).warnings).toEqual([
      "g.dot:3: arrow a -> b is declared twice (first on line 2); the duplicate is ignored",
    ]);
    const strict = parseDot("strict digraph {\n a -> b\n a -> b }");
    expect(strict.warnings).toEqual([]);
    expect(strict.graph.arrows).toEqual([["a", "b"]]);
  });

  it("parseDot gives one warning for an arrow repeated many times (a -> b; a -> b; ...)", () => {
    const w = parseDot(`digraph {\n ${Array(500).fill("a -> b").join("; ")}\n a -> b }`, { file: "g.dot" }).warnings;
    expect(w).toEqual(["g.dot:2: arrow a -> b is declared 501 times (first on line 2, again on lines 2 and 3); the duplicates are ignored"]);
  });

  it("parseDot reads back any name written as a quoted DOT ID with \\\" escapes (property)", () => {
    // a trailing backslash cannot be written in a DOT string before the closing quote, so none here;
    // a name of white space only is refused by design (see "empty node name" below), so none here either
    const anyName = fc.string({ unit: "grapheme", minLength: 1, maxLength: 8 }).filter((s) => !/[\r\n]|\\$/u.test(s) && s.trim() !== "");
    const quote = (s: string) => `"${s.replace(/"/gu, '\\"')}"`;
    fc.assert(
      fc.property(anyName, anyName, (a, b) => {
        fc.pre(a !== b);
        const { graph } = parseDot(`digraph { ${quote(a)} -> ${quote(b)} }`);
        expect(graph.arrows).toEqual([[a, b]]);
      }),
      { numRuns: 200 },
    );
  });

  it("parseDot keeps keywords as names when quoted", () => {
    const { graph } = parseDot('digraph { "node" -> "edge" -> "graph" }');
    expect(graph.nodes).toEqual(["node", "edge", "graph"]);
  });
});

// Each form below is one production of the DOT grammar published by Graphviz ("The DOT Language",
// https://graphviz.org/doc/info/lang.html: graph, stmt_list, stmt, attr_stmt, attr_list, a_list,
// edge_stmt, edgeRHS, node_stmt, node_id, port, subgraph, compass_pt, and the four ID forms);
// a key without '=' in an attribute list is the earlier published a_list, `ID [ '=' ID ]`.
// Expected graphs are worked by hand from those productions.
describe("parseDot reads every attribute and ID form of the DOT grammar", () => {
  it("HTML strings as attribute values: nested angle brackets, quotes, line ends, '//' and '#' inside (regression: label=<<b>x</b>> was refused)", () => {
    const text = [
      "digraph {",
      "  a [label=<<b>x</b>>]",
      '  b [label=<<table border="0"><tr><td port="p">a &#8594; b // not a comment, "not a quote</td></tr>',
      "# still inside",
      "</table>>, shape=plain]",
      "  a -> b [label=<x &lt; y>; xlabel=<>]",
      "}",
    ].join("\n");
    const { graph, warnings } = parseDot(text);
    expect(graph.nodes).toEqual(["a", "b"]);
    expect(graph.arrows).toEqual([["a", "b"]]);
    expect(warnings).toEqual([]);
  });

  it("attribute lists: ',' and ';' and no separator between items, several lists in a row, empty lists, trailing separators", () => {
    const { graph } = parseDot('digraph { a [a=b; c=d, e] [f="g" h=i][] [j=k,]; a -> b [color=red; style=dashed, penwidth=2.5] [] [;,] }');
    expect(graph.arrows).toEqual([["a", "b"]]);
  });

  it("a key without a value is key=true: [unmeasured] marks the node, [e] is ignored", () => {
    const { graph } = parseDot("digraph { u [style=dashed, unmeasured]; v [e]; u -> v }");
    expect(graph.isMeasured("u")).toBe(false);
    expect(graph.isMeasured("v")).toBe(true);
  });

  it("attribute statements graph/node/edge (any letter case) and ID = ID statements with every ID form as key and value", () => {
    const text = 'digraph { GRAPH [label=<<i>cohort</i>>]; Node [shape=box]; edge [arrowhead=vee; color="#336699"]; rankdir=LR; "size"="7.5,7.5"; ratio=.75; label=<t>; a -> b }';
    const { graph, warnings } = parseDot(text);
    expect(graph.arrows).toEqual([["a", "b"]]);
    expect(warnings).toEqual([]);
  });

  it("subgraphs with and without names (bare, quoted, numeral and HTML IDs), nested, as statements and as operands, with statements of their own inside", () => {
    const text = [
      "digraph {",
      "  subgraph cluster_a { label=<A>; rank=same; a1 a2 }",
      '  subgraph "b group" { b1 -> b2 }',
      "  subgraph 7 { c1 }",
      "  subgraph <h> { d1 }",
      "  subgraph { e1 }",
      "  { f1 { f2 { f3 } } }",
      "  subgraph x { a1 a2 } -> subgraph { node [shape=box]; g1 } -> { f3 }",
      "}",
    ].join("\n");
    const { graph } = parseDot(text);
    expect(graph.nodes).toEqual(["a1", "a2", "b1", "b2", "c1", "d1", "e1", "f1", "f2", "f3", "g1"]);
    expect(graph.arrows).toEqual([
      ["b1", "b2"],
      ["a1", "g1"],
      ["a2", "g1"],
      ["g1", "f3"],
    ]);
  });

  it("ports: node:port, node:port:compass, node:compass, with quoted and HTML port IDs; the port is ignored", () => {
    const { graph } = parseDot('digraph { a:p1 -> b:p2:ne; c:sw -> a:"port 1":c; b:<p> -> d:_ ; e:n:s }');
    expect(graph.nodes).toEqual(["a", "b", "c", "d", "e"]);
    expect(graph.arrows).toEqual([
      ["a", "b"],
      ["c", "a"],
      ["b", "d"],
    ]);
  });

  it("IDs: numerals (−.5, 1., 10), quoted strings joined by several '+', escaped quotes, line continuation; compass names are ordinary IDs elsewhere", () => {
    const { graph } = parseDot('digraph { -.5 -> 1. -> 10; "sys" + "tolic" + " bp" -> "a \\"b\\""; "lo\\\nng" -> n; ne -> sw }');
    expect(graph.nodes).toEqual(["-.5", "1.", "10", "systolic bp", 'a "b"', "long", "n", "ne", "sw"]);
  });

  it("subgraphs nested 3,000 and 100,000 deep (braces, named subgraphs, an HTML label) parse without recursion (regression: stack overflow)", () => {
    for (const depth of [3000, 100_000]) {
      const text =
        "digraph { " + "{".repeat(depth) + " a " + "}".repeat(depth) + " -> b; " +
        "subgraph s {".repeat(depth) + " c -> d [label=<" + "<i>".repeat(depth) + "x" + "</i>".repeat(depth) + ">] " + "}".repeat(depth) + " }";
      const { graph } = parseDot(text);
      expect(graph.arrows).toEqual([
        ["a", "b"],
        ["c", "d"],
      ]);
    }
  });

  it("an edge chain through 300 nested subgraphs joins each node to every node inside the next operand", () => {
    const depth = 300;
    let text = "digraph { n0";
    for (let i = 1; i < depth; i++) text += ` -> { n${i}`;
    text += " }".repeat(depth - 1) + " }";
    const { graph } = parseDot(text);
    expect(graph.arrows.length).toBe((depth * (depth - 1)) / 2); // n_i -> n_j for every i < j
    expect([...graph.parents("n3")].sort()).toEqual(["n0", "n1", "n2"]);
  });

  it("a nesting left open names the innermost '{' that is never closed", () => {
    const e = errorOf("digraph {\n { a -> {\n b }");
    expect(at(e)).toBe("2:2");
    expect(e.message).toContain("never closed");
  });
});

describe("parseDot errors and their positions", () => {
  const cases: Array<[string, string, typeof InputError, string, string]> = [
    ["undirected graph", "graph {\n a -- b\n}", InputError, "1:1", "arrowaudit needs a directed graph"],
    ["strict undirected graph", "strict graph { a -- b }", InputError, "1:8", "arrowaudit needs a directed graph"],
    ["undirected edge in a digraph", "digraph {\n  a -- b\n}", InputError, "2:5", "'--' is an undirected edge"],
    ["undirected edge later in a chain", "digraph { a -> b -- c }", InputError, "1:18", "'--' is an undirected edge"],
    ["missing digraph", "a -> b", InputError, "1:1", "expected 'digraph'"],
    ["dangling arrow", "digraph {\n a ->\n}", InputError, "3:1", "expected a node name or '{' after '->'"],
    ["arrow with no cause", "digraph { -> b }", InputError, "1:11", "expected a node name before '->'"],
    ["unclosed brace", "digraph {\n a -> b\n", InputError, "1:9", "never closed"],
    ["unclosed attribute list", "digraph { a [shape=box }", InputError, "1:13", "unclosed '['"],
    ["attribute with '=' but no value", "digraph { a [shape=] }", InputError, "1:20", "expected a value for attribute shape but found ']'"],
    ["attribute list without a name", "digraph { a [=box] }", InputError, "1:14", "expected an attribute name"],
    ["graph attribute without a value", "digraph { rankdir = }", InputError, "1:21", "expected a value for rankdir"],
    ["unterminated HTML-like ID", "digraph { a [label=<<b>x</b>] }", InputError, "1:20", "unterminated HTML-like ID"],
    ["HTML-like ID as a node name later in a chain", "digraph {\n a -> <b> }", InputError, "2:7", "HTML-like IDs '<...>' are read as attribute values, not as node names"],
    ["'+' after an HTML-like ID", 'digraph { a [label=<x> + "y"] }', InputError, "1:24", "'+' may only join two quoted strings"],
    ["unterminated string", 'digraph {\n "a -> b }', InputError, "2:2", "unterminated quoted ID"],
    ["unterminated block comment", "digraph { a /* x", InputError, "1:13", "unterminated comment"],
    ["HTML-like ID", "digraph { <b>x</b> -> y }", InputError, "1:11", "HTML-like IDs"],
    ["digit-led bare name", "digraph { 2hr_glucose -> y }", InputError, "1:11", 'put it in double quotes: "2hr_glucose"'],
    ["keyword as a bare name", "digraph { a -> node }", InputError, "1:16", "expected a node name or '{' after '->'"],
    ["keyword as a bare first name", "digraph { edge -> b }", InputError, "1:11", "'edge' is a DOT keyword"],
    ["second graph", "digraph { a -> b }\ndigraph { c }", InputError, "2:1", "a file holds one digraph"],
    ["nested digraph", "digraph { digraph { a } }", InputError, "1:11", "a nested group is written 'subgraph name"],
    ["bad unmeasured value", "digraph { u [unmeasured=maybe] }", InputError, "1:25", "write unmeasured=true or unmeasured=false"],
    ["unicode arrow", "digraph { a → b }", InputError, "1:13", "write '->'"],
    ["stray character", "digraph { a -> b; @ }", InputError, "1:19", "unexpected character '@'"],
    ["empty quoted name", 'digraph { a -> " " }', InputError, "1:16", "empty node name"],
    ["self-arrow", "digraph {\n a -> a\n}", GraphError, "2:4", "self-arrow a -> a"],
    ["self-arrow through subgraphs", "digraph { {a b} -> {b c} }", GraphError, "1:17", "self-arrow b -> b"],
  ];
  for (const [title, text, Kind, where, fragment] of cases) {
    it(`parseDot reports ${title} at ${where}`, () => {
      const e = errorOf(text);
      expect(e).toBeInstanceOf(Kind);
      expect(at(e)).toBe(where);
      expect(e.file).toBe("g.dot");
      expect(e.message.startsWith(`g.dot:${where}: `)).toBe(true);
      expect(e.message).toContain(fragment);
    });
  }

  it("parseDot throws GraphError for a digraph with no nodes", () => {
    for (const text of ["digraph {}", "digraph { node [shape=box]; rankdir=LR }", "digraph { {} }"]) {
      const e = errorOf(text);
      expect(e).toBeInstanceOf(GraphError);
      expect(e.message).toBe("g.dot: the digraph has no nodes; write at least one arrow such as exposure -> outcome");
    }
  });

  it("parseDot throws CycleError pointing at the arrow that closes the cycle", () => {
    const e = errorOf("digraph {\n  a -> b\n  b -> {c d}\n  d -> a\n}");
    expect(e).toBeInstanceOf(CycleError);
    expect((e as CycleError).cycle).toEqual(["a", "b", "d", "a"]);
    expect(at(e)).toBe("4:5");
  });

  it("parseDot counts columns in code points, and lines across CRLF", () => {
    expect(at(errorOf("digraph {\r\n 血压 -- b }"))).toBe("2:5");
  });
});

describe("parseDot golden messages (one per message shape)", () => {
  const golden: Array<[string, string]> = [
    [
      "graph { a -- b }",
      "g.dot:1:1: this is an undirected graph; arrowaudit needs a directed graph, so write 'digraph' and use '->' for each arrow\n  graph { a -- b }\n  ^",
    ],
    [
      "digraph { a -- b }",
      "g.dot:1:13: '--' is an undirected edge; arrowaudit needs directed arrows, so write '->' from cause to effect\n  digraph { a -- b }\n              ^",
    ],
    [
      "digraph { a -> }",
      "g.dot:1:16: expected a node name or '{' after '->' but found '}'; write the name of the caused variable, or remove the arrow\n  digraph { a -> }\n                 ^",
    ],
    [
      "digraph { a -> b\n b -> a }",
      "g.dot:2:4: cycle: a -> b -> a; a variable cannot precede itself in time, so remove or reverse one of these arrows (the arrow b -> a here closes the cycle)\n   b -> a }\n     ^",
    ],
  ];
  for (const [text, message] of golden) {
    it(`parseDot message for ${JSON.stringify(text)}`, () => {
      expect(errorOf(text).message).toBe(message);
    });
  }

  it("parseDot says line and column without a file name", () => {
    const e = errorOf("digraph { a -- b }", {});
    expect(e.file).toBeUndefined();
    expect(e.message.split("\n")[0]).toMatch(/^line 1, column 13: '--' is an undirected edge/u);
  });
});

describe("parseDot documentation", () => {
  it("parseDot @example from its doc comment", () => {
    const { graph } = parseDot("digraph { age -> {sbp smoking} -> stroke; u [unmeasured=true, label=<<b>U</b>>]; u -> sbp }");
    expect(graph.parents("stroke")).toEqual(["sbp", "smoking"]);
    expect(graph.isMeasured("u")).toBe(false);
  });
});

describe("docs/graph-format.md examples", () => {
  const doc = readFileSync(fileURLToPath(new URL("../../docs/graph-format.md", import.meta.url)), "utf8");
  const blocks = (lang: string) => [...doc.matchAll(new RegExp("```" + lang + "\\n([\\s\\S]*?)```", "gu"))].map((m) => m[1]!);

  it("the arrows-format and DOT examples in the docs describe the same graph", () => {
    const arrows = parseGraph(blocks("text")[0]!).graph;
    const dot = parseDot(blocks("dot")[0]!).graph;
    const sorted = (g: typeof arrows) => g.arrows.map(([a, b]) => `${a} -> ${b}`).sort();
    expect(sorted(dot)).toEqual(sorted(arrows).filter((a) => a !== "statin -> stroke"));
    expect(arrows.isMeasured("frailty")).toBe(false);
    expect(dot.isMeasured("frailty")).toBe(false);
    expect(arrows.bidirected).toEqual([["statin", "stroke"]]);
    expect(arrows.hasNode("2hr_glucose")).toBe(true);
  });

  it("the error example in the docs is the message parseGraph gives", () => {
    const shown = blocks("text").find((b) => b.startsWith("graph.txt:"))!.trimEnd();
    expect(() => parseGraph("a -> b\nc\nb ->", { file: "graph.txt" })).toThrow(shown);
  });
});
