/**
 * Names that are properties of every JavaScript object (`constructor`, `__proto__`, `toString`,
 * ...) as node, column and level names, mixed with random strings: parse (the arrows format and
 * DOT) → claims → audit with every method → every renderer (terminal text, CSV, JSON, Markdown,
 * HTML with its drawings, and the drawing of a result read back from its JSON, as `draw
 * --results` makes it) must run without an internal error and show every name intact where it
 * belongs. Property test (fast-check, the suite's fixed seed: test/setup.ts). The table is built
 * in memory here, so this covers the graph, audit, statistics and report code, not the reader.
 * Regression: such names crashed the audit ("declaredLevels is not iterable") where a plain
 * object served as a map.
 */
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { runAudit } from "../../src/audit/runAudit.js";
import type { AuditSettings } from "../../src/audit/types.js";
import type { Column, Table, VariableType } from "../../src/data/Table.js";
import { parseDot } from "../../src/graph/parseDot.js";
import { displayName, parseGraph } from "../../src/graph/parseGraph.js";
import { csvCell, renderCsv } from "../../src/report/csv.js";
import { escapeXml } from "../../src/report/escapeXml.js";
import { renderHtmlReport } from "../../src/report/renderHtmlReport.js";
import { escapeMarkdown, renderMarkdownReport } from "../../src/report/renderMarkdownReport.js";
import { renderReportSvgs } from "../../src/report/renderReportSvgs.js";
import { chooseLayout, contradictionMarks, layoutGraph } from "../../src/report/layoutGraph.js";
import { renderGraphSvg } from "../../src/report/renderGraphSvg.js";
import { graphSummary } from "../../src/graph/graphSummary.js";
import { renderTestText } from "../../src/report/terminal.js";
import type { ReportContext } from "../../src/report/ReportContext.js";
import { createRng } from "../../src/stats/rng.js";

/** Own or inherited properties of every object (ECMAScript 2024, §20.1.3 Properties of the Object prototype object, and Function.prototype's `prototype`). */
const HOSTILE = [
  "constructor", "__proto__", "toString", "hasOwnProperty", "valueOf", "prototype",
  "isPrototypeOf", "propertyIsEnumerable", "toLocaleString", "__defineGetter__", "__lookupGetter__",
];

/** A name: a hostile one, or a short random one without control characters or surrounding blanks. */
const nameArb = fc.oneof(
  { weight: 3, arbitrary: fc.constantFrom(...HOSTILE) },
  { weight: 1, arbitrary: fc.string({ minLength: 1, maxLength: 6 }).filter((s) => s.trim() === s && s !== "" && !/[\u0000-\u001f\u007f]/u.test(s)) },
);

const TYPES: VariableType[] = ["continuous", "binary", "ordinal", "nominal"];

interface Case {
  names: string[];
  types: VariableType[];
  arrows: Array<[number, number]>;
  unmeasured: number[];
  levels: string[];
  method: AuditSettings["method"];
  dot: boolean;
  seed: number;
}

const caseArb: fc.Arbitrary<Case> = fc
  .uniqueArray(nameArb, { minLength: 3, maxLength: 6 })
  .chain((names) =>
    fc.record({
      names: fc.constant(names),
      types: fc.array(fc.constantFrom(...TYPES), { minLength: names.length, maxLength: names.length }),
      arrows: fc.uniqueArray(
        fc.tuple(fc.nat(names.length - 1), fc.nat(names.length - 1)).filter(([a, b]) => a < b),
        { maxLength: names.length + 1, selector: ([a, b]) => `${a},${b}` },
      ),
      unmeasured: fc.uniqueArray(fc.nat(names.length - 1), { maxLength: 1 }),
      levels: fc.uniqueArray(fc.constantFrom(...HOSTILE, "a", "b"), { minLength: 3, maxLength: 3 }),
      method: fc.constantFrom<AuditSettings["method"]>("auto", "linear", "rank", "chisq", "regression"),
      dot: fc.boolean(),
      seed: fc.nat(1000),
    }),
  );

/** A table built in memory: one column per measured name, of the drawn type, 80 seeded rows. */
function tableOf(c: Case): Table {
  const rng = createRng(c.seed, "hostile names table");
  const rows = 80;
  const columns: Column[] = [];
  c.names.forEach((name, i) => {
    if (c.unmeasured.includes(i)) return;
    const type = c.types[i]!;
    if (type === "continuous") {
      columns.push({ name, type, typeSource: "declared", values: Float64Array.from({ length: rows }, () => rng.nextFloat() * 10), missing: 0 });
      return;
    }
    const k = type === "binary" ? 2 : 3;
    const codes = Int32Array.from({ length: rows }, (_, r) => (r < k ? r : rng.nextInt(k)));
    const levels = type === "ordinal" ? ["1", "2", "3"] : c.levels.slice(0, k);
    const values = Float64Array.from(codes, (code) => (type === "ordinal" ? code + 1 : code));
    columns.push({ name, type, typeSource: "declared", values, codes, levels, missing: 0 });
  });
  const byName = new Map(columns.map((col) => [col.name, col]));
  return { rows, columns, warnings: [], column: (name) => byName.get(name) };
}

