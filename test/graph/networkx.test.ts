/**
 * Cross-check against networkx (nx.is_d_separator, nx.find_minimal_d_separator,
 * nx.is_minimal_d_separator). With python3 + networkx on the machine the reference answers are
 * computed live by scripts/networkx_check.py; otherwise the committed fixtures in
 * test/fixtures/networkx/ (written by the same script) are used. Test titles say which.
 * Set ARROWAUDIT_NETWORKX=fixtures to force the fixture path.
 */
import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { createGraph } from "../../src/graph/createGraph.js";
import { dSeparated } from "../../src/graph/dSeparated.js";
import { findMinimalSeparator } from "../../src/graph/findMinimalSeparator.js";
import type { Graph } from "../../src/graph/Graph.js";
import { listMinimalSeparators } from "../../src/graph/listMinimalSeparators.js";

interface CaseGraph {
  nodes: string[];
  arrows: [string, string][];
  bidirected: [string, string][];
  unmeasured: string[];
  dsep: { xs: string[]; ys: string[]; given: string[]; separated: boolean }[];
  separators: { x: string; y: string; set: string[] | null }[];
}
interface Cases {
  seed: number;
  networkx: string;
  graphs: CaseGraph[];
}

const root = join(import.meta.dirname, "..", "..");
const script = join(root, "scripts", "networkx_check.py");
const fixture = join(root, "test", "fixtures", "networkx", "cases.json");
// ARROWAUDIT_NETWORKX=fixtures forces the fixture path (to exercise it on a machine with networkx)
const live = process.env.ARROWAUDIT_NETWORKX !== "fixtures" && spawnSync("python3", ["-c", "import networkx"], { encoding: "utf8" }).status === 0;
const work = mkdtempSync(join(tmpdir(), "arrowaudit-nx-"));
afterAll(() => rmSync(work, { recursive: true, force: true }));

function loadCases(): Cases {
  if (!live) return JSON.parse(readFileSync(fixture, "utf8")) as Cases;
  const out = join(work, "cases.json");
  const r = spawnSync("python3", [script, "generate", out], { encoding: "utf8" });
  if (r.status !== 0) throw new Error(`networkx_check.py generate failed: ${r.stderr}`);
  return JSON.parse(readFileSync(out, "utf8")) as Cases;
}

const cases = loadCases();
const source = live ? `live networkx ${cases.networkx}` : `committed fixtures (networkx ${cases.networkx}; python3/networkx unavailable)`;
console.info(`networkx cross-check uses ${source}`);
const graphs: Graph[] = cases.graphs.map((c) => createGraph({ nodes: c.nodes, arrows: c.arrows, bidirected: c.bidirected, unmeasured: c.unmeasured }));
const measuredOf = (g: Graph) => (n: string) => g.isMeasured(n);

