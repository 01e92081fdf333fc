import { spawnSync } from "node:child_process";
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { CycleError, GraphError, InputError } from "../../src/errors.js";
import { displayName } from "../../src/graph/parseGraph.js";
import { looksLikeDot, readGraphSource } from "../../src/graph/readGraphSource.js";

const enc = (s: string) => new TextEncoder().encode(s);

function errorOf(bytes: Uint8Array, options: Parameters<typeof readGraphSource>[1] = { file: "g.txt" }): InputError {
  try {
    readGraphSource(bytes, options);
  } catch (e) {
    expect(e).toBeInstanceOf(InputError);
    return e as InputError;
  }
  throw new Error("expected readGraphSource to throw");
}

describe("readGraphSource format choice", () => {
  it("readGraphSource reads arrowaudit's format by default and DOT by extension, option or content", () => {
    expect(readGraphSource(enc("a -> b"), { file: "g.txt" }).graph.arrows).toEqual([["a", "b"]]);
    expect(readGraphSource(enc("digraph { a -> b }"), { file: "g.DOT" }).graph.arrows).toEqual([["a", "b"]]);
    expect(readGraphSource(enc("digraph { a -> b }"), { file: "g.gv" }).graph.arrows).toEqual([["a", "b"]]);
    expect(readGraphSource(enc("digraph { a -> b }"), { file: "g.txt" }).graph.arrows).toEqual([["a", "b"]]);
    expect(readGraphSource(enc("// made by hand\n/* x */ strict digraph G {a->b}"), {}).graph.arrows).toEqual([["a", "b"]]);
    expect(readGraphSource(enc("# comment\n\n  digraph\n{ a -> b }"), {}).graph.arrows).toEqual([["a", "b"]]);
  });

  it("readGraphSource lets format override the extension both ways", () => {
    // "a -> b" is valid in both formats; "digraph" alone is a node name in ours and an error in DOT
    expect(readGraphSource(enc("digraph -> b"), { file: "g.dot", format: "arrows" }).graph.nodes).toEqual(["digraph", "b"]);
    const e = errorOf(enc("a -> b"), { file: "g.txt", format: "dot" });
    expect(e.message).toMatch(/^g\.txt:1:1: expected 'digraph'/u);
  });

  it("readGraphSource sends an undirected DOT graph to the DOT parser, which explains what to do", () => {
    const e = errorOf(enc("graph { a -- b }"));
    expect(e.message).toContain("arrowaudit needs a directed graph");
  });

  it("looksLikeDot recognises DOT openings and rejects graphs in arrowaudit's format that start with the same words", () => {
    for (const t of ["digraph{", "digraph G {", 'DIGRAPH "x y" {', "strict digraph {", "graph {", "\uFEFF  # c\n// d\ndigraph {"]) {
      expect(looksLikeDot(t)).toBe(true);
    }
    for (const t of ["digraph -> b", "graph -> outcome", "digraphs -> b", "a -> b", "# digraph {\nx", "", "unmeasured: graph"]) {
      expect(looksLikeDot(t)).toBe(false);
    }
  });
});