/** The graph as text: the arrows format, or DOT with `\"` escapes. */
function graphText(c: Case): string {
  const n = (i: number) => c.names[i]!;
  if (c.dot) {
    const q = (s: string) => `"${s.replace(/"/gu, '\\"')}"`;
    const lines = c.names.map((s, i) => `  ${q(s)}${c.unmeasured.includes(i) ? " [unmeasured=true]" : ""};`);
    for (const [a, b] of c.arrows) lines.push(`  ${q(n(a))} -> ${q(n(b))};`);
    return `digraph {\n${lines.join("\n")}\n}\n`;
  }
  const lines = c.names.map((s) => displayName(s));
  for (const [a, b] of c.arrows) lines.push(`${displayName(n(a))} -> ${displayName(n(b))}`);
  if (c.unmeasured.length) lines.push(`unmeasured: ${c.unmeasured.map((i) => displayName(n(i))).join(", ")}`);
  return lines.join("\n") + "\n";
}

const context: ReportContext = { command: "arrowaudit report g.txt d.csv --out r.html", date: "2026-01-15T09:30:00Z", inputs: [], toolVersion: "test" };

describe("names that are properties of every JavaScript object", () => {
  it("parse → claims → audit → text, CSV, JSON, Markdown and HTML reports: no internal error, every name intact (property)", async () => {
    await fc.assert(
      fc.asyncProperty(caseArb, async (c) => {
        // a backslash cannot end a DOT string before its closing quote, and DOT keeps other backslashes as written
        fc.pre(!c.dot || c.names.every((s) => !s.includes("\\")));
        const { graph } = c.dot ? parseDot(graphText(c)) : parseGraph(graphText(c));
        expect([...graph.nodes].sort()).toEqual([...c.names].sort());
        c.unmeasured.forEach((i) => expect(graph.isMeasured(c.names[i]!)).toBe(false));
        const result = runAudit(graph, tableOf(c), { settings: { method: c.method } });
        const names = new Set(c.names);
        for (const cl of [...result.claims, ...result.untestable]) {
          expect(names.has(cl.x) && names.has(cl.y)).toBe(true);
          for (const g of "given" in cl && cl.given ? cl.given : []) expect(names.has(g)).toBe(true);
        }
        for (const u of result.untestable) expect(u.reason.length).toBeGreaterThan(10);
        // JSON: every name comes back as written
        const json = JSON.parse(JSON.stringify(result)) as typeof result;
        expect(json.claims.map((cl) => [cl.x, cl.y, cl.given])).toEqual(result.claims.map((cl) => [cl.x, cl.y, cl.given]));
        expect(json.variables.map((v) => v.name).sort()).toEqual(c.names.filter((_, i) => !c.unmeasured.includes(i)).sort());
        for (const v of json.variables) if (v.levels) expect(v.levels).toEqual(tableOf(c).column(v.name)!.levels);
        // terminal text, CSV, Markdown and HTML show each tested pair's names
        const text = renderTestText(result, { width: 400 });
        const csv = renderCsv(result);
        const md = renderMarkdownReport(result, context);
        const svgs = await renderReportSvgs(result);
        const html = renderHtmlReport(result, context, svgs);
        for (const cl of result.claims) {
          for (const s of [cl.x, cl.y]) {
            expect(text).toContain(s);
            expect(csv).toContain(csvCell(s));
            expect(md).toContain(escapeMarkdown(s));
            expect(html).toContain(escapeXml(s));
          }
        }
        // the drawing labels every node
        for (const s of c.names) expect(svgs.graph).toContain(escapeXml(s));
        // draw --results: the contradictions of the result read back from its JSON marked on the graph
        const summary = graphSummary(graph);
        const drawn = renderGraphSvg(await layoutGraph(summary, { contradictions: contradictionMarks(json), method: chooseLayout(summary).method }), { title: "Causal graph", standalone: true });
        for (const s of c.names) expect(drawn).toContain(escapeXml(s));
      }),
      { numRuns: 40 },
    );
  });

  it("each hostile name alone as a node, a column and a level of a nominal column: every method and renderer (regression: 'declaredLevels is not iterable')", async () => {
    for (const [i, name] of HOSTILE.entries()) {
      const others = HOSTILE.filter((h) => h !== name).slice(0, 2);
      for (const method of ["auto", "linear", "rank", "chisq", "regression"] as const) {
        const c: Case = { names: [name, ...others], types: ["nominal", "continuous", "ordinal"], arrows: [[1, 0], [1, 2]], unmeasured: [], levels: [name, others[0]!, "b"], method, dot: i % 2 === 0, seed: i };
        const { graph } = c.dot ? parseDot(graphText(c)) : parseGraph(graphText(c));
        const result = runAudit(graph, tableOf(c), { settings: { method } });
        expect(result.claims.length + result.untestable.length).toBe(1);
        const html = renderHtmlReport(result, context, await renderReportSvgs(result));
        expect(html).toContain(escapeXml(name));
        expect(renderMarkdownReport(result, context)).toContain(escapeMarkdown(name));
        expect(renderCsv(result)).toContain(csvCell(name));
      }
    }
  });
});
