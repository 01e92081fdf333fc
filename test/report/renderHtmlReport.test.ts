import { describe, expect, it } from "vitest";
import { renderHtmlReport } from "../../src/report/renderHtmlReport.js";
import { renderReportSvgs } from "../../src/report/renderReportSvgs.js";
import { formatP } from "../../src/report/format.js";
import { HOSTILE_LEVEL, hostileResult, sampleResult } from "../fixtures/report/sampleResult.js";
import { count, hasInjectedMarkup, sampleContext } from "./helpers.js";

async function report(result = sampleResult(), ctx = sampleContext()) {
  return renderHtmlReport(result, ctx, await renderReportSvgs(result));
}

describe("renderHtmlReport", () => {
  it("renderHtmlReport has one ranked-table row per tested claim and one list item per untestable claim", async () => {
    const r = sampleResult();
    const html = await report(r);
    expect(count(html, /<tr class="claim-row /)).toBe(r.claims.length);
    expect(count(html, /<tr class="claim-row contradicted"/)).toBe(r.global.contradicted);
    const untestable = html.match(/<ul class="plain untestable">([^]*?)<\/ul>/)![1]!;
    expect(count(untestable, /<li>/)).toBe(r.untestable.length);
  });

  it("renderHtmlReport is self-contained: no script, no external reference, a print stylesheet", async () => {
    const html = await report();
    expect(html).not.toMatch(/https?:/);
    expect(html).not.toMatch(/<script/i);
    expect(html).not.toMatch(/<link/i);
    expect(html).not.toMatch(/<img/i);
    expect(html).not.toMatch(/@import|url\((?!#)/);
    expect(html).toContain("@media print");
    // only in-page links
    for (const m of html.matchAll(/href="([^"]*)"/g)) expect(m[1]!.startsWith("#")).toBe(true);
    expect(count(html, /<svg /)).toBe(2);
  });

  it("renderHtmlReport has every section in order", async () => {
    const html = await report();
    const ids = [...html.matchAll(/<section id="([a-z]+)">/g)].map((m) => m[1]);
    expect(ids).toEqual(["summary", "graph", "forest", "claims", "untestable", "warnings", "data", "methods", "cautions", "reproducibility"]);
  });

  it("renderHtmlReport summarises the counts and the global test with formatted p-values", async () => {
    const r = sampleResult();
    const html = await report(r);
    expect(html).toContain(`Fisher&#39;s C = ${r.global.statistic.toFixed(2)}, df = ${r.global.df}, p &lt; 0.001`);
    expect(html).toMatch(/Contradicted<\/div><div class="v">3</);
    expect(html).toMatch(/Untestable<\/div><div class="v">3</);
    // p-values never print as zero
    expect(html).not.toMatch(/>0\.000</);
    expect(html).toContain(`>${formatP(r.claims[3]!.p)}<`);
  });

  it("renderHtmlReport writes reproducibility facts: version, date, command, every input's SHA-256, seed", async () => {
    const ctx = sampleContext();
    const html = await report(sampleResult(), ctx);
    for (const i of ctx.inputs) expect(html).toContain(`<code>${i.sha256}</code>`);
    expect(html).toContain(`<code>${ctx.command}</code>`);
    expect(html).toContain(ctx.date);
    expect(html).toContain("arrowaudit 0.1.0");
    expect(html).toContain(">20240611<");
  });

  it("renderHtmlReport states plainly when the data are invented demo data, and only then", async () => {
    expect(await report(sampleResult(), sampleContext({ demo: true }))).toContain("the data in this report are invented");
    expect(await report(sampleResult(), sampleContext({ demo: false }))).not.toContain("invented (simulated)");
  });

  it("renderHtmlReport escapes a column named <script> and a level carrying an img injection", async () => {
    const html = await report(hostileResult());
    expect(hasInjectedMarkup(html)).toBe(false);
    expect(html).toContain("&lt;script&gt;alert(1)&lt;/script&gt;");
    expect(html).toContain("&quot;&gt;&lt;img src=x onerror=alert(1)&gt;");
    expect(html).not.toContain(HOSTILE_LEVEL);
  });

  it("renderHtmlReport without a graph drawing says so, and renders the forest plot itself", () => {
    const html = renderHtmlReport(sampleResult(), sampleContext());
    expect(html).toContain("graph drawing was not supplied");
    expect(count(html, /<svg class="forest-plot"/)).toBe(1);
  });

  it("renderHtmlReport handles a result with no claims", () => {
    const r = sampleResult();
    r.claims = [];
    r.global = { ...r.global, k: 0, contradicted: 0, statistic: 0, df: 0, p: 1, expected_by_chance: 0 };
    const html = renderHtmlReport(r, sampleContext());
    expect(html).toContain("No claim could be tested");
    expect(count(html, /<tr class="claim-row/)).toBe(0);
  });
});

describe("renderHtmlReport: intervals, odds ratios and coding", () => {
  it("renderHtmlReport tabulates each claim's adjusted interval beside its 95% interval, with the note saying which is which", async () => {
    const r = sampleResult();
    const html = await report(r);
    expect(html).toContain('<th class="num">Effect [95% CI]</th><th class="num">Detectable</th><th class="num">Adjusted interval</th>');
    expect(count(html, /<td class="num adjusted">\[/)).toBe(r.claims.length);
    expect(html).toContain("The 95% interval is unadjusted and can exclude 0 for a claim judged consistent.");
    expect(html).toContain('class="ci-adjusted"');
  });

  it("renderHtmlReport shows the Mantel–Haenszel odds ratio of a 2×2×K claim in its effect cell", async () => {
    const r = sampleResult();
    r.claims[0] = { ...r.claims[0]!, test: "stratified-chisq", details: { mantel_haenszel: { odds_ratio: 2.5, ci: [1.5, 4.2] } } };
    const html = await report(r);
    expect(count(html, /<span class="odds-ratio">/)).toBe(1);
    expect(html).toContain('<span class="odds-ratio">OR_MH = 2.50 [1.50, 4.20]</span>');
  });

  it("renderHtmlReport names the coding of binary and ordinal variables in the data summary", async () => {
    const html = await report();
    expect(html).toContain("<th>Levels and coding</th>");
    expect(html).toContain("<td>no = 0, yes = 1</td>");
    expect(html).toContain("<td>low &lt; moderate &lt; high</td>");
  });
});