describe("readGraphSource decoding", () => {
  it("readGraphSource drops a UTF-8 BOM and reads multi-byte names", () => {
    const bytes = new Uint8Array([0xef, 0xbb, 0xbf, ...enc("âge -> 血压\r\n")]);
    expect(readGraphSource(bytes, { file: "g.txt" }).graph.nodes).toEqual(["âge", "血压"]);
  });

  it("readGraphSource rejects invalid UTF-8 naming the byte and line", () => {
    // "caf\xe9" is Latin-1 for "café": 0xE9 followed by an ASCII byte is not UTF-8 (RFC 3629)
    const bytes = new Uint8Array([...enc("a -> b\ncaf"), 0xe9, ...enc(" -> b\n")]);
    const e = errorOf(bytes);
    expect(e).not.toBeInstanceOf(GraphError);
    expect(e.message).toBe(
      "g.txt: this is not a text file: byte 10 (line 2) is not valid UTF-8; save the graph as UTF-8 text (files from older editors are often Latin-1 or Windows-1252)",
    );
    expect(e.line).toBe(2);
  });

  it("readGraphSource rejects NUL bytes and UTF-16 text", () => {
    const nul = errorOf(new Uint8Array([...enc("a -> b"), 0, ...enc("c")]));
    expect(nul.message).toBe("g.txt: this is not a text file: byte 6 (line 1) is a NUL byte; give a graph written as UTF-8 text");
    const utf16 = new Uint8Array([0xff, 0xfe, 0x61, 0x00, 0x20, 0x00]);
    expect(errorOf(utf16).message).toMatch(/^g\.txt: this is not a text file arrowaudit can read: it is UTF-16 encoded/u);
    // a PNG header
    const png = new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 0x0d]);
    expect(errorOf(png).message).toMatch(/^g\.txt: this is not a text file/u);
  });

  it("readGraphSource says 'the graph input' when there is no file name", () => {
    expect(errorOf(new Uint8Array([0xc3]), {}).message).toMatch(/^the graph input: this is not a text file: byte 0 \(line 1\)/u);
  });

  it("readGraphSource rejects exactly the byte strings the WHATWG UTF-8 decoder rejects (property)", () => {
    // Reference: Node's TextDecoder("utf-8", { fatal: true }) (WHATWG Encoding Standard).
    const reference = (b: Uint8Array) => {
      try {
        new TextDecoder("utf-8", { fatal: true }).decode(b);
        return true;
      } catch {
        return false;
      }
    };
    const interesting = fc.constantFrom(0x61, 0x80, 0xbf, 0xc0, 0xc2, 0xdf, 0xe0, 0xed, 0xef, 0xf0, 0xf4, 0xf5, 0x9f, 0xa0, 0x8f, 0x90, 0xff);
    fc.assert(
      fc.property(fc.array(fc.oneof(interesting, fc.integer({ min: 1, max: 255 })), { minLength: 1, maxLength: 8 }), (arr) => {
        // ASCII bytes kept to letters so that valid input is a valid graph
        const bytes = new Uint8Array([...enc("a -> "), ...arr.filter((x) => x >= 0x80 || (x >= 0x61 && x <= 0x7a))]);
        const valid = reference(bytes);
        let notText = false;
        try {
          readGraphSource(bytes, { file: "g.txt" });
        } catch (e) {
          notText = e instanceof InputError && e.message.includes("is not valid UTF-8");
        }
        expect(notText).toBe(!valid);
      }),
      { numRuns: 500 },
    );
  });

  it("readGraphSource does not modify the bytes it is given", () => {
    const text = "\uFEFFunmeasured: u\nu -> a -> b\n";
    const bytes = enc(text);
    const copy = Uint8Array.from(bytes);
    readGraphSource(bytes, { file: "g.txt" });
    expect(bytes).toEqual(copy);
    const dot = enc("digraph { a -> b }");
    const dotCopy = Uint8Array.from(dot);
    readGraphSource(dot, { file: "g.dot" });
    expect(dot).toEqual(dotCopy);
  });

  it("readGraphSource throws the parser's error with the file name for an empty file", () => {
    const e = errorOf(new Uint8Array(0));
    expect(e).toBeInstanceOf(GraphError);
    expect(e.message).toMatch(/^g\.txt: the graph is empty/u);
  });

  it("readGraphSource @example from its doc comment", () => {
    const bytes = new TextEncoder().encode("digraph { a -> b }");
    expect(readGraphSource(bytes, { file: "g.txt" }).graph.arrows).toEqual([["a", "b"]]);
  });
});

// ---------------------------------------------------------------------------
// Cross-check against networkx: random directed graphs, written in both formats.
// The script below (run with python3 and networkx) produced FIXTURE; the test runs it live
// when python3 with networkx is available and says which source it used.
// ---------------------------------------------------------------------------
const PY_SCRIPT = String.raw`import json, random, networkx as nx
rng = random.Random(20240611)
def canon(c):
    i = c.index(min(c))  # rotate so the smallest name comes first (simple_cycles order depends on hashing)
    return c[i:] + c[:i]
out = []
for k in range(16):
    n = rng.randint(2, 6)
    names = [f"v{i}" for i in range(n)]
    edges = [[a, b] for a in names for b in names if a != b and rng.random() < 0.3]
    if not edges:
        edges = [[names[0], names[1]]]
    g = nx.DiGraph(); g.add_nodes_from(names); g.add_edges_from(edges)
    out.append({"nodes": names, "edges": edges, "isDag": nx.is_directed_acyclic_graph(g),
                "cycles": sorted(canon(c) for c in nx.simple_cycles(g))})
print(json.dumps(out))
`;

