/**
 * The catalogue's cases of extreme numbers, hostile names and deep graphs (section 12 of
 * test/cli/catalogue.test.ts, which runs them with its invariants): each the arguments, the files
 * they read, the exit code the README documents (0 success, 2 invalid input; never 10, an
 * internal error) and a fragment the output must hold (and, where a bug printed one, a fragment
 * it must not). Each case names the bug it pins.
 */

/** An invented cohort of 200 rows: z, x = z + noise, y = z² + noise, w noise (seeded LCG). */
function cohortCsv(edit: (row: { x: number; y: number; z: number; w: number }, i: number) => void = () => {}, header = "x,y,z,w"): string {
  let s = 20260115;
  const u = () => ((s = (s * 16807) % 2147483647) / 2147483647);
  const noise = () => u() + u() + u() - 1.5;
  const lines = [header];
  for (let i = 0; i < 200; i++) {
    const z = 2 * noise();
    const row = { x: z + noise(), y: z * z + noise(), z, w: noise() };
    edit(row, i);
    lines.push([row.x, row.y, row.z, row.w].map((v) => String(v)).join(","));
  }
  return lines.join("\n") + "\n";
}

const GRAPH = "z -> x\nz -> y\nw\n";
const HOSTILE_GRAPH = "constructor -> __proto__\nconstructor -> toString\nvalueOf\n";
const at = (v: number) => (row: { x: number }, i: number) => void (i === 13 && (row.x = v));

export interface ExtremeCase {
  /** What the case checks, and the bug it pins. */
  name: string;
  argv: string[];
  files: Record<string, string>;
  code: number;
  fragment: string;
  absent?: string;
}

const extremes = [1e155, 1e200, -1e308, 1.7e308];
const methods = ["auto", "linear", "rank", "chisq", "regression"];

export const EXTREME_CASES: ExtremeCase[] = [
  ...extremes.flatMap((v) =>
    methods.map((m) => ({
      name: `one cell of ${v} with --method ${m} is tested (regression: ${
        m === "linear" ? "exit 10, 'variance of column 0 is Infinity'" : m === "rank" ? "none, mid-ranks were never affected" : "untestable as 'constant' or 'aliased'"
      })`,
      argv: ["test", "g.txt", `x${v}.csv`, "--method", m],
      files: { "g.txt": GRAPH, [`x${v}.csv`]: cohortCsv(at(v)) },
      code: 0,
      fragment: "x ⫫ y | z",
      absent: "constant",
    })),
  ),
  ...methods.map((m) => ({
    name: `z = 1e200 on the row where x is missing leaves x ⫫ y | z as on ordinary data, --method ${m} (regression: contradicted with p < 1e-10, or 'z is constant')`,
    argv: ["test", "g.txt", "left-out.csv", "--method", m, "--csv"],
    files: { "g.txt": GRAPH, "left-out.csv": cohortCsv((r, i) => i === 40 && ((r.x = NaN), (r.z = 1e200))).replace(/^NaN,/mu, ",") },
    code: 0,
    fragment: ',x,y,"[""z""]",199,',
    absent: ",contradicted,",
  })),
  {
    name: "a column of distinct values near 1e-310 is tested, not reported constant (regression: 'w is constant')",
    argv: ["test", "g.txt", "tiny.csv", "--json"],
    files: { "g.txt": GRAPH, "tiny.csv": cohortCsv((r) => void (r.w *= 1e-310)) },
    code: 0,
    fragment: '"x": "w"',
    absent: "constant",
  },
  {
    name: "a whole column near 1e200 and one near 1e-310 with --method regression (regression: exit 10)",
    argv: ["test", "g.txt", "mixed.csv", "--method", "regression", "--csv"],
    files: { "g.txt": GRAPH, "mixed.csv": cohortCsv((r, i) => ((r.y *= 1e200), (r.w *= 1e-310), i === 3 && (r.z = -1e308))) },
    code: 0,
    fragment: "regression-lr",
    absent: "NaN",
  },
  {
    name: "DOT with 3,000 nested braces (regression: stack overflow, exit 10)",
    argv: ["claims", "deep.dot"],
    files: { "deep.dot": "digraph {\n" + "{".repeat(3000) + " a " + "}".repeat(3000) + " -> b\n c\n}\n" },
    code: 0,
    fragment: "a ⫫ c",
  },
  {
    name: "DOT with an HTML-like label and every attribute-list form (regression: label=<<b>x</b>> refused)",
    argv: ["claims", "html.dot"],
    files: { "html.dot": 'digraph {\n  graph [label=<<i>cohort</i>>]\n  a [label=<<b>x</b>>; shape=box, peripheries] [color="red"]\n  a:n -> b:p:sw [penwidth=2]\n  subgraph <g> { c }\n}\n' },
    code: 0,
    fragment: "a ⫫ c",
  },
  {
    name: "DOT with an HTML string as a node name: a clear error at its line and column",
    argv: ["claims", "htmlnode.dot"],
    files: { "htmlnode.dot": "digraph {\n  a -> <b>\n}\n" },
    code: 2,
    fragment: "htmlnode.dot:2:8: HTML-like IDs '<...>' are read as attribute values, not as node names",
  },
  {
    name: "DOT with an unterminated HTML-like ID: a clear error at its '<'",
    argv: ["claims", "open.dot"],
    files: { "open.dot": "digraph {\n  a [label=<<b>x</b>]\n}\n" },
    code: 2,
    fragment: "open.dot:2:12: unterminated HTML-like ID",
  },
  ...methods.map((m) => ({
    name: `node and column names that are properties of every object, --method ${m} (regression: exit 10 'declaredLevels is not iterable')`,
    argv: ["test", "hostile.txt", "hostile.csv", "--method", m, "--csv"],
    files: { "hostile.txt": HOSTILE_GRAPH, "hostile.csv": cohortCsv(() => {}, "__proto__,toString,constructor,valueOf") },
    code: 0,
    fragment: '__proto__,toString,"[""constructor""]"',
  })),
  {
    name: "hostile names in DOT with a report in Markdown",
    argv: ["report", "hostile.dot", "hostile.csv", "--out", "hostile.md"],
    files: { "hostile.dot": 'digraph { constructor -> { "__proto__" toString }; valueOf }', "hostile.csv": cohortCsv(() => {}, "__proto__,toString,constructor,valueOf") },
    code: 0,
    fragment: "report written to",
  },
];
