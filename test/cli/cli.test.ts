/**
 * Golden tests of the command line: each case records the command, stdout, stderr and exit
 * code in test/cli/golden/<name>.txt. Regenerate deliberately with UPDATE_GOLDEN=1.
 */
import { copyFileSync, existsSync, mkdtempSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { run } from "../../cli/program.js";
import type { Io } from "../../cli/io.js";

const root = join(import.meta.dirname, "..", "..");
const fixtures = join(root, "test", "fixtures", "cli");
const demo = join(root, "data", "demo");
const work = mkdtempSync(join(tmpdir(), "arrowaudit-cli-"));
for (const f of ["many-separators.txt", "cycle.txt", "syntax.txt", "typo.txt", "chain.txt", "stray.csv", "ragged.csv"]) copyFileSync(join(fixtures, f), join(work, f));
copyFileSync(join(demo, "graph.txt"), join(work, "demo-graph.txt"));
copyFileSync(join(demo, "cohort.csv"), join(work, "demo-cohort.csv"));
afterAll(() => rmSync(work, { recursive: true, force: true }));

async function cli(args: string[], env: Record<string, string> = {}) {
  let stdout = "";
  let stderr = "";
  const io: Io = {
    stdout: (s) => (stdout += s),
    stderr: (s) => (stderr += s),
    stdoutIsTTY: false,
    stderrIsTTY: false,
    env,
    cwd: work,
    now: () => new Date("2026-01-15T09:30:00Z"),
  };
  const code = await run(args, io);
  const clean = (s: string) => s.split(work).join("<tmp>");
  return { code, stdout: clean(stdout), stderr: clean(stderr) };
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
    expect(r.stderr).toMatch(/must end in \.html or \.md/);
  });
});