interface Case {
  nodes: string[];
  edges: Array<[string, string]>;
  isDag: boolean;
  cycles: string[][];
}

// networkx 3.6.1 is_directed_acyclic_graph and simple_cycles, written by PY_SCRIPT above
const FIXTURE: Case[] = [
  {"nodes":["v0","v1","v2","v3","v4","v5"],"edges":[["v1","v2"],["v2","v5"],["v3","v0"],["v3","v1"],["v3","v2"],["v3","v4"],["v5","v4"]],"isDag":true,"cycles":[]},
  {"nodes":["v0","v1","v2","v3","v4","v5"],"edges":[["v0","v1"],["v0","v2"],["v0","v3"],["v0","v4"],["v0","v5"],["v1","v2"],["v1","v5"],["v3","v4"],["v4","v0"],["v4","v5"],["v5","v2"],["v5","v4"]],"isDag":false,"cycles":[["v0","v1","v5","v4"],["v0","v3","v4"],["v0","v4"],["v0","v5","v4"],["v4","v5"]]},
  {"nodes":["v0","v1","v2","v3","v4","v5"],"edges":[["v0","v1"],["v0","v2"],["v1","v4"],["v2","v0"],["v2","v1"],["v2","v5"],["v3","v1"],["v3","v4"],["v3","v5"],["v4","v3"],["v4","v5"],["v5","v0"],["v5","v4"]],"isDag":false,"cycles":[["v0","v1","v4","v3","v5"],["v0","v1","v4","v5"],["v0","v2"],["v0","v2","v1","v4","v3","v5"],["v0","v2","v1","v4","v5"],["v0","v2","v5"],["v1","v4","v3"],["v3","v4"],["v3","v5","v4"],["v4","v5"]]},
  {"nodes":["v0","v1","v2","v3","v4","v5"],"edges":[["v0","v1"],["v0","v5"],["v2","v3"],["v2","v5"],["v3","v1"],["v4","v2"],["v5","v1"]],"isDag":true,"cycles":[]},
  {"nodes":["v0","v1","v2","v3"],"edges":[["v0","v1"],["v0","v2"],["v1","v0"],["v2","v3"],["v3","v2"]],"isDag":false,"cycles":[["v0","v1"],["v2","v3"]]},
  {"nodes":["v0","v1","v2","v3","v4"],"edges":[["v0","v4"],["v1","v0"],["v1","v4"],["v2","v3"],["v3","v1"],["v3","v2"],["v4","v2"],["v4","v3"]],"isDag":false,"cycles":[["v0","v4","v2","v3","v1"],["v0","v4","v3","v1"],["v1","v4","v2","v3"],["v1","v4","v3"],["v2","v3"]]},
  {"nodes":["v0","v1"],"edges":[["v0","v1"]],"isDag":true,"cycles":[]},
  {"nodes":["v0","v1"],"edges":[["v0","v1"]],"isDag":true,"cycles":[]},
  {"nodes":["v0","v1","v2"],"edges":[["v1","v2"],["v2","v0"],["v2","v1"]],"isDag":false,"cycles":[["v1","v2"]]},
  {"nodes":["v0","v1","v2","v3","v4"],"edges":[["v0","v1"],["v0","v4"],["v1","v3"],["v1","v4"],["v3","v2"]],"isDag":true,"cycles":[]},
  {"nodes":["v0","v1","v2","v3","v4"],"edges":[["v2","v0"],["v2","v3"]],"isDag":true,"cycles":[]},
  {"nodes":["v0","v1","v2","v3","v4","v5"],"edges":[["v0","v1"],["v0","v3"],["v2","v4"],["v2","v5"],["v3","v0"],["v3","v4"],["v4","v0"],["v5","v2"],["v5","v3"]],"isDag":false,"cycles":[["v0","v3"],["v0","v3","v4"],["v2","v5"]]},
  {"nodes":["v0","v1","v2","v3","v4","v5"],"edges":[["v2","v3"],["v2","v4"],["v4","v1"],["v5","v0"],["v5","v2"],["v5","v3"]],"isDag":true,"cycles":[]},
  {"nodes":["v0","v1","v2"],"edges":[["v0","v1"],["v1","v2"]],"isDag":true,"cycles":[]},
  {"nodes":["v0","v1","v2","v3","v4","v5"],"edges":[["v0","v4"],["v1","v3"],["v1","v4"],["v2","v1"],["v3","v1"],["v3","v2"],["v3","v5"],["v4","v1"],["v4","v3"]],"isDag":false,"cycles":[["v1","v3"],["v1","v3","v2"],["v1","v4"],["v1","v4","v3"],["v1","v4","v3","v2"]]},
  {"nodes":["v0","v1","v2","v3"],"edges":[["v0","v1"],["v0","v2"],["v1","v2"],["v2","v0"],["v3","v1"],["v3","v2"]],"isDag":false,"cycles":[["v0","v1","v2"],["v0","v2"]]},
];