describe(`networkx cross-check against ${source}`, () => {
  it("dSeparated matches nx.is_d_separator on every recorded query", () => {
    let count = 0;
    let separated = 0;
    cases.graphs.forEach((c, gi) => {
      for (const q of c.dsep) {
        const got = dSeparated(graphs[gi]!, q.xs, q.ys, q.given);
        expect({ graph: gi, ...q, separated: got }).toEqual({ graph: gi, ...q }); // nx.is_d_separator
        count++;
        if (q.separated) separated++;
      }
    });
    expect(count).toBeGreaterThan(500);
    expect(separated).toBeGreaterThan(100); // both answers are exercised
    expect(count - separated).toBeGreaterThan(100);
  });

  it("findMinimalSeparator agrees with nx.find_minimal_d_separator on existence; ours is minimal and no larger", () => {
    let found = 0;
    let none = 0;
    let smaller = 0;
    cases.graphs.forEach((c, gi) => {
      const g = graphs[gi]!;
      for (const s of c.separators) {
        const ours = findMinimalSeparator(g, s.x, s.y, { restrict: measuredOf(g) });
        const linear = findMinimalSeparator(g, s.x, s.y, { restrict: measuredOf(g), minimum: false });
        expect({ graph: gi, x: s.x, y: s.y, exists: ours !== undefined }).toEqual({ graph: gi, x: s.x, y: s.y, exists: s.set !== null });
        expect(linear === undefined).toBe(s.set === null);
        if (s.set === null) {
          none++;
          continue;
        }
        found++;
        for (const z of [ours!, linear!]) {
          expect(dSeparated(g, [s.x], [s.y], z)).toBe(true);
          for (let i = 0; i < z.length; i++) expect(dSeparated(g, [s.x], [s.y], z.filter((_, j) => j !== i))).toBe(false);
          for (const v of z) expect(g.isMeasured(v)).toBe(true);
        }
        expect(ours!.length).toBeLessThanOrEqual(s.set.length); // ours is minimum, nx's minimal
        if (ours!.length < s.set.length) smaller++;
      }
    });
    expect(found).toBeGreaterThan(100);
    expect(none).toBeGreaterThan(20);
    console.info(`networkx cross-check: ${found} separable pairs (${smaller} with a strictly smaller minimum set than networkx's minimal one), ${none} inseparable`);
  });

  it("listMinimalSeparators lists networkx's minimal set among its own, each of them minimal", () => {
    cases.graphs.forEach((c, gi) => {
      const g = graphs[gi]!;
      for (const s of c.separators) {
        const list = listMinimalSeparators(g, s.x, s.y, { restrict: measuredOf(g), cap: 500 });
        if (s.set === null) {
          expect(list).toEqual({ sets: [], truncated: false });
          continue;
        }
        expect(list.truncated).toBe(false);
        const keys = list.sets.map((z) => JSON.stringify([...z].sort()));
        expect(keys).toContain(JSON.stringify([...s.set].sort())); // nx.find_minimal_d_separator
        for (const z of list.sets.slice(0, 10)) expect(dSeparated(g, [s.x], [s.y], z)).toBe(true);
      }
    });
  });

  it.skipIf(!live)("our minimum and listed sets pass nx.is_d_separator and nx.is_minimal_d_separator (live networkx only)", () => {
    const checks: { graph: number; x: string; y: string; z: string[] }[] = [];
    cases.graphs.forEach((c, gi) => {
      const g = graphs[gi]!;
      for (const s of c.separators) {
        if (s.set === null) continue;
        checks.push({ graph: gi, x: s.x, y: s.y, z: findMinimalSeparator(g, s.x, s.y, { restrict: measuredOf(g) })! });
        for (const z of listMinimalSeparators(g, s.x, s.y, { restrict: measuredOf(g), cap: 5 }).sets) checks.push({ graph: gi, x: s.x, y: s.y, z });
      }
    });
    const file = join(work, "checks.json");
    writeFileSync(file, JSON.stringify({ graphs: cases.graphs, checks }));
    const r = spawnSync("python3", [script, "verify", file], { encoding: "utf8", maxBuffer: 1 << 26 });
    expect(r.status, r.stderr).toBe(0);
    const answers = (JSON.parse(r.stdout) as { answers: [boolean, boolean][] }).answers;
    expect(answers).toHaveLength(checks.length);
    answers.forEach((a, i) => expect({ ...checks[i], answer: a }).toEqual({ ...checks[i], answer: [true, true] }));
  });

  it.skipIf(!live)("the committed fixtures are what the script writes today (live networkx only)", () => {
    const committed = JSON.parse(readFileSync(fixture, "utf8")) as Cases;
    expect(committed.seed).toBe(cases.seed);
    // the graphs depend only on the seed; nx's choice among minimal sets may change between versions
    const shape = (c: Cases) => c.graphs.map(({ nodes, arrows, bidirected, unmeasured }) => ({ nodes, arrows, bidirected, unmeasured }));
    expect(shape(committed)).toEqual(shape(cases));
    if (committed.networkx === cases.networkx) expect(committed).toEqual(cases);
  });
});
