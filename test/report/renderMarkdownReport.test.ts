import { describe, expect, it } from "vitest";
import { escapeMarkdown, renderMarkdownReport } from "../../src/report/renderMarkdownReport.js";
import { hostileResult, sampleResult } from "../fixtures/report/sampleResult.js";
import { count, sampleContext } from "./helpers.js";

/** Split a GFM table row into cells, honouring "\|" escapes (GFM spec §4.10). */
function cells(row: string): string[] {
  return row.replace(/^\|\s?|\s?\|$/g, "").split(/(?<!\\)\|/).map((c) => c.trim());
}

describe("escapeMarkdown", () => {
  it("escapeMarkdown(text) escapes table pipes, emphasis, links and raw HTML", () => {
    // escapes per CommonMark 0.31 §2.4 and GFM §4.10 (from memory)
    expect(escapeMarkdown("a|b")).toBe("a\\|b");
    expect(escapeMarkdown("*x*_y_")).toBe("\\*x\\*\\_y\\_");
    expect(escapeMarkdown("[l](u)")).toBe("\\[l\\](u)");
    expect(escapeMarkdown("<b>&amp;")).toBe("\\<b>\\&amp;"); // raw HTML and an entity reference are neutralised by backslashes (CommonMark §2.4)
    expect(escapeMarkdown("a\nb")).toBe("a b");
    expect(escapeMarkdown("")).toBe("");
    expect(escapeMarkdown("âge ⫫ 体重")).toBe("âge ⫫ 体重");
  });

  it("escapeMarkdown(text) escapes for Markdown, not HTML: '<' and '&' that cannot start markup stay as typed", () => {
    // regression: the methods paragraph showed "p &lt; 0.001" and "Cox &amp; Snell" as text
    // CommonMark 0.31 §6.6: raw HTML needs "<" followed by a letter, "/", "!" or "?"; §2.5: an entity needs "&" then a name or "#"
    expect(escapeMarkdown("p < 0.001, p > 0.999")).toBe("p < 0.001, p > 0.999");
    expect(escapeMarkdown("Cox & Snell")).toBe("Cox & Snell");
    expect(escapeMarkdown("a -> b, a <-> b")).toBe("a -> b, a <-> b");
    expect(escapeMarkdown("R&D")).toBe("R\\&D");
    expect(escapeMarkdown("</p><!-- x --><?php")).toBe("\\</p><\\!-- x -->\\<?php"); // "<\!" cannot open a comment
    expect(escapeMarkdown("> 0.999")).toBe("> 0.999"); // inline: ">" has no meaning there
  });
});

describe("renderMarkdownReport", () => {
  it("renderMarkdownReport has one table row per claim, each with twelve cells (detectable effect and equivalence group added)", () => {
    const r = sampleResult();
    const md = renderMarkdownReport(r, sampleContext());
    const lines = md.split("\n");
    const header = lines.findIndex((l) => l.startsWith("| # | Claim |"));
    const rows = [];
    for (let i = header + 2; lines[i]!.startsWith("|"); i++) rows.push(lines[i]!);
    expect(rows).toHaveLength(r.claims.length);
    for (const row of rows) expect(cells(row)).toHaveLength(12);
    expect(cells(rows[0]!)[1]).toBe("commute\\_min ⫫ sbp \\| active, age, fatigue, sleep\\_h");
    expect(cells(rows[0]!)[9]).toBe("**contradicted**");
    expect(cells(rows[0]!)[10]).toBe("contradicted");
  });

  it("renderMarkdownReport references the drawing only when svgFile is given", () => {
    const r = sampleResult();
    expect(renderMarkdownReport(r, sampleContext(), { svgFile: "out dir/graph (1).svg" })).toContain("](out%20dir/graph%20%281%29.svg)");
    expect(renderMarkdownReport(r, sampleContext())).not.toContain("![");
  });

  it("renderMarkdownReport keeps table structure with hostile names and emits no raw HTML", () => {
    const r = hostileResult();
    r.variables[0]!.name = "a|b*c";
    const md = renderMarkdownReport(r, sampleContext());
    // no "<" that could open a tag is left unescaped (CommonMark §6.6 raw HTML needs "<" then a letter, "/", "!" or "?")
    expect(md).not.toMatch(/(?<!\\)<[A-Za-z/!?]/);
    expect(md).toContain("\\<script>alert(1)\\</script>");
    const lines = md.split("\n");
    const header = lines.findIndex((l) => l.startsWith("| Variable |"));
    for (let i = header + 2; lines[i]!.startsWith("|"); i++) expect(cells(lines[i]!)).toHaveLength(5);
    expect(md).toContain("| a\\|b\\*c |");
  });

  it("renderMarkdownReport writes the methods without HTML entities", () => {
    const md = renderMarkdownReport(sampleResult(), sampleContext());
    const methods = md.slice(md.indexOf("## Methods"), md.indexOf("## Cautions"));
    expect(methods).toContain("p < 0.001");
    expect(methods).toContain("Shah & Peters 2020");
    expect(md).not.toMatch(/&(lt|gt|amp|quot|#\d+);/);
  });

  it("renderMarkdownReport shows the adjusted interval and the coding of categorical variables", () => {
    const md = renderMarkdownReport(sampleResult(), sampleContext());
    expect(md).toContain("| Effect [95% CI] | Detectable | Adjusted interval |");
    expect(md).toContain("| Levels and coding |");
    expect(md).toContain("| no = 0, yes = 1 |");
    expect(md).toContain("The 95% interval is unadjusted and can exclude 0 for a claim judged consistent.");
  });

  it("renderMarkdownReport carries the methods, references, cautions and reproducibility", () => {
    const ctx = sampleContext({ command: "arrowaudit check `g.txt` d.csv" });
    const md = renderMarkdownReport(sampleResult(), ctx);
    for (const h of ["## Summary", "## Ranked claims", "## Untestable claims", "## Data summary", "## Methods", "### References", "## Cautions", "## Reproducibility"]) expect(md).toContain(h);
    expect(md).toContain("``arrowaudit check `g.txt` d.csv``");
    for (const i of ctx.inputs) expect(md).toContain(i.sha256);
    expect(count(md, /^\d+\. /m)).toBeGreaterThan(3);
    expect(md).not.toMatch(/https?:/);
  });
});