function loadCases(): { cases: Case[]; source: string } {
  const run = spawnSync("python3", ["-c", PY_SCRIPT], { encoding: "utf8", timeout: 30_000 });
  if (run.status === 0 && run.stdout.trim() !== "") {
    return { cases: JSON.parse(run.stdout) as Case[], source: "live python3 networkx" };
  }
  return { cases: FIXTURE, source: "committed fixture (python3/networkx unavailable)" };
}
const { cases, source } = loadCases();

/** Rotate a cycle (without its repeated last node) so its smallest name comes first. */
const canonical = (c: readonly string[]) => {
  const i = c.indexOf([...c].sort()[0]!);
  return [...c.slice(i), ...c.slice(0, i)].join(" ");
};

describe(`readGraphSource agrees with networkx on random graphs (${source})`, () => {
  it("the live networkx output matches the committed fixture, when python3 is available", () => {
    if (source.startsWith("live")) expect(cases).toEqual(FIXTURE);
    else console.log("note: python3 with networkx not available; using the committed fixture");
    expect(cases.length).toBe(16);
  });

  for (const format of ["arrows", "dot"] as const) {
    it(`readGraphSource (${format}) accepts exactly the acyclic graphs and reports a true cycle for the others`, () => {
      for (const c of cases) {
        const text =
          format === "arrows"
            ? [...c.nodes.map(displayName), ...c.edges.map(([a, b]) => `${a} -> ${b}`)].join("\n")
            : `digraph {\n${c.nodes.join("; ")}\n${c.edges.map(([a, b]) => `  ${a} -> ${b}`).join("\n")}\n}`;
        const bytes = enc(text);
        if (c.isDag) {
          const { graph } = readGraphSource(bytes, { file: `g.${format === "dot" ? "dot" : "txt"}` });
          expect(graph.nodes).toEqual(c.nodes);
          expect(graph.arrows).toEqual(c.edges);
          // topological order puts every cause before its effect
          for (const [a, b] of c.edges) expect(graph.orderIndex(a)).toBeLessThan(graph.orderIndex(b));
        } else {
          const e = errorOf(bytes, { file: `g.${format === "dot" ? "dot" : "txt"}` });
          expect(e).toBeInstanceOf(CycleError);
          const cycle = (e as CycleError).cycle;
          expect(cycle[0]).toBe(cycle[cycle.length - 1]);
          const known = new Set(c.cycles.map(canonical));
          expect(known.has(canonical(cycle.slice(0, -1)))).toBe(true);
          // the reported line holds an arrow of the cycle
          const lineText = text.split("\n")[e.line! - 1]!.trim();
          const pairs = cycle.slice(0, -1).map((n, i) => `${n} -> ${cycle[i + 1]}`);
          expect(pairs).toContain(lineText);
        }
      }
    });
  }
});

describe("looksLikeDot @example", () => {
  it("looksLikeDot @example from its doc comment", () => {
    expect(looksLikeDot("// exported\ndigraph G {")).toBe(true);
    expect(looksLikeDot("digraph -> b")).toBe(false);
  });
});
