/**
 * Golden tests of the command line: each case records the command, stdout, stderr and exit
 * code in test/cli/golden/<name>.txt. Regenerate deliberately with UPDATE_GOLDEN=1.
 */
import { copyFileSync, existsSync, mkdtempSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { runCli } from "../helpers/runCli.js";
import { afterAll, describe, expect, it } from "vitest";

const root = join(import.meta.dirname, "..", "..");
const fixtures = join(root, "test", "fixtures", "cli");
const demo = join(root, "data", "demo");
const work = mkdtempSync(join(tmpdir(), "arrowaudit-cli-"));
for (const f of ["many-separators.txt", "cycle.txt", "syntax.txt", "typo.txt", "chain.txt", "stray.csv", "ragged.csv"]) copyFileSync(join(fixtures, f), join(work, f));
copyFileSync(join(demo, "graph.txt"), join(work, "demo-graph.txt"));
copyFileSync(join(demo, "cohort.csv"), join(work, "demo-cohort.csv"));
afterAll(() => rmSync(work, { recursive: true, force: true }));

async function cli(args: string[], env: Record<string, string> = {}, cwd = work) {
  const r = await runCli(args, { cwd, env });
  const clean = (s: string) => s.split(work).join("<tmp>");
  return { code: r.code, stdout: clean(r.stdout), stderr: clean(r.stderr) };
}

function golden(name: string, args: string[], r: { code: number; stdout: string; stderr: string }) {
  const text = `$ arrowaudit ${args.join(" ")}\n--- exit ${r.code}\n--- stdout\n${r.stdout}--- stderr\n${r.stderr}`;
  const file = join(import.meta.dirname, "golden", `${name}.txt`);
  if (process.env.UPDATE_GOLDEN || !existsSync(file)) writeFileSync(file, text);
  expect(text).toBe(readFileSync(file, "utf8"));
}

const DEMO_OPTS = ["--missing", "-9,999", "--levels", "education=primary|secondary|tertiary"];

describe("arrowaudit CLI (golden)", () => {
  const cases: Array<[string, string[], number]> = [
    ["claims-demo", ["claims", "demo-graph.txt"], 0],
    ["claims-demo-ascii-minimal", ["claims", "demo-graph.txt", "--ascii", "--sets", "minimal"], 0],
    ["claims-demo-json", ["claims", "demo-graph.txt", "--json", "--columns", "demo-cohort.csv"], 0],
    ["test-demo", ["test", "demo-graph.txt", "demo-cohort.csv", ...DEMO_OPTS], 0],
    ["test-demo-fail", ["test", "demo-graph.txt", "demo-cohort.csv", ...DEMO_OPTS, "--quiet", "--fail-on-contradiction"], 3],
    ["test-demo-csv-bh", ["test", "demo-graph.txt", "demo-cohort.csv", ...DEMO_OPTS, "--csv", "--adjust", "bh"], 0],
    ["claims-all-minimal-capped", ["claims", "many-separators.txt", "--sets", "all-minimal", "--max-sets", "2"], 0],
    ["error-cycle", ["claims", "cycle.txt"], 2],
    ["error-syntax", ["claims", "syntax.txt"], 2],
    ["error-typo-columns", ["claims", "typo.txt", "--columns", "stray.csv"], 2],
    ["error-stray-text", ["test", "chain.txt", "stray.csv"], 2],
    ["error-ragged", ["test", "chain.txt", "ragged.csv"], 2],
    ["error-no-file", ["test", "chain.txt", "nothere.csv"], 2],
    ["error-usage-alpha", ["test", "chain.txt", "stray.csv", "--alpha", "2"], 1],
    ["error-usage-unknown-option", ["claims", "chain.txt", "--frobnicate"], 1],
  ];
  for (const [name, args, code] of cases) {
    it(`arrowaudit ${args.join(" ")} → exit ${code}`, async () => {
      const r = await cli(args);
      expect(r.code).toBe(code);
      golden(name, args, r);
    });
  }

  it("arrowaudit test --json prints exactly one JSON document with the contract's fields", async () => {
    const r = await cli(["test", "demo-graph.txt", "demo-cohort.csv", ...DEMO_OPTS, "--json"]);
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.stdout);
    expect(Object.keys(doc)).toEqual(expect.arrayContaining(["data", "variables", "settings", "claims", "untestable", "global"]));
    expect(doc.data).toMatchObject({ file: "demo-cohort.csv", rows: 3000 });
    expect(doc.global.method).toBe("fisher-c");
    expect(doc.claims[0]).toMatchObject({ rank: 1, verdict: "contradicted" });
    // the demo omits activity_days -> crp (data/generate-demo.ts): that pair ranks first
    expect([doc.claims[0].x, doc.claims[0].y].sort()).toEqual(["activity_days", "crp"]);
    expect(doc.claims[0].arrows).toContain("activity_days -> crp");
  });

  it("arrowaudit report --out report.md writes the Markdown report and its drawing, atomically, inputs untouched", async () => {
    const before = readFileSync(join(work, "demo-cohort.csv"));
    const mtime = statSync(join(work, "demo-cohort.csv")).mtimeMs;
    const args = ["report", "demo-graph.txt", "demo-cohort.csv", ...DEMO_OPTS, "--out", "report.md"];
    const r = await cli(args);
    expect(r.code).toBe(0);
    const md = readFileSync(join(work, "report.md"), "utf8");
    const svg = readFileSync(join(work, "report.svg"), "utf8");
    expect(svg.startsWith("<svg")).toBe(true);
    expect(md).toContain("report.svg");
    golden("report-demo-md", args, { ...r, stdout: md });
    expect(readFileSync(join(work, "demo-cohort.csv")).equals(before)).toBe(true);
    expect(statSync(join(work, "demo-cohort.csv")).mtimeMs).toBe(mtime);
    // no temporary files are left behind
    expect(readdirSync(work).filter((f: string) => f.endsWith(".tmp"))).toEqual([]);
  });

  it("arrowaudit draw --results marks every contradicted claim on the drawing (one node per graph node, one connector per arrow)", async () => {
    const t = await cli(["test", "demo-graph.txt", "demo-cohort.csv", ...DEMO_OPTS, "--json"]);
    writeFileSync(join(work, "result.json"), t.stdout);
    const result = JSON.parse(t.stdout);
    const r = await cli(["draw", "demo-graph.txt", "--results", "result.json", "--out", "graph.svg"]);
    expect(r.code).toBe(0);
    const svg = readFileSync(join(work, "graph.svg"), "utf8");
    const count = (re: RegExp) => (svg.match(re) ?? []).length;
    expect(count(/<g class="node (measured|unmeasured)"/g)).toBe(result.graph.nodes.length);
    expect(count(/class="arrow"/g)).toBe(result.graph.arrows.length);
    expect(count(/<g class="contradiction" /g)).toBe(result.claims.filter((c: { verdict: string }) => c.verdict === "contradicted").length);
    expect(svg).not.toMatch(/https?:\/\/(?!www\.w3\.org)/);
    // a result from another graph is refused with a message naming the node
    const bad = await cli(["draw", "chain.txt", "--results", "result.json"]);
    expect(bad.code).toBe(2);
    expect(bad.stderr).toMatch(/not in chain\.txt/);
  });

  it("arrowaudit report --out x.pdf is a usage error (exit 1)", async () => {
    const r = await cli(["report", "chain.txt", "stray.csv", "--out", "x.pdf"]);
    expect(r.code).toBe(1);
    expect(r.stderr).toMatch(/must end in \.html, \.md or \.txt/);
  });

  it("arrowaudit report --out methods.txt writes the methods paragraphs and their references alone, as plain text", async () => {
    const r = await cli(["report", "demo-graph.txt", "demo-cohort.csv", ...DEMO_OPTS, "--out", "methods.txt"]);
    expect(r.code).toBe(0);
    expect(r.stderr).toContain("report written to <tmp>/methods.txt");
    const text = readFileSync(join(work, "methods.txt"), "utf8");
    expect(text.startsWith("Analyses were run with arrowaudit ")).toBe(true);
    expect(text).toContain("\n\nReferences\n\n1. ");
    expect(text).toContain("Of the 34 claims, ");
    expect(text).not.toMatch(/<[a-z]|&(lt|amp);|\*\*|^#/m);
    expect(existsSync(join(work, "methods.svg"))).toBe(false);
  });

  it("arrowaudit test and claims show control characters in names as escapes; an error quoting such a line does too", async () => {
    // regression: ESC/OSC sequences in column names reached the terminal raw and could retitle it or change its colours
    const osc = "b\u001b]0;owned\u0007x";
    const rlo = "c\u202ed";
    writeFileSync(join(work, "hostile.txt"), `a -> "${osc}" -> "${rlo}"\n`);
    const rows = Array.from({ length: 60 }, (_, i) => `${i % 7},${(i * 3) % 11},${(i * 5) % 13}`);
    writeFileSync(join(work, "hostile.csv"), [`a,"${osc}","${rlo}"`, ...rows].join("\n") + "\n");
    const unsafe = /[\u0000-\u0009\u000b-\u001f\u007f-\u009f\u202a-\u202e\u2066-\u2069]/;
    for (const args of [["test", "hostile.txt", "hostile.csv"], ["test", "hostile.txt", "hostile.csv", "--ascii"], ["claims", "hostile.txt"]]) {
      const r = await cli(args);
      expect(r.code, r.stderr).toBe(0);
      expect(unsafe.test(r.stdout + r.stderr), args.join(" ")).toBe(false);
      expect(r.stdout).toContain("\\x1b]0;owned\\x07x");
      expect(r.stdout).toContain("\\u202e");
    }
    writeFileSync(join(work, "hostile-syntax.txt"), `a -> "b\u001b[31mX" ->\n`);
    const bad = await cli(["claims", "hostile-syntax.txt"]);
    expect(bad.code).toBe(2);
    expect(unsafe.test(bad.stderr)).toBe(false);
    const [, line, caret] = bad.stderr.split("\n");
    expect(line).toContain('"b\\x1b[31mX"');
    expect(caret!.indexOf("^")).toBe(line!.length); // still under the end of the line, where the name is missing
  });

  it("arrowaudit test fits the table to COLUMNS and keeps 100 columns for pipes", async () => {
    for (const columns of ["72", "132"]) {
      const r = await cli(["test", "demo-graph.txt", "demo-cohort.csv", ...DEMO_OPTS], { COLUMNS: columns });
      expect(r.code).toBe(0);
      const longest = Math.max(...r.stdout.split("\n").map((l) => [...l].length));
      expect(longest).toBeLessThanOrEqual(Number(columns));
      if (columns === "132") expect(longest).toBeGreaterThan(100);
    }
    const piped = await cli(["test", "demo-graph.txt", "demo-cohort.csv", ...DEMO_OPTS]);
    expect(Math.max(...piped.stdout.split("\n").map((l) => [...l].length))).toBe(100);
  });

  it("arrowaudit demo prints the equivalent test command, which gives the same table when run from the project folder", async () => {
    const r = await cli(["demo", "--out", "demo.md"]);
    expect(r.code).toBe(0);
    const command = "arrowaudit test data/demo/graph.txt data/demo/cohort.csv --missing -9,999 --levels 'education=primary|secondary|tertiary'";
    expect(r.stdout).toContain(`the same audit as a test command:\n  ${command}\n`);
    const md = readFileSync(join(work, "demo.md"), "utf8");
    expect(md).toContain(`**Equivalent test command:** \`${command}\``);
    const same = await cli(["test", "data/demo/graph.txt", "data/demo/cohort.csv", "--missing", "-9,999", "--levels", "education=primary|secondary|tertiary"], {}, root);
    expect(same.code).toBe(0);
    expect(r.stdout.startsWith(same.stdout)).toBe(true);
  });

  it("the demo README names the contradictions the demo run finds (two, from one omitted arrow)", async () => {
    const r = await cli(["test", "demo-graph.txt", "demo-cohort.csv", ...DEMO_OPTS, "--json"]);
    const doc = JSON.parse(r.stdout) as { claims: { x: string; y: string; given: string[]; verdict: string }[] };
    const contradicted = doc.claims.filter((c) => c.verdict === "contradicted");
    const readme = readFileSync(join(demo, "README.md"), "utf8");
    expect(readme).toMatch(/two claims are contradicted/);
    expect(contradicted).toHaveLength(2);
    for (const c of contradicted) expect(readme).toContain(`${c.x} ⫫ ${c.y} | ${c.given.join(", ")}`);
  });
});
